"""Numbered schema migration steps with a ``schema_version`` table.

Each step is a function that takes a connection inside the migration's
transaction and moves the schema from version ``n - 1`` to ``n``. Steps define
the tables they touch themselves (frozen as they were when the step was
written) instead of importing ``schema.py``: a later edit of the head schema
must not change what an old step does.

Rules for adding a step: append a function to ``STEPS``; never edit or
reorder a released step; keep every row (copy, backfill, never drop data).

``upgrade`` runs all pending steps in one transaction under a lock (an
advisory lock on PostgreSQL, ``BEGIN IMMEDIATE`` on SQLite), so two server
processes starting together migrate once. A database whose version is higher
than ``HEAD`` was written by a newer slipwise and is refused.
"""

from __future__ import annotations

import json
from typing import Callable

from sqlalchemy import (Boolean, CheckConstraint, Column, Connection, Float, ForeignKey, Index, Integer,
                        MetaData, String, Table, Text, UniqueConstraint, inspect, select)

from .errors import SchemaError, SchemaTooNewError
from .types import UTCDateTime

_ADVISORY_LOCK_KEY = 0x51195E  # any constant shared by all slipwise processes

KNOWN_TABLES = ("users", "api_tokens", "sessions", "login_throttle", "sites", "motors",
                "motor_revisions", "readings", "reviews", "audit_log", "reading_flags")


def _step_1_initial(conn: Connection) -> None:
    """Accounts, sites, motors with revisions, readings, reviews, audit trail."""
    m = MetaData()
    Table("users", m,
          Column("id", Integer, primary_key=True),
          Column("username", String(64), nullable=False, unique=True),
          Column("full_name", String(200), nullable=False),
          Column("role", String(20), nullable=False),
          Column("password_hash", String(255)),
          Column("active", Boolean, nullable=False),
          Column("created_at", UTCDateTime, nullable=False),
          CheckConstraint("role IN ('technician', 'supervisor')", name="ck_users_role"))
    Table("api_tokens", m,
          Column("id", Integer, primary_key=True),
          Column("user_id", Integer, ForeignKey("users.id"), nullable=False),
          Column("token_hash", String(64), nullable=False, unique=True),
          Column("label", String(120), nullable=False),
          Column("created_at", UTCDateTime, nullable=False))
    Table("sessions", m,
          Column("id", Integer, primary_key=True),
          Column("token_hash", String(64), nullable=False, unique=True),
          Column("user_id", Integer, ForeignKey("users.id"), nullable=False),
          Column("created_at", UTCDateTime, nullable=False),
          Column("expires_at", UTCDateTime, nullable=False))
    Table("login_throttle", m,
          Column("key", String(200), primary_key=True),
          Column("failures", Integer, nullable=False),
          Column("last_failure_at", UTCDateTime, nullable=False),
          Column("locked_until", UTCDateTime))
    Table("sites", m,
          Column("id", Integer, primary_key=True),
          Column("name", String(120), nullable=False, unique=True),
          Column("created_at", UTCDateTime, nullable=False))
    Table("motors", m,
          Column("id", Integer, primary_key=True),
          Column("site_id", Integer, ForeignKey("sites.id"), nullable=False),
          Column("tag", String(80), nullable=False),
          Column("created_at", UTCDateTime, nullable=False),
          Column("created_by", Integer, ForeignKey("users.id")),
          UniqueConstraint("site_id", "tag", name="uq_motors_site_tag"))
    floats = ("rated_power_kw", "rated_power_hp", "rated_voltage_v", "rated_current_a", "rated_frequency_hz",
              "rated_speed_rpm")
    floats_after_poles = ("rated_power_factor", "rated_efficiency_pct", "service_factor",
                          "breakdown_torque_pct", "locked_rotor_torque_pct")
    Table("motor_revisions", m,
          Column("id", Integer, primary_key=True),
          Column("motor_id", Integer, ForeignKey("motors.id"), nullable=False),
          Column("revision", Integer, nullable=False),
          *[Column(n, Float) for n in floats],
          Column("poles", Integer),
          *[Column(n, Float) for n in floats_after_poles],
          *[Column(n, String(40)) for n in ("design", "supply", "driven_load")],
          Column("location", String(200), nullable=False),
          Column("description", Text, nullable=False),
          Column("created_at", UTCDateTime, nullable=False),
          Column("created_by", Integer, ForeignKey("users.id")),
          UniqueConstraint("motor_id", "revision", name="uq_motor_revisions_motor_revision"))
    Table("readings", m,
          Column("id", Integer, primary_key=True),
          Column("client_id", String(36), nullable=False, unique=True),
          Column("motor_id", Integer, ForeignKey("motors.id"), nullable=False),
          Column("motor_revision_id", Integer, ForeignKey("motor_revisions.id"), nullable=False),
          Column("technician_id", Integer, ForeignKey("users.id"), nullable=False),
          Column("inputs", Text, nullable=False),
          Column("result", Text, nullable=False),
          Column("engine_version", String(20), nullable=False),
          Column("content_hash", String(64), nullable=False),
          Column("taken_at", String(40), nullable=False),
          Column("taken_date", String(10), nullable=False),
          Column("taken_at_utc", UTCDateTime, nullable=False),
          Column("received_at", UTCDateTime, nullable=False),
          Column("supersedes_id", Integer, ForeignKey("readings.id"), unique=True),
          Index("ix_readings_taken_date", "taken_date"),
          Index("ix_readings_motor_id", "motor_id"))
    Table("reviews", m,
          Column("id", Integer, primary_key=True),
          Column("reading_id", Integer, ForeignKey("readings.id"), nullable=False),
          Column("decision", String(10), nullable=False),
          Column("comment", Text, nullable=False),
          Column("reviewer_id", Integer, ForeignKey("users.id"), nullable=False),
          Column("reviewed_at", UTCDateTime, nullable=False),
          CheckConstraint("decision IN ('accepted', 'retake', 'rejected')", name="ck_reviews_decision"),
          Index("ix_reviews_reading_id", "reading_id"))
    Table("audit_log", m,
          Column("id", Integer, primary_key=True),
          Column("at", UTCDateTime, nullable=False),
          Column("actor_id", Integer, ForeignKey("users.id")),
          Column("actor", String(64), nullable=False),
          Column("action", String(40), nullable=False),
          Column("object_type", String(20), nullable=False),
          Column("object_id", Integer),
          Column("detail", Text, nullable=False),
          Index("ix_audit_log_at", "at"))
    m.create_all(conn)


