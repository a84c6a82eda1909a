"""Connections: the one place where SQLite and PostgreSQL differ."""

from __future__ import annotations

import fcntl
import os
import re
import stat
import threading
from contextlib import contextmanager
from pathlib import Path
from typing import Iterator

from sqlalchemy import Connection, create_engine, event
from sqlalchemy.engine import make_url
from sqlalchemy.exc import OperationalError

from . import migrations
from .errors import SchemaError, SchemaTooNewError, UnavailableError

_SCHEMA_NAME = re.compile(r"^[a-z_][a-z0-9_]{0,62}$")


def normalise_url(url: str) -> str:
    """Accept the URL spellings people paste and return one SQLAlchemy understands.

    ``postgres://`` (Heroku style) and ``postgresql://`` become
    ``postgresql+psycopg://`` (psycopg 3, the driver slipwise installs).
    """
    url = url.strip()
    for prefix in ("postgres://", "postgresql://"):
        if url.startswith(prefix):
            return "postgresql+psycopg://" + url[len(prefix):]
    return url


def sqlite_url(path: str | Path) -> str:
    return "sqlite:///" + str(Path(path).resolve())


class Database:
    """An SQLAlchemy engine with slipwise's connection settings.

    ``read()`` and ``write()`` yield a connection inside a transaction that
    commits on success and rolls back on any exception, so a failed request
    leaves nothing half-written.
    """

    def __init__(self, url: str, schema: str | None = None, pool_size: int = 8):
        self.url = normalise_url(url)
        parsed = make_url(self.url)
        self.dialect = parsed.get_backend_name()
        if self.dialect not in ("sqlite", "postgresql"):
            raise SchemaError(f"DATABASE_URL must be sqlite:///... or postgresql+psycopg://..., not {self.dialect}")
        if schema is not None and not _SCHEMA_NAME.match(schema):
            raise SchemaError("database schema name must be lower-case letters, digits and _")
        self.schema = schema
        self._write_lock_path: str | None = None
        self._sqlite_path: str | None = None
        self._thread_lock = threading.Lock()
        self._lock_fd: int | None = None
        if self.dialect == "sqlite":
            if parsed.database and parsed.database != ":memory:":
                Path(parsed.database).parent.mkdir(parents=True, exist_ok=True)
                self._write_lock_path = parsed.database + ".writelock"
                self._sqlite_path = parsed.database
            self.engine = create_engine(self.url, pool_size=pool_size, max_overflow=8,
                                        connect_args={"timeout": 30, "check_same_thread": False})
            event.listen(self.engine, "connect", _sqlite_on_connect)
            event.listen(self.engine, "begin", _sqlite_on_begin)
        else:
            connect_args = {}
            if schema:
                connect_args["options"] = f"-csearch_path={schema}"
            self.engine = create_engine(self.url, pool_size=pool_size, max_overflow=8, pool_pre_ping=True,
                                        connect_args=connect_args)

    @contextmanager
    def read(self) -> Iterator[Connection]:
        try:
            with self.engine.connect() as conn:
                with conn.begin():
                    yield conn
        except OperationalError as e:  # a folder made read-only: SQLite cannot even read
            if self.dialect == "sqlite" and "readonly database" in str(e.orig).lower():
                self._after_read_only()
            raise

    @contextmanager
    def write(self) -> Iterator[Connection]:
        try:
            with self._sqlite_writer():
                with self.engine.connect() as conn:
                    conn = conn.execution_options(slipwise_write=True)
                    with conn.begin():
                        yield conn
        except OperationalError as e:
            if self.dialect == "sqlite" and "readonly database" in str(e.orig).lower():
                self._after_read_only()
            raise

    def _after_read_only(self) -> None:
        """Make SQLite write again by itself once the file (or its folder) is writable again.

        A connection opened while the file was read-only stays read-only for its life, so every pooled
        one is closed. And SQLite gives the -shm/-wal files it creates the database file's mode: made
        while the file was read-only, they stay read-only after the file is writable again, and refuse
        every write; this process made them, so it gives them the database file's mode again.
        """
        self.engine.dispose()
        path = self._sqlite_path
        if path is None or not _can_write(path):
            return
        mode = stat.S_IMODE(os.stat(path).st_mode)
        for side in (path + "-shm", path + "-wal"):
            try:
                if os.stat(side).st_uid == os.geteuid() and not _can_write(side):
                    os.chmod(side, mode)
            except OSError:
                pass

    @contextmanager
    def _sqlite_writer(self):
        """One SQLite writer at a time across threads and processes, queued by the kernel.

        SQLite's own busy handler polls with sleeps of up to 100 ms, which under
        concurrent submissions from several server processes gives long tails;
        a blocking flock wakes the next writer as soon as the lock is free.
        """
        if self._write_lock_path is None:
            yield
            return
        with self._thread_lock:
            if self._lock_fd is None:
                try:
                    self._lock_fd = os.open(self._write_lock_path, os.O_RDWR | os.O_CREAT, 0o600)
                except OSError as e:
                    raise UnavailableError(f"cannot open the write lock {self._write_lock_path}: "
                                           f"{e.strerror}") from e
            fcntl.flock(self._lock_fd, fcntl.LOCK_EX)
            try:
                yield
            finally:
                fcntl.flock(self._lock_fd, fcntl.LOCK_UN)

    # --- schema ------------------------------------------------------------
    def version(self) -> int:
        with self.read() as conn:
            return migrations.current_version(conn)

    def stored_version(self) -> int:
        """The schema version row alone (one cheap query, for health checks)."""
        with self.read() as conn:
            return int(conn.exec_driver_sql("SELECT version FROM schema_version").scalar_one())

    def upgrade(self, target: int = migrations.HEAD) -> tuple[int, int]:
        # a database already at the target needs no write: a read-only one still serves reads
        current = self.version()
        if target <= current <= migrations.HEAD:
            return current, current
        with self.write() as conn:
            return migrations.upgrade(conn, target)

    def check_current(self) -> None:
        """Raise unless the schema is exactly the one this code was written for."""
        v = self.version()
        if v > migrations.HEAD:
            raise SchemaTooNewError(f"the database is at schema version {v}, newer than this slipwise "
                                    f"(version {migrations.HEAD})")
        if v < migrations.HEAD:
            raise SchemaError(f"the database is at schema version {v}; run slipwise serve to upgrade it")

    def describe(self) -> str:
        return make_url(self.url).render_as_string(hide_password=True)

    def dispose(self) -> None:
        self.engine.dispose()
        if self._lock_fd is not None:
            os.close(self._lock_fd)
            self._lock_fd = None


def _can_write(path: str) -> bool:
    # access(), never open()+close(): closing any descriptor of an SQLite file drops this process's locks
    return os.access(path, os.W_OK, effective_ids=True)


def _sqlite_on_connect(dbapi_conn, _record) -> None:
    # let SQLAlchemy's begin event emit BEGIN itself (pysqlite's implicit BEGIN is deferred and
    # cannot be made IMMEDIATE), see the SQLAlchemy "Serializable isolation / Savepoints" notes
    dbapi_conn.isolation_level = None
    cur = dbapi_conn.cursor()
    cur.execute("PRAGMA journal_mode=WAL")
    cur.execute("PRAGMA foreign_keys=ON")
    cur.execute("PRAGMA busy_timeout=30000")
    cur.execute("PRAGMA synchronous=NORMAL")
    cur.close()


def _sqlite_on_begin(conn) -> None:
    # A write transaction takes the write lock at BEGIN: a deferred one that reads first and writes
    # later gets SQLITE_BUSY without waiting when another process wrote in between (WAL snapshot).
    if conn.get_execution_options().get("slipwise_write"):
        conn.exec_driver_sql("BEGIN IMMEDIATE")
    else:
        conn.exec_driver_sql("BEGIN")
