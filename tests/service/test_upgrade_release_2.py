"""Upgrading a database made by release 2 (frozen schema and rows): nothing lost, nothing changed.

The fixtures in fixtures/schema_2_* were written by release 2's own code (fixtures/make_schema_2.py):
its DDL, its password hashes, its stored results with their engine version. ``slipwise db upgrade`` runs
as a separate process, as a site would run it.
"""

from __future__ import annotations

import json
import os
import sqlite3
import subprocess
import urllib.request

from slipwise.store import Database, migrations

from . import release_2
from .conftest import ON_POSTGRES, REPO, SLIPWISE, ServerProcess, free_port, make_app, run_cli


def _env(database, tmp_path) -> dict[str, str]:
    return {**database.env(), "SLIPWISE_DATA_DIR": str(tmp_path / "data")}


def test_release_2_database_upgrades_with_every_row_kept(database, tmp_path, static_dir):
    release_2.build(database)
    before = release_2.snapshot(database)
    # the fixture went in whole: as many rows as release 2 wrote, in every table
    for name, rows in release_2.ROWS["tables"].items():
        assert len(before[name]) == len(rows), name
    assert "alembic_version" not in before

    r = run_cli(["db", "upgrade"], _env(database, tmp_path))
    assert r.returncode == 0, r.stderr
    head = migrations.revision_id(migrations.HEAD)
    assert f"from version 2 to {migrations.HEAD}" in r.stdout and f"Alembic revision {head}" in r.stdout, r.stdout

    after = release_2.snapshot(database)
    assert after.pop("alembic_version") == [(head,)]
    assert after.pop("schema_version") == [(migrations.HEAD,)]
    # revision 0003: readings and reviews gain fingerprint and chain_position at the end of their rows, the
    # chain head its own table; every old column of every row, byte for byte as the driver reads it
    assert after.pop("site_settings") == []  # revision 0004: a new table, empty
    chain_head = after.pop("record_chain")
    changed = {name: after.pop(name) for name in ("readings", "reviews")}
    saved = {**before}
    assert saved.pop("schema_version") == [(2,)]
    for name, rows in changed.items():
        width = len(saved[name][0])
        assert [r[:width] for r in rows] == saved.pop(name), name
        assert all(len(r[width]) == 64 and r[width + 1] >= 1 for r in rows), name
    assert after == saved
    positions = sorted(r[-1] for rows in changed.values() for r in rows)
    assert positions == list(range(1, len(positions) + 1))  # one chain over readings and reviews
    assert chain_head == [(1, len(positions), max((r for rows in changed.values() for r in rows),
                                                   key=lambda r: r[-1])[-2])]
    counts = {name: len(rows) for name, rows in {**after, **changed}.items()}
    print("rows compared:", json.dumps(counts, sort_keys=True))
    upgraded = release_2.snapshot(database)

    # the fingerprints the migration gave release 2's rows verify, in a separate process
    ok = run_cli(["verify"], _env(database, tmp_path))
    assert ok.returncode == 0, ok.stdout + ok.stderr
    assert (f"{len(changed['readings'])} readings and {len(changed['reviews'])} reviews in one chain"
            in ok.stdout), ok.stdout

    db = Database(database.url, schema=database.schema)
    with db.read() as conn:
        stored = conn.exec_driver_sql(
            "SELECT id, result, engine_version, content_hash, inputs FROM readings ORDER BY id").all()
        if ON_POSTGRES:  # Alembic's table sits in the site's schema, not in public
            where = conn.exec_driver_sql("SELECT table_schema FROM information_schema.tables "
                                         "WHERE table_name = 'alembic_version'").scalars().all()
            assert where == [database.schema]
    db.dispose()
    given = release_2.ROWS["tables"]["readings"]
    assert [(r.id, r.result, r.engine_version, r.content_hash, r.inputs) for r in stored] == \
        [(g["id"], g["result"], g["engine_version"], g["content_hash"], g["inputs"]) for g in given]

    # a second run finds nothing to do and changes nothing
    again = run_cli(["db", "upgrade"], _env(database, tmp_path))
    assert again.returncode == 0 and "already current" in again.stdout, again.stdout + again.stderr
    assert release_2.snapshot(database) == upgraded

    # release 2's passwords still log in over the API, and the records read as before
    app = make_app(database, tmp_path, static_dir)
    client = app.test_client()
    for name, password in release_2.PASSWORDS.items():
        ok = client.post("/api/v1/session", json={"username": name, "password": password})
        assert ok.status_code == 201, (name, ok.get_data(as_text=True))
    assert client.post("/api/v1/session", json={"username": "sam", "password": "not-his-password"}).status_code == 401
    for g in given:
        got = client.get(f"/api/v1/readings/{g['id']}")
        assert got.status_code == 200
        assert got.get_json()["engine_version"] == g["engine_version"]
    app.extensions["slipwise"].db.dispose()