def _step_2_reading_flags(conn: Connection) -> None:
    """Index flags in their own table so the day's log filters by flag in SQL.

    Backfills from the stored results of every existing reading.
    """
    m = MetaData()
    readings = Table("readings", m, Column("id", Integer, primary_key=True), Column("result", Text))
    flags = Table("reading_flags", m,
                  Column("reading_id", Integer, ForeignKey("readings.id"), primary_key=True),
                  Column("flag", String(40), primary_key=True),
                  Index("ix_reading_flags_flag", "flag"))
    flags.create(conn)
    batch = []
    for reading_id, result_text in conn.execute(select(readings.c.id, readings.c.result)):
        for flag in sorted(set(json.loads(result_text).get("flags") or [])):
            batch.append({"reading_id": reading_id, "flag": flag})
        if len(batch) >= 1000:
            conn.execute(flags.insert(), batch)
            batch = []
    if batch:
        conn.execute(flags.insert(), batch)


STEPS: tuple[Callable[[Connection], None], ...] = (_step_1_initial, _step_2_reading_flags)
HEAD = len(STEPS)


def current_version(conn: Connection) -> int:
    """The schema version of the database behind ``conn`` (0 for an empty one)."""
    names = set(inspect(conn).get_table_names())
    if "schema_version" not in names:
        if names & set(KNOWN_TABLES):
            raise SchemaError("the database has slipwise tables but no schema_version table; "
                              "it was not created by slipwise migrations")
        return 0
    row = conn.exec_driver_sql("SELECT version FROM schema_version").first()
    return int(row[0]) if row else 0


def _lock(conn: Connection) -> None:
    if conn.dialect.name == "postgresql":
        conn.exec_driver_sql(f"SELECT pg_advisory_xact_lock({_ADVISORY_LOCK_KEY})")
    # SQLite: the store opens write transactions with BEGIN IMMEDIATE, which locks the file


def upgrade(conn: Connection, target: int = HEAD) -> tuple[int, int]:
    """Run the pending steps up to ``target`` inside the caller's write transaction.

    Returns ``(version_before, version_after)``. Raises SchemaTooNewError for a
    database newer than this code.
    """
    if not 0 <= target <= HEAD:
        raise ValueError(f"target version must be 0 to {HEAD}")
    _lock(conn)
    before = current_version(conn)
    if before > HEAD:
        raise SchemaTooNewError(
            f"the database is at schema version {before}, newer than this slipwise (version {HEAD}); "
            "upgrade slipwise or use another database")
    if before >= target:
        return before, before
    if before == 0:
        m = MetaData()
        Table("schema_version", m, Column("version", Integer, nullable=False)).create(conn, checkfirst=True)
        conn.exec_driver_sql("INSERT INTO schema_version (version) VALUES (0)")
    for number in range(before + 1, target + 1):
        STEPS[number - 1](conn)
        conn.exec_driver_sql(f"UPDATE schema_version SET version = {int(number)}")
    return before, target
