"""A release-2 database built from the frozen fixtures, and a row-by-row picture of a database."""

from __future__ import annotations

import json
from datetime import datetime, timezone

from sqlalchemy import DateTime, MetaData

from slipwise.store import Database

from .conftest import FIXTURES

ROWS = json.loads((FIXTURES / "schema_2_rows.json").read_text(encoding="utf-8"))
PASSWORDS: dict[str, str] = ROWS["passwords"]
# parents before children (foreign keys)
INSERT_ORDER = ("users", "sites", "login_throttle", "api_tokens", "sessions", "motors", "motor_revisions",
                "readings", "reading_flags", "reviews", "audit_log")


def build(database, version_rows: bool = True) -> None:
    """Create release 2's schema from the frozen DDL and fill it with the fixture's rows."""
    db = Database(database.url, schema=database.schema)
    ddl = (FIXTURES / f"schema_2_{db.dialect}.sql").read_text(encoding="utf-8")
    with db.write() as conn:
        for statement in ddl.split(";\n"):
            if statement.strip():
                conn.exec_driver_sql(statement)
        meta = MetaData()
        meta.reflect(conn)
        for name in INSERT_ORDER:
            table = meta.tables[name]
            rows = [_typed(table, row, db.dialect) for row in ROWS["tables"][name]]
            if rows:
                conn.execute(table.insert(), rows)
            if db.dialect == "postgresql" and "id" in table.c:
                # rows were given their ids, as release 2's sequences had: move the sequence past them
                conn.exec_driver_sql(f"SELECT setval(pg_get_serial_sequence('{name}', 'id'), "
                                     f"(SELECT MAX(id) FROM {name}))")
    db.dispose()


def _typed(table, row: dict, dialect: str) -> dict:
    out = {}
    for key, value in row.items():
        if value is not None and isinstance(table.c[key].type, DateTime):
            value = datetime.fromisoformat(value).astimezone(timezone.utc)
            if dialect == "sqlite":
                value = value.replace(tzinfo=None)
        out[key] = value
    return out


def snapshot(database) -> dict[str, list[tuple]]:
    """Every row of every table, as the driver returns it, in a stable order."""
    db = Database(database.url, schema=database.schema)
    out = {}
    with db.read() as conn:
        meta = MetaData()
        meta.reflect(conn)
        for name in sorted(meta.tables):
            rows = conn.exec_driver_sql(f"SELECT * FROM {name}").all()
            out[name] = sorted((tuple(r) for r in rows), key=repr)
    db.dispose()
    return out
