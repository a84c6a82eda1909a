"""The current schema (head of the migration steps), used by every query.

The Alembic revisions in ``alembic/versions/`` build this schema on a database;
``tests/service/test_migrations.py`` checks that the two agree, so a column
added here without a migration step fails the suite.

Append-only tables: ``readings``, ``reviews``, ``audit_log``, ``site_settings`` and
``motor_revisions`` receive INSERTs only; a correction is a new row.
"""

from __future__ import annotations

from sqlalchemy import (Boolean, CheckConstraint, Column, Float, ForeignKey, Index, Integer, MetaData,
                        String, Table, Text, UniqueConstraint)

from slipwise.contract import NAMEPLATE_FIELDS, NUMBER_FIELDS, TAG_MAX_CHARS

from .types import UTCDateTime

ROLES = ("technician", "supervisor")
DECISIONS = ("accepted", "retake", "rejected")

# nameplate fields stored on each motor revision (the tag lives on the motor itself)
REVISION_NAMEPLATE_FIELDS: tuple[str, ...] = tuple(f for f in NAMEPLATE_FIELDS if f != "tag")

metadata = MetaData()

schema_version = Table(
    "schema_version", metadata,
    Column("version", Integer, nullable=False),  # the integer of the Alembic revision, for every release to read
)

# Alembic's own table (it creates and writes it; declared so this module lists every table there is)
alembic_version = Table(
    "alembic_version", metadata,
    Column("version_num", String(32), primary_key=True),
)

users = Table(
    "users", metadata,
    Column("id", Integer, primary_key=True),
    Column("username", String(64), nullable=False, unique=True),
    Column("full_name", String(200), nullable=False, default=""),
    Column("role", String(20), nullable=False),
    Column("password_hash", String(255)),
    Column("active", Boolean, nullable=False, default=True),
    Column("created_at", UTCDateTime, nullable=False),
    CheckConstraint("role IN ('technician', 'supervisor')", name="ck_users_role"),
)

api_tokens = Table(
    "api_tokens", metadata,
    Column("id", Integer, primary_key=True),
    Column("user_id", Integer, ForeignKey("users.id"), nullable=False),
    Column("token_hash", String(64), nullable=False, unique=True),
    Column("label", String(120), nullable=False, default=""),
    Column("created_at", UTCDateTime, nullable=False),
)

sessions = Table(
    "sessions", metadata,
    Column("id", Integer, primary_key=True),
    Column("token_hash", String(64), nullable=False, unique=True),
    Column("user_id", Integer, ForeignKey("users.id"), nullable=False),
    Column("created_at", UTCDateTime, nullable=False),
    Column("expires_at", UTCDateTime, nullable=False),
)

login_throttle = Table(
    "login_throttle", metadata,
    Column("key", String(200), primary_key=True),
    Column("failures", Integer, nullable=False),
    Column("last_failure_at", UTCDateTime, nullable=False),
    Column("locked_until", UTCDateTime),
)

sites = Table(
    "sites", metadata,
    Column("id", Integer, primary_key=True),
    Column("name", String(120), nullable=False, unique=True),
    Column("created_at", UTCDateTime, nullable=False),
)

# issue 11: a site's defaults for a reading's energy inputs and its visit interval. Append-only: a change
# is a new row; the latest row of a site is in force (revision 0004).
site_settings = Table(
    "site_settings", metadata,
    Column("id", Integer, primary_key=True),
    Column("site_id", Integer, ForeignKey("sites.id"), nullable=False),
    Column("operating_hours_per_year", Float),
    Column("energy_price_per_kwh", Float),
    Column("visit_interval_months", Integer, nullable=False),
    Column("set_at", UTCDateTime, nullable=False),
    Column("set_by", Integer, ForeignKey("users.id")),
    Index("ix_site_settings_site_id", "site_id"),
)

motors = Table(
    "motors", metadata,
    Column("id", Integer, primary_key=True),
    Column("site_id", Integer, ForeignKey("sites.id"), nullable=False),
    Column("tag", String(TAG_MAX_CHARS), nullable=False),
    Column("created_at", UTCDateTime, nullable=False),
    Column("created_by", Integer, ForeignKey("users.id")),
    UniqueConstraint("site_id", "tag", name="uq_motors_site_tag"),
)


