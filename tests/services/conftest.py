"""Fixtures for the services tests: a fresh database per test (no Flask), users, a registered motor.

With DATABASE_URL set (postgresql+psycopg://...), every test gets its own
PostgreSQL schema, dropped afterwards; otherwise an SQLite file in the test's
temporary folder.
"""

from __future__ import annotations

import os
import uuid
from datetime import datetime, timezone

import pytest
from sqlalchemy import create_engine

from slipwise.contract import READING_FIELDS
from slipwise.services import accounts, motors
from slipwise.services.records import Submission
from slipwise.store import Database, normalise_url, sqlite_url
from slipwise.store.motors import REVISION_FIELDS

DATABASE_URL = os.environ.get("DATABASE_URL")
ON_POSTGRES = bool(DATABASE_URL) and normalise_url(DATABASE_URL).startswith("postgresql")

# A 15 kW, 400 V, 50 Hz, 4-pole motor: the figures of a typical catalogue IE3 motor (from memory);
# fictional site and tag. Parsed values, as the request parsers hand them to the services.
NAMEPLATE = {**{f: None for f in REVISION_FIELDS},
             "rated_power_kw": 15.0, "rated_voltage_v": 400.0, "rated_current_a": 28.5, "rated_frequency_hz": 50.0,
             "rated_speed_rpm": 1460.0, "driven_load": "variable_torque", "location": "pump room",
             "description": "cooling water"}
READING = {**{f: None for f in READING_FIELDS if f != "taken_at"},
           "frequency_hz": 50.0, "speed_rpm": 1475.0, "current_l1_a": 20.0, "current_l2_a": 20.5,
           "current_l3_a": 19.8, "voltage_l12_v": 402.0, "voltage_l23_v": 399.0, "voltage_l31_v": 405.0}
TAKEN_AT = "2025-03-14T09:30:00+01:00"


def submission(motor_id: int, client_id: str | None = None, supersedes: int | None = None, **changes) -> Submission:
    return Submission(client_id or str(uuid.uuid4()), motor_id, supersedes, {**READING, **changes}, TAKEN_AT,
                      "2025-03-14", datetime(2025, 3, 14, 8, 30, tzinfo=timezone.utc))


@pytest.fixture
def db(tmp_path):
    admin = schema = None
    if ON_POSTGRES:
        url = normalise_url(DATABASE_URL)
        schema = "sw_test_" + uuid.uuid4().hex[:16]
        admin = create_engine(url)
        with admin.begin() as conn:
            conn.exec_driver_sql(f'CREATE SCHEMA "{schema}"')
    else:
        url = sqlite_url(tmp_path / "services.sqlite3")
    database = Database(url, schema=schema)
    database.upgrade()
    yield database
    database.dispose()
    if admin is not None:
        with admin.begin() as conn:
            conn.exec_driver_sql(f'DROP SCHEMA IF EXISTS "{schema}" CASCADE')
        admin.dispose()


@pytest.fixture
def users(db):
    """A technician, a second technician and a supervisor (user dicts as the web's login gives them)."""
    from slipwise.store import accounts as store_accounts
    out = {}
    with db.write() as conn:
        for name, role in (("tess", "technician"), ("theo", "technician"), ("sue", "supervisor")):
            # low scrypt cost for test speed; nobody logs in here
            out[name] = store_accounts.add_user(conn, name, role, None, name.title() + " Testperson",
                                                scrypt_n=2 ** 10)
    assert {u["username"] for u in accounts.list_users(db)} == set(out)
    return out


@pytest.fixture
def motor(db, users):
    return motors.register_motor(db, users["sue"], "Harbour Mill", "PMP-07", NAMEPLATE)


def count_rows(db, table: str) -> int:
    with db.read() as conn:
        return conn.exec_driver_sql(f"SELECT COUNT(*) FROM {table}").scalar_one()
