"""Release 2's numbered schema steps, frozen: they build schema version 1 and 2.

Until release 2 the schema was built by these steps and a ``schema_version`` table. They stay here,
unchanged, for two uses: the Alembic baseline revision ``0002`` builds a new database with them, and a
database still at version 1 is brought to 2 by them before Alembic takes over. Each step defines the
tables it touches itself, as they were when it was written. Never edit them; a change to the schema is
a new Alembic revision (DEVELOPERS.md, "Adding a migration").
"""

from __future__ import annotations

import json
from typing import Callable

from sqlalchemy import (Boolean, CheckConstraint, Column, Connection, Float, ForeignKey, Index, Integer,
                        MetaData, String, Table, Text, UniqueConstraint, select)

from .types import UTCDateTime

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
LAST = len(STEPS)  # the version the last step reaches: the Alembic baseline
