"""Fixtures for the service tests: a fresh database per test, the app, clients per role.

With DATABASE_URL set (postgresql+psycopg://...), every test gets its own
PostgreSQL schema, dropped afterwards, so runs never see each other's rows;
otherwise an SQLite file in the test's temporary folder.
"""

from __future__ import annotations

import os
import socket
import subprocess
import sys
import time
import urllib.request
import uuid
from pathlib import Path

import pytest
from sqlalchemy import create_engine

from slipwise.store import accounts, normalise_url, sqlite_url
from slipwise.web import create_app

DATABASE_URL = os.environ.get("DATABASE_URL")
ON_POSTGRES = bool(DATABASE_URL) and normalise_url(DATABASE_URL).startswith("postgresql")
FIXTURES = Path(__file__).parent / "fixtures"
REPO = Path(__file__).resolve().parents[2]
SLIPWISE = str(Path(sys.executable).with_name("slipwise"))

PASSWORDS = {"tess": "tess-password-1", "theo": "theo-password-1", "sue": "sue-password-1"}
ROLES = {"tess": "technician", "theo": "technician", "sue": "supervisor"}

# A 15 kW, 400 V, 50 Hz, 4-pole motor: the figures of a typical catalogue IE3 motor (from memory),
# fictional tags and sites.
MOTOR = {"site": "Harbour Mill", "tag": "PMP-07", "location": "pump room", "description": "cooling water",
         "rated_power_kw": 15, "rated_voltage_v": 400, "rated_current_a": 28.5, "rated_frequency_hz": 50,
         "rated_speed_rpm": 1460, "driven_load": "variable_torque"}
READING = {"frequency_hz": 50, "speed_rpm": 1475, "current_l1_a": 20.0, "current_l2_a": 20.5,
           "current_l3_a": 19.8, "voltage_l12_v": 402, "voltage_l23_v": 399, "voltage_l31_v": 405,
           "taken_at": "2025-03-14T09:30:00+01:00"}


def new_schema_name() -> str:
    return "sw_test_" + uuid.uuid4().hex[:16]


class Database:
    """Where one test's data lives: (url, schema) plus cleanup."""

    def __init__(self, tmp_path: Path):
        if ON_POSTGRES:
            self.url = normalise_url(DATABASE_URL)
            self.schema = new_schema_name()
            self._admin = create_engine(self.url)
            with self._admin.begin() as conn:
                conn.exec_driver_sql(f'CREATE SCHEMA "{self.schema}"')
        else:
            self.url = sqlite_url(tmp_path / "slipwise-test.sqlite3")
            self.schema = None

    def env(self) -> dict[str, str]:
        env = {"DATABASE_URL": self.url}
        if self.schema:
            env["SLIPWISE_DB_SCHEMA"] = self.schema
        return env

    def drop(self) -> None:
        if self.schema:
            with self._admin.begin() as conn:
                conn.exec_driver_sql(f'DROP SCHEMA IF EXISTS "{self.schema}" CASCADE')
            self._admin.dispose()


@pytest.fixture
def database(tmp_path):
    db = Database(tmp_path)
    yield db
    db.drop()


@pytest.fixture
def static_dir(tmp_path):
    folder = tmp_path / "static"
    (folder / "icons").mkdir(parents=True)
    (folder / "index.html").write_text("<!doctype html><title>slipwise test page</title>", encoding="utf-8")
    (folder / "sw.js").write_text("const VERSION = 'test';\n", encoding="utf-8")
    (folder / "app.js").write_text("console.log('app');\n", encoding="utf-8")
    (folder / "icons" / "icon.svg").write_text("<svg xmlns='http://www.w3.org/2000/svg'/>", encoding="utf-8")
    (tmp_path / "secret.txt").write_text("not for the web", encoding="utf-8")
    return folder


def make_app(database: Database, tmp_path: Path, static_dir: Path, **extra):
    config = {"DATA_DIR": str(tmp_path / "data"), "DATABASE_URL": database.url, "DB_SCHEMA": database.schema,
              "SECRET_KEY": "test-secret-key", "STATIC_DIR": str(static_dir), "TESTING": True, **extra}
    return create_app(config)


