"""Two ``slipwise serve`` processes on one PostgreSQL, as behind a load balancer (issue 13, goal 5).

Each server has its own data folder; what they share is the database and the secret key given to both in
``SLIPWISE_SECRET_KEY``. Checked: a session made on one server is valid on the other, CSRF tokens too; the
login throttle (table ``login_throttle``) counts failures made on either; and with one server killed while
clients stream readings, the clients retry on the other with the same client_id and every acknowledged
reading is stored exactly once.

PostgreSQL only: SQLite is one file on one machine, which several machines cannot share. The README's test
command runs tests/service with DATABASE_URL set, so this runs in CI.
"""

from __future__ import annotations

import http.client
import json
import os
import secrets
import signal
import threading
import time
import uuid

import pytest

from slipwise.store import Database as StoreDatabase
from slipwise.store import accounts
from tests.service.conftest import (MOTOR, ON_POSTGRES, PASSWORDS, READING, ROLES, Database, ServerProcess,
                                   free_port)

pytestmark = pytest.mark.skipif(
    not ON_POSTGRES, reason="several servers share one PostgreSQL: set DATABASE_URL=postgresql+psycopg://... "
                            "(the README's test command runs tests/service with it)")


class Client:
    """A browser-like client of one server: keeps the session cookie, sends the CSRF header on writes."""

    def __init__(self, port: int):
        self.port, self.cookie, self.csrf, self.token = port, None, None, None

    def call(self, method: str, path: str, body=None, headers=None, timeout: float = 20):
        conn = http.client.HTTPConnection("127.0.0.1", self.port, timeout=timeout)
        h = {"Content-Type": "application/json", **(headers or {})}
        if self.cookie:
            h["Cookie"] = self.cookie
        if self.csrf and method != "GET":
            h.setdefault("X-CSRF-Token", self.csrf)
        if self.token:
            h["Authorization"] = "Bearer " + self.token
        try:
            conn.request(method, "/api/v1" + path, body=None if body is None else json.dumps(body), headers=h)
            r = conn.getresponse()
            data = r.read()
            cookie = r.getheader("Set-Cookie")
            if cookie and cookie.startswith("slipwise_session="):
                self.cookie = cookie.split(";", 1)[0]
            return r.status, (json.loads(data) if data and r.getheader("Content-Type", "").startswith(
                "application/json") else data)
        finally:
            conn.close()


@pytest.fixture(scope="module")
def database(tmp_path_factory):
    db = Database(tmp_path_factory.mktemp("db"))
    yield db
    db.drop()


@pytest.fixture(scope="module")
def servers(database, tmp_path_factory):
    """Started once for the module (each start costs seconds); the failover test, last, kills the first."""
    tmp_path = tmp_path_factory.mktemp("servers")
    env = {**database.env(), "SLIPWISE_SECRET_KEY": secrets.token_hex(32)}
    store = StoreDatabase(database.url, schema=database.schema)
    store.migrate(backup=False)
    with store.write() as conn:  # low scrypt cost for test speed, as in conftest
        for name, role in ROLES.items():
            accounts.add_user(conn, name, role, PASSWORDS[name], name.title(), scrypt_n=2 ** 10)
        env["TEST_TOKEN"] = accounts.create_token(conn, "tess", "stream")
    store.dispose()
    started = []
    for name in ("a", "b"):  # each its own data folder: nothing shared but the database and the key
        s = ServerProcess(["serve", "--workers", "1", "--threads", "4"],
                          {**env, "SLIPWISE_DATA_DIR": str(tmp_path / name)}, free_port())
        started.append(s)
    try:
        for s in started:
            s.wait_ready()
        yield started, env
    finally:
        for s in started:
            s.stop()


def login(port: int, username: str) -> Client:
    c = Client(port)
    status, body = c.call("POST", "/session", {"username": username, "password": PASSWORDS[username]})
    assert status == 201, body
    c.csrf = body["csrf_token"]
    return c


def test_a_session_and_its_csrf_token_work_on_every_server(servers):
    (a, b), _ = servers
    sue = login(a.port, "sue")
    on_b = Client(b.port)
    on_b.cookie, on_b.csrf = sue.cookie, sue.csrf  # the balancer sent the next request to the other server
    status, body = on_b.call("GET", "/session")
    assert status == 200 and body["user"]["username"] == "sue" and body["csrf_token"] == sue.csrf
    status, motor = on_b.call("POST", "/motors", MOTOR)
    assert status == 201, motor
    on_b.csrf = "0" * 64
    status, body = on_b.call("POST", "/motors", {**MOTOR, "tag": "PMP-09"})
    assert status == 403 and body["error"]["code"] == "csrf_failed"
    # logged out on one server: logged out on both
    status, _ = sue.call("DELETE", "/session")
    assert status == 204
    on_b.csrf = sue.csrf
    assert on_b.call("GET", "/session")[0] == 401


