"""Schema migrations: Alembic revisions in ``store/alembic/versions/``, run from code.

Schema versions are integers and revision ``"NNNN"`` is version NNNN; the baseline ``0002`` is the
schema of release 2. The ``schema_version`` table of release 2 is kept, holding the same integer, so
that every release (release 2 included, which knows nothing of Alembic) refuses a database written by a
newer one.

What ``upgrade`` finds, and does:

- an empty database: Alembic runs every revision (the baseline builds release 2's schema);
- a database of release 1 or 2 (``schema_version``, no ``alembic_version``): release 2's frozen steps
  (``legacy_steps``) bring it to version 2, it is stamped at revision ``0002``, then upgraded;
- a database with a known Alembic revision: upgraded to the target;
- a version above this release's head, or an Alembic revision this release does not know: refused
  (SchemaTooNewError); slipwise tables with no version at all: refused (SchemaError).

Everything runs in the caller's write transaction after a lock (an advisory lock on PostgreSQL,
``BEGIN IMMEDIATE`` on SQLite), so two servers starting together migrate once and a failure leaves the
database as it was. Rules for adding a revision are in DEVELOPERS.md ("Adding a migration").
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path
from typing import Callable

from alembic import command
from alembic.config import Config
from alembic.script import ScriptDirectory
from sqlalchemy import Column, Connection, Integer, MetaData, Table, inspect

from . import legacy_steps
from .errors import SchemaError, SchemaTooNewError

SCRIPT_LOCATION = str(Path(__file__).with_name("alembic"))
BASELINE = legacy_steps.LAST  # release 2's schema, Alembic revision "0002"
_ADVISORY_LOCK_KEY = 0x51195E  # any constant shared by all slipwise processes

KNOWN_TABLES = ("users", "api_tokens", "sessions", "login_throttle", "sites", "motors",
                "motor_revisions", "readings", "reviews", "audit_log", "reading_flags", "record_chain")


def revision_id(version: int) -> str:
    return f"{int(version):04d}"


@lru_cache(maxsize=8)
def known_revisions(location: str = SCRIPT_LOCATION) -> tuple[str, ...]:
    """The revision ids of ``location``, base first; checks that they are consecutive numbers."""
    script = ScriptDirectory(location)
    ids = tuple(reversed([r.revision for r in script.walk_revisions()]))
    if len(script.get_heads()) != 1:
        raise SchemaError(f"the migration scripts have several heads: {script.get_heads()}")
    want = tuple(revision_id(v) for v in range(BASELINE, BASELINE + len(ids)))
    if ids != want:
        raise SchemaError(f"migration revisions must be numbered {want}, found {ids}")
    return ids


def head(location: str = SCRIPT_LOCATION) -> int:
    return int(known_revisions(location)[-1])


HEAD = head()


@dataclass
class Status:
    """Where a database stands: its ``schema_version`` row (0 if none) and its Alembic revision."""

    version: int
    revision: str | None

    @property
    def current(self) -> int:
        return max(self.version, int(self.revision) if (self.revision or "").isdigit() else 0)


@dataclass
class Upgrade:
    """What ``upgrade`` did: from and to which version, whether a release-2 database was stamped."""

    before: int
    after: int
    stamped: bool = False
    backup: str | None = None  # the copy taken before an SQLite file was changed

    def describe(self) -> str:
        if self.before == 0 and self.after > 0:
            text = f"new database: schema version {self.after} created"
        elif self.before == self.after:
            text = f"schema version {self.after}, already current"
            if self.stamped:
                text = (f"schema version {self.after}: a release-{self.after} database, now recorded as "
                        f"Alembic revision {revision_id(self.after)}; no table changed")
        else:
            text = f"schema upgraded from version {self.before} to {self.after}"
            if self.stamped:
                text += f" (recorded as Alembic revision {revision_id(self.after)})"
        if self.backup:
            text += f"; the database as it was is saved in {self.backup}"
        return text


def status(conn: Connection) -> Status:
    names = set(inspect(conn).get_table_names())
    revision = None
    if "alembic_version" in names:
        revision = conn.exec_driver_sql("SELECT version_num FROM alembic_version").scalar()
    if "schema_version" not in names:
        if revision is None and names & set(KNOWN_TABLES):
            raise SchemaError("the database has slipwise tables but no schema_version table; "
                              "it was not created by slipwise migrations")
        return Status(0, revision)
    row = conn.exec_driver_sql("SELECT version FROM schema_version").first()
    return Status(int(row[0]) if row else 0, revision)


def current_version(conn: Connection) -> int:
    """The schema version of the database behind ``conn`` (0 for an empty one)."""
    return status(conn).current


def check_not_newer(st: Status, location: str = SCRIPT_LOCATION) -> None:
    top = head(location)
    if st.revision is not None and st.revision not in known_revisions(location):
        raise SchemaTooNewError(
            f"the database is at schema revision {st.revision}, which this slipwise (version {top}) does not "
            "know: it is newer than this slipwise; upgrade slipwise or use another database")
    if st.current > top:
        raise SchemaTooNewError(
            f"the database is at schema version {st.current}, newer than this slipwise (version {top}); "
            "upgrade slipwise or use another database")


def is_current(st: Status, target: int) -> bool:
    """True when ``upgrade(target)`` has nothing to write."""
    if st.current >= BASELINE and st.revision is None:
        return False  # a release-2 database still to be stamped
    return st.current >= target


def _lock(conn: Connection) -> None:
    if conn.dialect.name == "postgresql":
        conn.exec_driver_sql(f"SELECT pg_advisory_xact_lock({_ADVISORY_LOCK_KEY})")
    # SQLite: the store opens write transactions with BEGIN IMMEDIATE, which locks the file


def alembic_config(conn: Connection, schema: str | None = None, location: str = SCRIPT_LOCATION) -> Config:
    """An Alembic configuration in code (no alembic.ini): the scripts, the connection, the schema."""
    cfg = Config()
    cfg.set_main_option("script_location", location)
    cfg.attributes["connection"] = conn
    cfg.attributes["schema"] = schema
    return cfg


def upgrade(conn: Connection, target: int | None = None, schema: str | None = None,
            location: str = SCRIPT_LOCATION, before_change: Callable[[int], None] | None = None) -> Upgrade:
    """Bring the database behind ``conn`` to ``target`` (default: head) inside the caller's write transaction.

    ``conn`` comes from ``Database.migration()`` (on SQLite it turns foreign-key enforcement off, which
    SQLite needs to rebuild a table others refer to; env.py checks every reference before the commit).

    ``schema`` is the PostgreSQL schema the connection's search_path points at (Alembic's version table
    goes there too). Raises SchemaTooNewError for a database newer than these scripts.
    """
    top = head(location)
    target = top if target is None else target
    if not 0 <= target <= top:
        raise ValueError(f"target version must be 0 to {top}")
    _lock(conn)
    st = status(conn)
    check_not_newer(st, location)
    before = st.current
    if is_current(st, target) or (target < BASELINE and before >= target):
        return Upgrade(before, before)
    if before_change is not None and 0 < before < target:
        before_change(before)
    version = st.version if st.revision is None else None
    if version is not None and (0 < version < BASELINE or target < BASELINE):
        # release 1 (or a test building an old database): release 2's own steps, then Alembic from 0002
        if version == 0:
            Table("schema_version", MetaData(), Column("version", Integer, nullable=False)).create(conn)
            conn.exec_driver_sql("INSERT INTO schema_version (version) VALUES (0)")
        for number in range(version + 1, min(target, BASELINE) + 1):
            legacy_steps.STEPS[number - 1](conn)
            conn.exec_driver_sql(f"UPDATE schema_version SET version = {int(number)}")
        if target < BASELINE:
            return Upgrade(before, target)
        version = BASELINE
    cfg = alembic_config(conn, schema, location)
    stamped = False
    if version is not None and version >= BASELINE:
        command.stamp(cfg, revision_id(version))
        stamped = True
    command.upgrade(cfg, revision_id(target))
    conn.exec_driver_sql(f"UPDATE schema_version SET version = {int(target)}")
    return Upgrade(before, target, stamped)
