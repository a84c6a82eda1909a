"""The audit trail: who did what, when. Rows are only ever inserted."""

from __future__ import annotations

import json
from typing import Any, Mapping

from sqlalchemy import Connection, select

from .schema import audit_log, users
from .types import utcnow


def record(conn: Connection, actor: Mapping[str, Any] | None, action: str, object_type: str,
           object_id: int | None, detail: Mapping[str, Any] | None = None) -> None:
    """Append one audit row in the caller's transaction (so it commits with the change)."""
    conn.execute(audit_log.insert().values(
        at=utcnow(), actor_id=actor["id"] if actor else None,
        actor=actor["username"] if actor else "system", action=action, object_type=object_type,
        object_id=object_id, detail=json.dumps(dict(detail or {}), sort_keys=True, default=str)))


def list_entries(conn: Connection, *, date: str | None = None, limit: int = 1000) -> list[dict]:
    q = select(audit_log).order_by(audit_log.c.id.desc()).limit(limit)
    rows = []
    for r in conn.execute(q).mappings():
        at = r["at"]
        if date and at.date().isoformat() != date:
            continue
        rows.append({"id": r["id"], "at": at.isoformat(), "actor": r["actor"], "action": r["action"],
                     "object_type": r["object_type"], "object_id": r["object_id"],
                     "detail": json.loads(r["detail"])})
    return rows


__all__ = ["record", "list_entries", "users"]