def _nameplate_columns() -> list[Column]:
    cols = []
    for name in REVISION_NAMEPLATE_FIELDS:
        if name in NUMBER_FIELDS:
            cols.append(Column(name, Integer if NUMBER_FIELDS[name].integer else Float))
        else:
            cols.append(Column(name, String(40)))
    return cols


motor_revisions = Table(
    "motor_revisions", metadata,
    Column("id", Integer, primary_key=True),
    Column("motor_id", Integer, ForeignKey("motors.id"), nullable=False),
    Column("revision", Integer, nullable=False),
    *_nameplate_columns(),
    Column("location", String(200), nullable=False, default=""),
    Column("description", Text, nullable=False, default=""),
    Column("created_at", UTCDateTime, nullable=False),
    Column("created_by", Integer, ForeignKey("users.id")),
    UniqueConstraint("motor_id", "revision", name="uq_motor_revisions_motor_revision"),
)

readings = Table(
    "readings", metadata,
    Column("id", Integer, primary_key=True),
    Column("client_id", String(36), nullable=False, unique=True),
    Column("motor_id", Integer, ForeignKey("motors.id"), nullable=False),
    Column("motor_revision_id", Integer, ForeignKey("motor_revisions.id"), nullable=False),
    Column("technician_id", Integer, ForeignKey("users.id"), nullable=False),
    Column("inputs", Text, nullable=False),       # JSON: the reading fields as interpreted
    Column("result", Text, nullable=False),       # JSON: the engine's result
    Column("engine_version", String(20), nullable=False),
    Column("content_hash", String(64), nullable=False),
    Column("taken_at", String(40), nullable=False),   # ISO 8601 as the technician's clock gave it
    Column("taken_date", String(10), nullable=False),  # its calendar date, for the day's log
    Column("taken_at_utc", UTCDateTime, nullable=False),
    Column("received_at", UTCDateTime, nullable=False),
    Column("supersedes_id", Integer, ForeignKey("readings.id"), unique=True),
    # the record's chain (slipwise.fingerprint): SHA-256 of this row's content and the previous entry's
    # fingerprint; chain_position numbers readings and reviews together in the order they were stored
    Column("fingerprint", String(64)),
    Column("chain_position", Integer),
    Index("ix_readings_taken_date", "taken_date"),
    Index("ix_readings_motor_id", "motor_id"),
    Index("ux_readings_chain_position", "chain_position", unique=True),
)

reading_flags = Table(
    "reading_flags", metadata,
    Column("reading_id", Integer, ForeignKey("readings.id"), primary_key=True),
    Column("flag", String(40), primary_key=True),
    Index("ix_reading_flags_flag", "flag"),
)

reviews = Table(
    "reviews", metadata,
    Column("id", Integer, primary_key=True),
    Column("reading_id", Integer, ForeignKey("readings.id"), nullable=False),
    Column("decision", String(10), nullable=False),
    Column("comment", Text, nullable=False, default=""),
    Column("reviewer_id", Integer, ForeignKey("users.id"), nullable=False),
    Column("reviewed_at", UTCDateTime, nullable=False),
    Column("fingerprint", String(64)),
    Column("chain_position", Integer),
    CheckConstraint("decision IN ('accepted', 'retake', 'rejected')", name="ck_reviews_decision"),
    Index("ix_reviews_reading_id", "reading_id"),
    Index("ux_reviews_chain_position", "chain_position", unique=True),
)

# The head of the record's chain: one row (id 1), the number of entries and the last fingerprint.
# A writer locks it (SELECT ... FOR UPDATE on PostgreSQL; SQLite's write lock already serialises) before
# it appends a reading or a review, so two servers never chain two entries to the same predecessor.
record_chain = Table(
    "record_chain", metadata,
    Column("id", Integer, primary_key=True),
    Column("length", Integer, nullable=False),
    Column("head", String(64)),
    CheckConstraint("id = 1", name="ck_record_chain_one_row"),
)

audit_log = Table(
    "audit_log", metadata,
    Column("id", Integer, primary_key=True),
    Column("at", UTCDateTime, nullable=False),
    Column("actor_id", Integer, ForeignKey("users.id")),
    Column("actor", String(64), nullable=False),
    Column("action", String(40), nullable=False),
    Column("object_type", String(20), nullable=False),
    Column("object_id", Integer),
    Column("detail", Text, nullable=False, default="{}"),
    Index("ix_audit_log_at", "at"),
)
