"""A real ``slipwise serve`` process (gunicorn, 2 workers x 4 threads) driven over HTTP.

Covers the race of concurrent replays of one client_id, HTTPS with a
self-signed certificate, and the CLI commands that manage accounts.
"""

from __future__ import annotations

import http.cookiejar
import io
import json
import ssl
import threading
import urllib.error
import urllib.request
import uuid

import pandas as pd
import pytest

from slipwise.engine.records import number_cell

from .conftest import FIXTURES, MOTOR, READING, ServerProcess, free_port, run_cli


class Http:
    """A small HTTP client with a cookie jar and the CSRF header."""

    def __init__(self, base: str, context=None):
        self.base = base
        self.jar = http.cookiejar.CookieJar()
        handlers = [urllib.request.HTTPCookieProcessor(self.jar)]
        if context is not None:
            handlers.append(urllib.request.HTTPSHandler(context=context))
        self.opener = urllib.request.build_opener(*handlers)
        self.csrf = None

    def call(self, method: str, path: str, body=None, headers=None):
        data = json.dumps(body).encode() if body is not None else None
        h = {"Content-Type": "application/json"} if body is not None else {}
        if self.csrf:
            h["X-CSRF-Token"] = self.csrf
        h.update(headers or {})
        req = urllib.request.Request(self.base + path, data=data, method=method, headers=h)
        try:
            with self.opener.open(req, timeout=60) as r:
                return r.status, r.headers, r.read()
        except urllib.error.HTTPError as e:
            return e.code, e.headers, e.read()

    def json(self, method, path, body=None, headers=None):
        status, _, raw = self.call(method, path, body, headers)
        return status, (json.loads(raw) if raw else None)

    def login(self, username, password):
        status, body = self.json("POST", "/api/v1/session", {"username": username, "password": password})
        assert status == 201, body
        self.csrf = body["csrf_token"]


@pytest.fixture
def server_env(database, tmp_path):
    env = {**database.env(), "SLIPWISE_DATA_DIR": str(tmp_path / "data")}
    for name, role in (("tess", "technician"), ("sue", "supervisor")):
        r = run_cli(["user", "add", name, "--role", role, "--full-name", name.title(), "--password-stdin"], env,
                    input=f"{name}-password-1\n")
        assert r.returncode == 0, r.stderr
        assert f"added {name} ({role})" in r.stdout
    return env


@pytest.fixture
def server(server_env):
    proc = ServerProcess(["serve"], server_env, free_port())
    try:
        proc.wait_ready()
        yield proc
    finally:
        proc.stop()


def test_end_to_end_on_a_real_server(server, server_env):
    sup, tech = Http(server.base), Http(server.base)
    sup.login("sue", "sue-password-1")
    tech.login("tess", "tess-password-1")
    status, headers, _ = sup.call("GET", "/api/v1/health")
    assert status == 200 and headers["Server"].startswith("gunicorn")
    assert "default-src 'self'" in headers["Content-Security-Policy"]
    status, motor = sup.json("POST", "/api/v1/motors", MOTOR)
    assert status == 201
    status, stored = tech.json("POST", "/api/v1/readings",
                               {"client_id": str(uuid.uuid4()), "motor_id": motor["id"], **READING})
    assert status == 201 and stored["result"]["sync_speed_rpm"] == 1500.0
    status, log = tech.json("GET", "/api/v1/readings?date=2025-03-14")
    assert status == 200 and [r["id"] for r in log["readings"]] == [stored["id"]]
    status, headers, svg = tech.call("GET", f"/api/v1/readings/{stored['id']}/torque-speed.svg")
    assert status == 200 and svg.startswith(b"<?xml")
    assert tech.call("GET", "/api/v1/export.csv")[0] == 403
    status, headers, csv_bytes = sup.call("GET", "/api/v1/export.csv?date=2025-03-14")
    frame = pd.read_csv(io.BytesIO(csv_bytes))
    assert status == 200 and list(frame["reading_id"]) == [stored["id"]]
    # the export writes the value rounded by the record's rule table (engine.records.RESULT_DECIMALS)
    assert frame["slip_pct"][0] == float(number_cell("slip_pct", stored["result"]["slip_pct"]))
    # a bearer token made with the CLI works for scripts, no CSRF needed
    r = run_cli(["token", "create", "sue", "--label", "logger"], server_env)
    assert r.returncode == 0 and "shown once" in r.stderr
    token = r.stdout.strip()
    script = Http(server.base)
    status, body = script.json("GET", "/api/v1/readings", headers={"Authorization": "Bearer " + token})
    assert status == 200 and body["count"] == 1
    status, _ = tech.json("DELETE", "/api/v1/session")
    assert status == 204 and tech.json("GET", "/api/v1/readings")[0] == 401
    r = run_cli(["user", "list"], server_env)
    assert r.returncode == 0 and r.stdout.splitlines()[0].split()[:2] == ["username", "role"]
    assert {line.split()[0] for line in r.stdout.splitlines()[1:]} == {"sue", "tess"}


