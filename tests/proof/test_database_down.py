"""Database unavailable, read-only or full: the service answers 503 in the documented error shape,
acknowledges nothing it did not store, and recovers by itself when the database is back.

- PostgreSQL stops answering: a throwaway cluster of our own is shut down under a running server,
  then started again; and the same with the server started while PostgreSQL is down.
- SQLite disk full: the running server's processes are forbidden to grow any file (RLIMIT_FSIZE set
  to 0 from outside with prlimit, as a full disk refuses the write), then allowed again.
- SQLite file or folder read-only: the server is restarted while the database file (or its folder)
  is read-only, as after a restore with the wrong permissions; write permission is then given back
  without restarting it. Under root, the server runs without the capabilities that let root ignore
  file permissions (setpriv), so the permissions bite as they would for a service account.

"Nothing acknowledged that was not stored" is checked twice: the database holds exactly the
acknowledged readings, and every reading refused with 503 is stored as new (201) when sent again
with the same client_id after recovery.
"""

from __future__ import annotations

import os
import resource
import shutil
import stat
import time
from pathlib import Path

import pytest
from sqlalchemy import create_engine

from .fault_kit import (MOTOR, Backend, Http, PgCluster, Server, accounts, assert_nothing_half_written,
                        assert_unavailable, reading_body)

RECOVERY_S = 30
# root ignores file permissions through these capabilities; drop them for the server under test
NO_OVERRIDE = "-dac_override,-dac_read_search,-fowner"


def as_service_account() -> list[str]:
    if os.geteuid() != 0:
        return []
    if not shutil.which("setpriv"):
        pytest.fail("setpriv (util-linux) is needed to run the server without root's file-permission override",
                    pytrace=False)
    return ["setpriv", f"--inh-caps={NO_OVERRIDE}", f"--bounding-set={NO_OVERRIDE}"]


def send_until_stored(tech: Http, body: dict, timeout: float = RECOVERY_S) -> tuple[int, dict, float]:
    """Retry the same body until acknowledged, as the outbox does. Returns (status, reading, seconds)."""
    t0 = time.monotonic()
    while True:
        status, _, answer = tech.call("POST", "/api/v1/readings", body)
        if status in (200, 201):
            return status, answer, time.monotonic() - t0
        assert status in (0, 503), (status, answer)
        if time.monotonic() - t0 > timeout:
            raise AssertionError(f"not recovered after {timeout} s: last answer {status} {answer}")
        time.sleep(0.2)


def refused_while_down(tech: Http, motor_id: int, start: int, count: int, *, cannot_write: bool) -> list[dict]:
    """Submit `count` new readings; each must be refused with 503. Returns their bodies."""
    bodies = []
    for i in range(count):
        body = reading_body(motor_id, start + i)
        assert_unavailable(*tech.call("POST", "/api/v1/readings", body), cannot_write=cannot_write)
        bodies.append(body)
    return bodies


def recovered(tech: Http, refused: list[dict]) -> list[dict]:
    """Each refused reading, sent again with its client_id, is stored now as new: 201, not a replay."""
    stored = []
    for body in refused:
        status, answer, _ = send_until_stored(tech, body)
        assert status == 201, "a reading refused with 503 must not have been stored"
        assert answer["client_id"] == body["client_id"]
        stored.append(answer)
    return stored


def check_store(backend: Backend, acknowledged: list[dict]) -> None:
    rows = assert_nothing_half_written(backend)
    assert sorted((r["id"], r["client_id"]) for r in rows) == sorted((a["id"], a["client_id"]) for a in acknowledged)


# --- PostgreSQL ------------------------------------------------------------------------
@pytest.fixture
def cluster():
    c = PgCluster()
    yield c
    c.destroy()


def test_postgresql_stops_answering_then_returns(cluster, tmp_path):
    backend = Backend.public_schema(cluster.url)
    env = {"DATABASE_URL": cluster.url, "SLIPWISE_DB_SCHEMA": "", "SLIPWISE_DATA_DIR": str(tmp_path / "data")}
    tokens = accounts(env)
    server = Server(env).start()
    try:
        sup, tech = Http(server.base, tokens["sid"]), Http(server.base, tokens["tova"])
        status, _, motor = sup.call("POST", "/api/v1/motors", MOTOR)
        assert status == 201, motor
        acknowledged = [send_until_stored(tech, reading_body(motor["id"], 1))[1]]
        pids = server.pids()

        cluster.stop()
        refused = refused_while_down(tech, motor["id"], 100, 6, cannot_write=False)  # both workers answer
        assert_unavailable(*tech.call("GET", "/api/v1/readings"), cannot_write=False)
        assert_unavailable(*sup.call("GET", "/api/v1/export.csv"), cannot_write=False)
        assert_unavailable(*Http(server.base).call("POST", "/api/v1/session",
                                                   {"username": "tova", "password": "tova-fault-pass-1"}),
                           cannot_write=False)
        status, _, health = Http(server.base).call("GET", "/api/v1/health")
        assert status == 503 and health["status"] == "unavailable"

        cluster.start()
        t0 = time.monotonic()
        acknowledged += recovered(tech, refused)
        print(f"\nFIGURE PostgreSQL back: first reading stored {time.monotonic() - t0:.2f} s after the server "
              "answered again, without restarting slipwise")
        assert server.pids() == pids and server.proc.poll() is None, "slipwise recovered without a restart"
        status, _, log = sup.call("GET", f"/api/v1/readings?motor_id={motor['id']}")
        assert status == 200 and log["count"] == len(acknowledged) == 7

        # a server started while PostgreSQL is down (a reboot where slipwise comes up first) serves 503
        # until PostgreSQL answers, then works without a restart
        server.stop()
        cluster.stop()
        server.start()
        assert "serving anyway: the API answers 503 until it can" in server.output()
        refused = refused_while_down(tech, motor["id"], 200, 2, cannot_write=False)
        cluster.start()
        acknowledged += recovered(tech, refused)
        check_store(backend, acknowledged)
    finally:
        server.stop()


