"""Schema migrations: from an empty database, from the previous schema, and refusing a newer one."""

from __future__ import annotations

import json
from datetime import datetime, timezone

import pytest
from sqlalchemy import inspect

from slipwise.store import Database, SchemaError, SchemaTooNewError
from slipwise.store import migrations
from slipwise.store.schema import metadata

from .conftest import make_app, run_cli


def _db(database) -> Database:
    return Database(database.url, schema=database.schema)


def test_from_empty_matches_head_schema(database):
    db = _db(database)
    assert db.version() == 0
    assert db.upgrade() == (0, migrations.HEAD)
    assert db.upgrade() == (migrations.HEAD, migrations.HEAD)  # idempotent
    with db.read() as conn:
        insp = inspect(conn)
        tables = set(insp.get_table_names())
        assert tables == set(metadata.tables)
        for name, table in metadata.tables.items():
            assert {c["name"] for c in insp.get_columns(name)} == {c.name for c in table.columns}, name
            want_idx = {i.name for i in table.indexes}
            assert want_idx <= {i["name"] for i in insp.get_indexes(name)}, name
        uniques = {tuple(u["column_names"]) for u in insp.get_unique_constraints("readings")}
        uniques |= {tuple(i["column_names"]) for i in insp.get_indexes("readings") if i["unique"]}
        assert ("client_id",) in uniques
    db.dispose()


def test_upgrade_from_previous_schema_keeps_rows(database, tmp_path, static_dir):
    db = _db(database)
    # the schema before reading_flags (release 1): a later revision must not move this target (issue 11)
    assert db.upgrade(target=migrations.BASELINE - 1) == (0, migrations.BASELINE - 1)
    now = datetime(2025, 3, 14, 8, 0, tzinfo=timezone.utc)
    result = {"slip_pct": 1.7, "flags": ["underloaded", "voltage_unbalance"], "findings": []}
    with db.write() as conn:
        # rows as the previous version wrote them (its own columns only)
        conn.exec_driver_sql(
            "INSERT INTO users (id, username, full_name, role, password_hash, active, created_at) "
            "VALUES (1, 'olde', 'Olde Tech', 'technician', NULL, %s, %s)" % (_true(conn), _ts(conn)), _params(conn, now))
        conn.exec_driver_sql("INSERT INTO sites (id, name, created_at) VALUES (1, 'Old Site', %s)" % _ts(conn),
                             _params(conn, now))
        conn.exec_driver_sql("INSERT INTO motors (id, site_id, tag, created_at, created_by) "
                             "VALUES (1, 1, 'OLD-1', %s, 1)" % _ts(conn), _params(conn, now))
        conn.exec_driver_sql(
            "INSERT INTO motor_revisions (id, motor_id, revision, rated_power_kw, rated_voltage_v, rated_current_a, "
            "rated_frequency_hz, rated_speed_rpm, location, description, created_at) "
            "VALUES (1, 1, 1, 15, 400, 28.5, 50, 1460, '', '', %s)" % _ts(conn), _params(conn, now))
        for rid, res in ((1, result), (2, {"flags": [], "findings": []})):
            conn.exec_driver_sql(
                "INSERT INTO readings (id, client_id, motor_id, motor_revision_id, technician_id, inputs, result, "
                "engine_version, content_hash, taken_at, taken_date, taken_at_utc, received_at) VALUES "
                f"({rid}, '00000000-0000-4000-8000-00000000000{rid}', 1, 1, 1, '{{}}', '{json.dumps(res)}', '0.9', "
                f"'x', '2025-03-14T09:00:00+01:00', '2025-03-14', {_ts(conn)}, {_ts(conn)})",
                _params(conn, now, now))
    db.dispose()
    # the app upgrades at start, keeping every row and filling the new flag index from stored results
    app = make_app(database, tmp_path, static_dir)
    db = app.extensions["slipwise"].db
    assert db.version() == migrations.HEAD
    with db.read() as conn:
        assert conn.exec_driver_sql("SELECT COUNT(*) FROM readings").scalar_one() == 2
        flags = conn.exec_driver_sql("SELECT reading_id, flag FROM reading_flags ORDER BY flag").all()
    assert [tuple(r) for r in flags] == [(1, "underloaded"), (1, "voltage_unbalance")]
    db.dispose()


def _true(conn) -> str:
    return "TRUE" if conn.dialect.name == "postgresql" else "1"


def _ts(conn) -> str:
    return "%s" if conn.dialect.name == "postgresql" else "?"


def _params(conn, *values):
    # the driver's own parameter style: psycopg takes %s, sqlite3 takes ?
    if conn.dialect.name == "sqlite":
        return tuple(v.replace(tzinfo=None).isoformat(sep=" ") for v in values)
    return tuple(values)


def test_newer_database_is_refused(database, tmp_path, static_dir):
    db = _db(database)
    db.upgrade()
    with db.write() as conn:
        conn.exec_driver_sql(f"UPDATE schema_version SET version = {migrations.HEAD + 1}")
    with pytest.raises(SchemaTooNewError):
        db.upgrade()
    db.dispose()
    with pytest.raises(SchemaTooNewError):
        make_app(database, tmp_path, static_dir)
    # and the server command says so and exits 2 without starting
    r = run_cli(["serve", "--port", "1"], {**database.env(), "SLIPWISE_DATA_DIR": str(tmp_path / "data")})
    assert r.returncode == 2
    assert "newer than this slipwise" in r.stderr


def test_unversioned_tables_are_refused(database):
    db = _db(database)
    with db.write() as conn:
        conn.exec_driver_sql("CREATE TABLE readings (id INTEGER PRIMARY KEY)")
    with pytest.raises(SchemaError):
        db.upgrade()
    db.dispose()
