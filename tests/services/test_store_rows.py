"""The store takes and returns rows: no callbacks, no API JSON, unique indexes reported as DuplicateError."""

from __future__ import annotations

import inspect
from datetime import datetime

import pytest
from sqlalchemy import RowMapping

from slipwise.services import readings
from slipwise.store import motors as store_motors
from slipwise.store import readings as store_readings
from slipwise.store.errors import DuplicateError

from .conftest import submission


def test_read_functions_return_rows_with_stored_json_text(db, users, motor):
    record, _ = readings.submit_reading(db, users["tess"], submission(motor["id"]))
    rid = record.row["id"]
    with db.read() as conn:
        one = store_readings.reading_row(conn, rid)
        day = store_readings.reading_rows(conn, date="2025-03-14")
        plate = store_readings.nameplate_row(conn, rid)
        current = store_motors.motor_row(conn, motor["id"])
        assert store_readings.reading_row(conn, 999_999) is None
        assert store_motors.motor_row(conn, 999_999) is None
    for row in (one, *day, plate, current):
        assert isinstance(row, RowMapping)
    assert isinstance(one["inputs"], str) and isinstance(one["result"], str)   # stored text, not parsed
    assert isinstance(one["received_at"], datetime)                              # not rendered


def test_no_store_function_takes_a_callback_or_renders_json():
    for module in (store_readings, store_motors):
        for name, fn in inspect.getmembers(module, inspect.isfunction):
            if fn.__module__ != module.__name__:
                continue
            assert "json" not in name, name
            for p in inspect.signature(fn).parameters.values():
                assert p.name not in ("interpret", "callback"), (name, p.name)


def test_duplicate_client_id_is_reported_and_rolled_back(db, users, motor):
    record, _ = readings.submit_reading(db, users["tess"], submission(motor["id"]))
    values = {k: record.row[k] for k in ("client_id", "motor_id", "motor_revision_id", "taken_at",
                                          "received_at", "engine_version", "inputs", "result")}
    values.update(technician_id=users["tess"]["id"], content_hash="x", taken_date="2025-03-14",
                  taken_at_utc=record.row["received_at"], supersedes_id=None)
    with pytest.raises(DuplicateError):
        with db.write() as conn:
            store_readings.insert_reading(conn, values, ["some_flag"])
    with db.read() as conn:
        assert conn.exec_driver_sql("SELECT COUNT(*) FROM readings").scalar_one() == 1


def test_audit_trail_is_rows_newest_first(db, users, motor):
    from slipwise.services import audit
    readings.submit_reading(db, users["tess"], submission(motor["id"]))
    rows = audit.audit_trail(db)
    assert [r["action"] for r in rows[:2]] == ["reading.submit", "motor.create"]
    assert isinstance(rows[0]["detail"], str) and isinstance(rows[0]["at"], datetime)
    assert audit.audit_trail(db, date="1999-01-01") == []
    assert len(audit.audit_trail(db, limit=1)) == 1