# --- SQLite ------------------------------------------------------------------------------
@pytest.fixture
def sqlite_service(tmp_path):
    """An SQLite slipwise with two accounts, a motor and one stored reading; the server not started."""
    folder = tmp_path / "data"
    backend = Backend("sqlite", folder)
    env = {**backend.env(), "SLIPWISE_DB_SCHEMA": "", "SLIPWISE_DATA_DIR": str(folder)}
    tokens = accounts(env)
    return backend, env, tokens, folder


def start_with_motor(env, tokens, prefix=None):
    server = Server(env, prefix=prefix).start()
    sup, tech = Http(server.base, tokens["sid"]), Http(server.base, tokens["tova"])
    status, _, motor = sup.call("POST", "/api/v1/motors", MOTOR)
    assert status == 201, motor
    first = send_until_stored(tech, reading_body(motor["id"], 1))[1]
    return server, sup, tech, motor, first


def set_file_size_limit(pids: list[int], limit: int | None) -> None:
    for pid in pids:
        _, hard = resource.prlimit(pid, resource.RLIMIT_FSIZE)
        resource.prlimit(pid, resource.RLIMIT_FSIZE, (hard if limit is None else limit, hard))


def test_sqlite_disk_full_then_space_again(sqlite_service):
    backend, env, tokens, _ = sqlite_service
    server, sup, tech, motor, first = start_with_motor(env, tokens)
    acknowledged = [first]
    try:
        set_file_size_limit(server.pids(), 0)  # no file of the server may grow: the disk is full
        try:
            refused = refused_while_down(tech, motor["id"], 100, 6, cannot_write=True)
            assert_unavailable(*sup.call("POST", "/api/v1/motors", {**MOTOR, "tag": "FLT-02"}), cannot_write=True)
            # reading needs no space: the day's log, a reading and the record still work
            status, _, log = tech.call("GET", f"/api/v1/readings?motor_id={motor['id']}")
            assert status == 200 and [r["id"] for r in log["readings"]] == [first["id"]]
            assert sup.call("GET", "/api/v1/export.csv")[0] == 200
        finally:
            set_file_size_limit(server.pids(), None)  # space again
        t0 = time.monotonic()
        acknowledged += recovered(tech, refused)
        print(f"\nFIGURE SQLite disk full: 6 readings refused with 503, stored {time.monotonic() - t0:.2f} s after "
              "space came back, without restarting slipwise")
        assert sup.call("POST", "/api/v1/motors", {**MOTOR, "tag": "FLT-02"})[0] == 201
    finally:
        server.stop()
    check_store(backend, acknowledged)


@pytest.mark.parametrize("what", ["file", "folder"])
def test_sqlite_read_only_then_writable_again(sqlite_service, what):
    backend, env, tokens, folder = sqlite_service
    prefix = as_service_account()
    server, sup, tech, motor, first = start_with_motor(env, tokens, prefix)
    acknowledged = [first]
    server.stop()
    db_file = folder / "slipwise.sqlite3"
    # the last connection closed: SQLite has folded its -wal file back into the database
    assert not Path(str(db_file) + "-wal").exists()
    target = db_file if what == "file" else folder
    mode = stat.S_IMODE(target.stat().st_mode)
    target.chmod(mode & ~(stat.S_IWUSR | stat.S_IWGRP | stat.S_IWOTH))
    try:
        server.start()  # a restart while read-only: it starts, and serves what it can
        assert Http(server.base).call("GET", "/")[0] == 200  # the page itself needs no database
        refused = refused_while_down(tech, motor["id"], 100, 6, cannot_write=True)
        assert_unavailable(*Http(server.base).call("POST", "/api/v1/session",
                                                   {"username": "tova", "password": "tova-fault-pass-1"}),
                           cannot_write=True)
        day_log = tech.call("GET", f"/api/v1/readings?motor_id={motor['id']}")
        status, _, health = Http(server.base).call("GET", "/api/v1/health")
        if what == "file":  # SQLite still reads the file
            assert day_log[0] == 200 and [r["id"] for r in day_log[2]["readings"]] == [first["id"]]
            assert status == 200 and health["status"] == "ok"
        else:  # without its -wal and -shm files, which it cannot create, SQLite cannot even read
            assert_unavailable(*day_log, cannot_write=True)
            assert status == 503 and health["status"] == "unavailable"
            assert "serving anyway: the API answers 503 until it can" in server.output()
    finally:
        target.chmod(mode)  # write permission back; the server is not restarted
    try:
        t0 = time.monotonic()
        acknowledged += recovered(tech, refused)
        print(f"\nFIGURE SQLite {what} read-only: 6 readings refused with 503, stored {time.monotonic() - t0:.2f} s "
              "after write permission came back, without restarting slipwise")
    finally:
        server.stop()
    check_store(backend, acknowledged)
    eng = create_engine(backend.url)
    with eng.connect() as conn:
        assert conn.exec_driver_sql("SELECT COUNT(*) FROM sessions").scalar_one() == 0  # the refused logins
    eng.dispose()