def test_serve_upgrades_an_older_database_at_start(database, tmp_path):
    """The chosen behaviour: serve (and demo) upgrade at start, saying from and to, after a copy (SQLite)."""
    db = Database(database.url, schema=database.schema)
    assert db.upgrade(target=1) == (0, 1)  # a release-1 database: no reading_flags table yet
    db.dispose()
    env = _env(database, tmp_path)
    server = ServerProcess(["serve", "--workers", "1", "--threads", "2"], env, free_port())
    try:
        server.wait_ready()
        out = server.output()
        assert f"schema upgraded from version 1 to {migrations.HEAD}" in out, out
        with urllib.request.urlopen(server.base + "/api/v1/health", timeout=10) as resp:
            assert json.load(resp)["schema_version"] == migrations.HEAD
    finally:
        server.stop()
    if not ON_POSTGRES:
        # the file as it was, saved beside it before the upgrade touched it
        copies = list(tmp_path.glob("slipwise-test.sqlite3.schema-1-*.bak"))
        assert len(copies) == 1 and "saved in" in out
        with sqlite3.connect(copies[0]) as old:
            assert old.execute("SELECT version FROM schema_version").fetchone() == (1,)
            assert old.execute("SELECT COUNT(*) FROM sqlite_master WHERE name = 'reading_flags'").fetchone() == (0,)


def test_newer_alembic_revision_is_refused(database, tmp_path):
    db = Database(database.url, schema=database.schema)
    db.upgrade()
    with db.write() as conn:
        conn.exec_driver_sql(f"UPDATE alembic_version SET version_num = '{migrations.HEAD + 1:04d}'")
    db.dispose()
    r = run_cli(["db", "upgrade"], _env(database, tmp_path))
    assert r.returncode == 2 and "newer than this slipwise" in r.stderr, r.stdout + r.stderr


def test_upgrades_started_together_migrate_once(database, tmp_path):
    """Four processes run `slipwise db upgrade` on one release-1 database at once: one upgrades, the
    others wait on the lock (BEGIN IMMEDIATE / advisory lock) and find it current; nothing fails."""
    db = Database(database.url, schema=database.schema)
    db.upgrade(target=1)
    db.dispose()
    env = {**os.environ, **_env(database, tmp_path)}
    procs = [subprocess.Popen([SLIPWISE, "db", "upgrade"], env=env, cwd=REPO, text=True,
                              stdout=subprocess.PIPE, stderr=subprocess.PIPE) for _ in range(4)]
    outs = [p.communicate(timeout=120) for p in procs]
    assert [p.returncode for p in procs] == [0] * 4, outs
    said = [out for out, _ in outs]
    assert sum(f"from version 1 to {migrations.HEAD}" in s for s in said) == 1, said
    assert sum("already current" in s for s in said) == 3, said
    if not ON_POSTGRES:  # one copy of the file, taken by the one that upgraded, under the lock
        assert len(list(tmp_path.glob("slipwise-test.sqlite3.schema-1-*.bak"))) == 1
    db = Database(database.url, schema=database.schema)
    assert db.status() == migrations.Status(migrations.HEAD, migrations.revision_id(migrations.HEAD))
    db.dispose()