@pytest.fixture
def app(database, tmp_path, static_dir):
    app = make_app(database, tmp_path, static_dir)
    db = app.extensions["slipwise"].db
    with db.write() as conn:
        for name, role in ROLES.items():
            # low scrypt cost for test speed; the default cost is checked in test_auth
            accounts.add_user(conn, name, role, PASSWORDS[name], name.title() + " Testperson", scrypt_n=2 ** 10)
    yield app
    db.dispose()


class Api:
    """A test client logged in as one user; adds the CSRF header to writes."""

    def __init__(self, app, username: str | None):
        self.client = app.test_client()
        self.csrf = None
        self.username = username
        if username:
            r = self.client.post("/api/v1/session", json={"username": username, "password": PASSWORDS[username]})
            assert r.status_code == 201, r.get_data(as_text=True)
            self.csrf = r.get_json()["csrf_token"]

    def _headers(self, headers):
        h = dict(headers or {})
        if self.csrf:
            h.setdefault("X-CSRF-Token", self.csrf)
        return h

    def get(self, url, **kw):
        return self.client.get(url, **kw)

    def post(self, url, headers=None, **kw):
        return self.client.post(url, headers=self._headers(headers), **kw)

    def put(self, url, headers=None, **kw):
        return self.client.put(url, headers=self._headers(headers), **kw)

    def delete(self, url, headers=None, **kw):
        return self.client.delete(url, headers=self._headers(headers), **kw)


@pytest.fixture
def anon(app):
    return Api(app, None)


@pytest.fixture
def tech(app):
    return Api(app, "tess")


@pytest.fixture
def tech2(app):
    return Api(app, "theo")


@pytest.fixture
def sup(app):
    return Api(app, "sue")


@pytest.fixture
def motor(sup):
    r = sup.post("/api/v1/motors", json=MOTOR)
    assert r.status_code == 201, r.get_data(as_text=True)
    return r.get_json()


def reading_body(motor_id_: int, **changes) -> dict:
    body = {"client_id": str(uuid.uuid4()), "motor_id": motor_id_, **READING}
    body.update(changes)
    return body


@pytest.fixture
def reading(tech, motor):
    r = tech.post("/api/v1/readings", json=reading_body(motor["id"]))
    assert r.status_code == 201, r.get_data(as_text=True)
    return r.get_json()


def count_rows(app, table: str) -> int:
    with app.extensions["slipwise"].db.read() as conn:
        return conn.exec_driver_sql(f"SELECT COUNT(*) FROM {table}").scalar_one()


# --- real server processes -----------------------------------------------------
def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def run_cli(args: list[str], env: dict[str, str], input: str | None = None, timeout: float = 60):
    full_env = {**os.environ, **env}
    return subprocess.run([SLIPWISE, *args], input=input, capture_output=True, text=True, env=full_env,
                          timeout=timeout, cwd=REPO)


class ServerProcess:
    def __init__(self, args: list[str], env: dict[str, str], port: int, scheme: str = "http"):
        self.port = port
        self.base = f"{scheme}://127.0.0.1:{port}"
        self.log = Path(env["SLIPWISE_DATA_DIR"]) / f"server-{port}.log"
        self.log.parent.mkdir(parents=True, exist_ok=True)
        self._log_file = self.log.open("w")
        self.proc = subprocess.Popen([SLIPWISE, *args, "--port", str(port)], env={**os.environ, **env},
                                     stdout=self._log_file, stderr=subprocess.STDOUT, cwd=REPO,
                                     start_new_session=True)

    def wait_ready(self, timeout: float = 60, context=None) -> None:
        deadline = time.monotonic() + timeout
        while time.monotonic() < deadline:
            if self.proc.poll() is not None:
                raise AssertionError(f"server exited {self.proc.returncode}: {self.output()}")
            try:
                with urllib.request.urlopen(self.base + "/api/v1/health", timeout=2, context=context) as r:
                    if r.status == 200:
                        return
            except OSError:
                time.sleep(0.2)
        raise AssertionError("server did not answer: " + self.output())

    def output(self) -> str:
        self._log_file.flush()
        return self.log.read_text()

    def stop(self) -> None:
        if self.proc.poll() is None:
            self.proc.terminate()
            try:
                self.proc.wait(timeout=20)
            except subprocess.TimeoutExpired:
                self.proc.kill()
                self.proc.wait()
        self._log_file.close()
