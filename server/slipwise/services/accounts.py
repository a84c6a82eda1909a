"""Users and API tokens, one transaction per call (the CLI and the demo loader; the web's login is in web/auth)."""

from __future__ import annotations

from typing import Any, Mapping

from slipwise.store import accounts as store
from slipwise.store.database import Database


def add_user(db: Database, username: str, role: str, password: str | None, full_name: str = "",
             actor: Mapping[str, Any] | None = None) -> dict:
    """Create an account; ValidationError for a bad name, role or password, ConflictError for a taken name."""
    with db.write() as conn:
        return store.add_user(conn, username, role, password, full_name, actor=actor)


def list_users(db: Database) -> list[dict]:
    with db.read() as conn:
        return store.list_users(conn)


def create_token(db: Database, username: str, label: str = "", actor: Mapping[str, Any] | None = None) -> str:
    """A new bearer token for ``username``, returned once; only its hash is stored."""
    with db.write() as conn:
        return store.create_token(conn, username, label, actor=actor)
