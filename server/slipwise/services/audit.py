"""The audit trail, read back (entries are written by the other services, in their own transactions)."""

from __future__ import annotations

from sqlalchemy import RowMapping

from slipwise.store import audit as store
from slipwise.store.database import Database


def audit_trail(db: Database, *, date: str | None = None, limit: int = 1000) -> list[RowMapping]:
    """Newest first: who did what, when (``detail`` as stored JSON text)."""
    with db.read() as conn:
        return store.entry_rows(conn, date=date, limit=limit)
