"""``slipwise db backup``: a consistent SQLite copy taken while readings keep arriving."""

from __future__ import annotations

import sqlite3
import threading
import time
from types import SimpleNamespace

from slipwise.store import accounts, sqlite_url

from .conftest import MOTOR, make_app, reading_body, run_cli


def test_backup_while_readings_arrive(tmp_path, static_dir):
    # SQLite whatever DATABASE_URL says: this is the SQLite backup
    database = SimpleNamespace(url=sqlite_url(tmp_path / "site.sqlite3"), schema=None)
    app = make_app(database, tmp_path, static_dir)
    db = app.extensions["slipwise"].db
    with db.write() as conn:
        accounts.add_user(conn, "tess", "technician", "tess-password-1", scrypt_n=2 ** 10)
        accounts.add_user(conn, "sue", "supervisor", "sue-password-1", scrypt_n=2 ** 10)
    clients = {}
    for name in ("tess", "sue"):
        c = app.test_client()
        r = c.post("/api/v1/session", json={"username": name, "password": f"{name}-password-1"})
        clients[name] = (c, {"X-CSRF-Token": r.get_json()["csrf_token"]})
    c, h = clients["sue"]
    motor = c.post("/api/v1/motors", json=MOTOR, headers=h).get_json()

    committed: list[tuple[float, int]] = []  # (time the POST returned, reading id)
    stop = threading.Event()
    errors: list[str] = []

    def keep_inserting():
        tc, th = clients["tess"]
        while not stop.is_set():
            r = tc.post("/api/v1/readings", json=reading_body(motor["id"]), headers=th)
            if r.status_code != 201:
                errors.append(r.get_data(as_text=True))
                return
            committed.append((time.monotonic(), r.get_json()["id"]))

    writer = threading.Thread(target=keep_inserting)
    writer.start()
    try:
        while len(committed) < 5:
            time.sleep(0.05)
        started = time.monotonic()
        copy = tmp_path / "copies" / "site-backup.sqlite3"
        r = run_cli(["db", "backup", str(copy), "--database-url", database.url], {})
        finished = time.monotonic()
        time.sleep(0.3)  # the writer goes on after the copy
    finally:
        stop.set()
        writer.join()
    assert not errors, errors
    assert r.returncode == 0, r.stderr
    assert "copied to" in r.stdout
    before = {rid for t, rid in committed if t < started}
    during = [rid for t, rid in committed if started <= t <= finished]
    after = [rid for t, rid in committed if t > finished]
    assert before and after, "the writer must run before and after the backup"

    with sqlite3.connect(copy) as con:
        assert con.execute("PRAGMA integrity_check").fetchone() == ("ok",)
        assert con.execute("PRAGMA foreign_key_check").fetchall() == []
        in_copy = {row[0] for row in con.execute("SELECT id FROM readings")}
        # one snapshot: every reading committed before the backup began, and the readings form an
        # unbroken run (no reading missing its predecessor) with their audit entries beside them
        assert before <= in_copy
        assert in_copy == set(range(1, max(in_copy) + 1))
        audited = {row[0] for row in con.execute(
            "SELECT object_id FROM audit_log WHERE action = 'reading.submit'")}
        assert audited == in_copy  # each reading and its audit entry, written in one transaction
        assert con.execute("PRAGMA journal_mode").fetchone() == ("delete",)  # one self-contained file
    assert max(in_copy) < max(rid for _, rid in committed)  # later readings are not in it
    print(f"readings: {len(before)} before the backup, {len(during)} during, {len(after)} after; "
          f"{len(in_copy)} in the copy")

    # a second backup to the same name is refused: a copy is never overwritten
    again = run_cli(["db", "backup", str(copy), "--database-url", database.url], {})
    assert again.returncode == 2 and "exists" in again.stderr
    db.dispose()


def test_backup_of_postgresql_points_to_pg_dump(tmp_path):
    # refused before any connection is made: no PostgreSQL server is needed
    r = run_cli(["db", "backup", str(tmp_path / "x.dump"), "--database-url",
                 "postgresql+psycopg://nobody@127.0.0.1:1/none"], {})
    assert r.returncode == 2
    assert "pg_dump" in r.stderr and "pg_basebackup" in r.stderr
    assert not (tmp_path / "x.dump").exists()
