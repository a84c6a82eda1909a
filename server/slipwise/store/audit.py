"""The audit trail: who did what, when. Rows are only ever inserted."""

from __future__ import annotations

import json
from typing import Any, Mapping

from sqlalchemy import Connection, RowMapping, select

from .schema import audit_log, users
from .types import utcnow

_INSERT = audit_log.insert()   # built once; the values go in as parameters


def record(conn: Connection, actor: Mapping[str, Any] | None, action: str, object_type: str,
           object_id: int | None, detail: Mapping[str, Any] | None = None) -> None:
    """Append one audit row in the caller's transaction (so it commits with the change)."""
    conn.execute(_INSERT, dict(
        at=utcnow(), actor_id=actor["id"] if actor else None,
        actor=actor["username"] if actor else "system", action=action, object_type=object_type,
        object_id=object_id, detail=json.dumps(dict(detail or {}), sort_keys=True, default=str)))


def entry_rows(conn: Connection, *, date: str | None = None, limit: int = 1000) -> list[RowMapping]:
    """The newest ``limit`` entries, newest first; of those, the ones made on ``date`` (UTC) when given.

    ``detail`` is the stored JSON text.
    """
    rows = conn.execute(select(audit_log).order_by(audit_log.c.id.desc()).limit(limit)).mappings().all()
    return [r for r in rows if r["at"].date().isoformat() == date] if date else rows


__all__ = ["record", "entry_rows", "users"]
