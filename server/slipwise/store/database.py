"""Connections: the one place where SQLite and PostgreSQL differ."""

from __future__ import annotations

import fcntl
import os
import re
import sqlite3
import stat
import threading
from contextlib import contextmanager
from pathlib import Path
from typing import Iterator

from sqlalchemy import Connection, create_engine, event
from sqlalchemy.engine import make_url
from sqlalchemy.exc import OperationalError

from . import migrations
from .errors import SchemaError, UnavailableError
from .types import utcnow

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
    def status(self) -> migrations.Status:
        with self.read() as conn:
            return migrations.status(conn)

    def version(self) -> int:
        return self.status().current

    def stored_version(self) -> int:
        """The schema version row alone (one cheap query, for health checks)."""
        with self.read() as conn:
            return int(conn.exec_driver_sql("SELECT version FROM schema_version").scalar_one())

    def upgrade(self, target: int = migrations.HEAD) -> tuple[int, int]:
        done = self.migrate(target)
        return done.before, done.after

    def migrate(self, target: int = migrations.HEAD, backup: bool = True) -> migrations.Upgrade:
        """Bring the schema to ``target``; see ``migrations.upgrade``.

        A database already there needs no write (a read-only one still serves reads). Before an SQLite
        file with records in it is changed, a copy of it is saved beside it (``backup=False`` skips that).
        """
        st = self.status()
        migrations.check_not_newer(st)
        if migrations.is_current(st, target):
            return migrations.Upgrade(st.current, st.current)
        saved: list[str] = []

        def copy_first(version: int) -> None:
            # under the migration lock: one process copies, the others find the schema current
            if backup and self._sqlite_path:
                stamp = utcnow().strftime("%Y%m%dT%H%M%SZ")
                saved.append(str(self.backup(f"{self._sqlite_path}.schema-{version}-{stamp}.bak")))

        with self.migration() as conn:
            done = migrations.upgrade(conn, target, schema=self.schema, before_change=copy_first)
        done.backup = saved[0] if saved else None
        return done

    @contextmanager
    def migration(self) -> Iterator[Connection]:
        """A write transaction for migrations; on SQLite with foreign-key enforcement off.

        SQLite alters most things by copying a table, dropping the old one and renaming the copy; with
        enforcement on, the drop deletes the rows other tables refer to and the commit fails (deferring
        the checks does not help: the rename does not undo the counted violations). SQLite's own recipe
        (ALTER TABLE, "making other kinds of table schema changes") turns enforcement off outside the
        transaction and runs ``PRAGMA foreign_key_check`` before the commit, which env.py does.
        """
        if self.dialect != "sqlite":
            with self.write() as conn:
                yield conn
            return
        with self._sqlite_writer():
            with self.engine.connect() as conn:
                raw = conn.connection.dbapi_connection  # no transaction is open yet: the pragma applies
                raw.execute("PRAGMA foreign_keys=OFF")
                try:
                    with conn.execution_options(slipwise_write=True).begin():
                        yield conn
                finally:
                    raw.execute("PRAGMA foreign_keys=ON")

    def check_current(self) -> None:
        """Raise unless the schema is exactly the one this code was written for."""
        st = self.status()
        migrations.check_not_newer(st)
        if not migrations.is_current(st, migrations.HEAD):
            raise SchemaError(f"the database is at schema version {st.current} and must be upgraded to "
                              f"{migrations.HEAD}: run `slipwise db upgrade`")

    # --- backup (SQLite) ---------------------------------------------------
    def backup(self, destination: str | Path) -> Path:
        """Copy the SQLite database to ``destination`` with SQLite's online backup API.

        The copy is one consistent snapshot (it holds a read transaction for the whole copy), taken
        while servers go on writing; it is written beside the destination and renamed into place, and
        set to a rollback journal so it is one self-contained file. An existing file is never
        overwritten. PostgreSQL has its own tools (pg_dump, pg_basebackup): ValueError here.
        """
        if self.dialect != "sqlite":
            raise ValueError("slipwise db backup copies an SQLite database; for PostgreSQL use pg_dump "
                             "(e.g. pg_dump -Fc -f slipwise.dump) or pg_basebackup")
        if self._sqlite_path is None or not Path(self._sqlite_path).is_file():
            raise ValueError(f"no SQLite database file at {self._sqlite_path or ':memory:'}")
        dest = Path(destination).resolve()
        if dest.exists():
            raise FileExistsError(f"{dest} exists; give a new file name (a backup never overwrites a file)")
        if dest == Path(self._sqlite_path).resolve():
            raise ValueError("the backup file must not be the database itself")
        dest.parent.mkdir(parents=True, exist_ok=True)
        partial = dest.with_name(dest.name + ".partial")
        partial.unlink(missing_ok=True)
        source = sqlite3.connect(self._sqlite_path, timeout=30)
        try:
            copy = sqlite3.connect(partial)
            try:
                source.backup(copy)  # pages=-1: the whole database in one step, one snapshot
                copy.execute("PRAGMA journal_mode=DELETE")
            finally:
                copy.close()
        finally:
            source.close()
        os.replace(partial, dest)
        return dest

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