def test_concurrent_replays_of_one_client_id_store_one_row(server, server_env):
    sup = Http(server.base)
    sup.login("sue", "sue-password-1")
    motor = sup.json("POST", "/api/v1/motors", MOTOR)[1]
    for attempt in range(3):
        body = {"client_id": str(uuid.uuid4()), "motor_id": motor["id"], **READING}
        clients = []
        for _ in range(16):
            c = Http(server.base)
            c.login("tess", "tess-password-1")
            clients.append(c)
        barrier = threading.Barrier(len(clients))
        results: list = [None] * len(clients)

        def submit(i):
            barrier.wait()
            results[i] = clients[i].json("POST", "/api/v1/readings", body)

        threads = [threading.Thread(target=submit, args=(i,)) for i in range(len(clients))]
        for t in threads:
            t.start()
        for t in threads:
            t.join(60)
        statuses = sorted(s for s, _ in results)
        assert statuses == [200] * 15 + [201], statuses
        assert len({b["id"] for _, b in results}) == 1
        assert len({json.dumps(b, sort_keys=True) for _, b in results}) == 1
        conflict = clients[0].json("POST", "/api/v1/readings", {**body, "speed_rpm": 1470})
        assert conflict[0] == 409
    status, log = sup.json("GET", "/api/v1/readings")
    assert log["count"] == 3


def test_https_with_self_signed_certificate(server_env, tmp_path):
    port = free_port()
    proc = ServerProcess(["serve", "--self-signed"], server_env, port, scheme="https")
    cert = tmp_path / "data" / "tls" / "slipwise-cert.pem"
    try:
        ctx = ssl.create_default_context()
        ctx.check_hostname = True
        # the certificate only exists once the server made it
        import time
        for _ in range(100):
            if cert.exists():
                break
            time.sleep(0.1)
        ctx.load_verify_locations(str(cert))
        proc.wait_ready(context=ctx)  # verifies the chain and that 127.0.0.1 is in the certificate
        client = Http(proc.base, context=ctx)
        status, headers, _ = client.call("POST", "/api/v1/session",
                                         {"username": "tess", "password": "tess-password-1"})
        assert status == 201
        assert "Secure" in headers["Set-Cookie"] and "HttpOnly" in headers["Set-Cookie"]
        assert headers["Strict-Transport-Security"].startswith("max-age=")
        assert "SHA-256 fingerprint" in proc.output()
    finally:
        proc.stop()


def test_cli_refusals(server_env):
    r = run_cli(["user", "add", "tess", "--role", "technician", "--password-stdin"], server_env,
                input="another-password\n")
    assert r.returncode == 1 and "exists" in r.stderr
    r = run_cli(["user", "add", "newbie", "--role", "technician", "--password-stdin"], server_env, input="short\n")
    assert r.returncode == 1 and "8 to 1024" in r.stderr
    r = run_cli(["user", "add", "Bad Name", "--role", "technician", "--password-stdin"], server_env,
                input="long-enough-pw\n")
    assert r.returncode == 1 and "username" in r.stderr
    r = run_cli(["user", "add", "x1", "--role", "boss", "--password-stdin"], server_env, input="long-enough\n")
    assert r.returncode == 2 and "invalid choice" in r.stderr
    r = run_cli(["user", "add", "x2", "--role", "technician"], server_env, input="")
    assert r.returncode == 2 and "--password-stdin" in r.stderr
    r = run_cli(["token", "create", "nobody"], server_env)
    assert r.returncode == 1 and "no user named nobody" in r.stderr
    r = run_cli(["serve", "--cert", "/nonexistent.pem", "--key", "/nonexistent.key", "--port", "1"], server_env)
    assert r.returncode == 2 and "not found" in r.stderr
    r = run_cli(["serve", "--cert", "/nonexistent.pem", "--port", "1"], server_env)
    assert r.returncode == 2 and "together" in r.stderr


def test_demo_loads_samples_prints_accounts_and_serves(tmp_path):
    data = tmp_path / "demo-data"
    port = free_port()
    env = {"SLIPWISE_DATA_DIR": str(data), "DATABASE_URL": ""}
    proc = ServerProcess(["demo", "--samples", str(FIXTURES)], env, port)
    try:
        proc.wait_ready()
        out = proc.output()
        assert "2 motors and 3 readings added" in out
        accounts = {}
        for line in out.splitlines():
            parts = line.split()
            if len(parts) >= 4 and parts[2] == "password":
                accounts[parts[0]] = (parts[1], parts[3])
        assert set(accounts) == {"kit", "ren", "val"}
        assert accounts["val"][0] == "supervisor"
        sup = Http(proc.base)
        sup.login("val", accounts["val"][1])
        status, log = sup.json("GET", "/api/v1/readings?date=2025-03-14")
        assert status == 200 and log["count"] == 3
        assert {r["technician"] for r in log["readings"]} == {"kit", "ren"}
        assert (data / "slipwise.sqlite3").exists()
    finally:
        proc.stop()
    # a second run adds nothing and prints the same accounts
    r = run_cli(["demo", "--samples", str(FIXTURES), "--no-serve"], env)
    assert r.returncode == 0 and "0 motors and 0 readings added (3 already there)" in r.stdout
    assert accounts["kit"][1] in r.stdout