def test_the_login_throttle_counts_failures_on_every_server(servers):
    (a, b), _ = servers
    from slipwise.web.auth import USER_FREE_FAILURES
    for i in range(USER_FREE_FAILURES):
        port = (a, b)[i % 2].port  # the balancer spreads the guesses over both servers
        status, _ = Client(port).call("POST", "/session", {"username": "theo", "password": f"guess-{i}"})
        assert status == 401, i
    for s in (a, b):  # locked on both, even with the right password
        status, body = Client(s.port).call("POST", "/session", {"username": "theo", "password": PASSWORDS["theo"]})
        assert status == 429, body
        assert body["error"]["code"] == "too_many_attempts"


def test_one_server_killed_mid_stream_every_acknowledged_reading_stored_once(servers, database):
    (a, b), env = servers
    sue = login(a.port, "sue")
    status, motor = sue.call("POST", "/motors", {**MOTOR, "tag": "PMP-10"})
    assert status == 201, motor
    token = env["TEST_TOKEN"]

    acknowledged: dict[str, int] = {}      # client_id -> reading id the server answered with
    replays, retries, errors = [], [], []
    lock = threading.Lock()
    stop = threading.Event()

    def stream(worker: int):
        order = [a, b] if worker % 2 == 0 else [b, a]  # round robin over the two servers
        n = 0
        while not stop.is_set() and n < 200:
            n += 1
            body = {"client_id": str(uuid.uuid4()), "motor_id": motor["id"], **READING,
                    "speed_rpm": 1466 + (n % 14)}
            for attempt in range(20):
                server = order[(n + attempt) % 2]
                c = Client(server.port)
                c.token = token
                try:
                    status, answer = c.call("POST", "/readings", body, timeout=10)
                except (OSError, http.client.HTTPException):
                    with lock:
                        retries.append(body["client_id"])  # no answer: send the same reading to the next server
                    time.sleep(0.05)
                    continue
                if status >= 500:
                    with lock:
                        retries.append(body["client_id"])
                    continue
                with lock:
                    if status not in (200, 201):
                        errors.append((status, answer))
                    else:
                        acknowledged[body["client_id"]] = answer["id"]
                        if status == 200:
                            replays.append(body["client_id"])
                break
            else:
                with lock:
                    errors.append(("never acknowledged", body["client_id"]))

    threads = [threading.Thread(target=stream, args=(i,)) for i in range(4)]
    for t in threads:
        t.start()
    time.sleep(2)
    before_kill = len(acknowledged)
    os.killpg(a.proc.pid, signal.SIGKILL)  # no graceful stop: requests in flight are cut off
    a.proc.wait(10)
    time.sleep(2)
    stop.set()
    for t in threads:
        t.join(60)
    assert not errors, errors[:5]
    assert before_kill > 0 and len(acknowledged) > before_kill, (before_kill, len(acknowledged))
    assert retries, "no request was cut off by the kill: the test did not test the failover"

    from sqlalchemy import create_engine, text
    engine = create_engine(database.url, connect_args={"options": f"-csearch_path={database.schema}"})
    with engine.connect() as conn:
        stored = dict(conn.execute(text("SELECT client_id, COUNT(*) FROM readings GROUP BY client_id")).all())
        ids = dict(conn.execute(text("SELECT client_id, id FROM readings")).all())
        audited = conn.execute(text("SELECT COUNT(*) FROM audit_log WHERE action = 'reading.submit'")).scalar()
    engine.dispose()
    print(f"{len(acknowledged)} readings acknowledged ({before_kill} before the kill), {len(retries)} retries, "
          f"{len(replays)} answered as replays of a reading the killed server had stored")
    assert all(stored.get(cid) == 1 for cid in acknowledged)                   # each exactly once
    assert all(ids[cid] == rid for cid, rid in acknowledged.items())           # the id the client was given
    assert set(stored) == set(acknowledged)  # nothing stored that its client does not know about
    assert audited == len(stored)
