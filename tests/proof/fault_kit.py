"""Tools for the fault tests: real ``slipwise serve`` processes, the two databases, a small HTTP client,
a throwaway PostgreSQL cluster, and the checks that nothing stored is half-written.

The fault tests act as a user would: the CLI as a subprocess, the API over HTTP, the database
inspected afterwards with plain SQL.
"""

from __future__ import annotations

import http.client
import json
import os
import shutil
import signal
import socket
import subprocess
import sys
import tempfile
import time
import urllib.error
import urllib.request
import uuid
from pathlib import Path

import pytest
from sqlalchemy import create_engine, text

from slipwise.store import normalise_url, sqlite_url

REPO = Path(__file__).resolve().parents[2]
SLIPWISE = str(Path(sys.executable).with_name("slipwise"))
DEFAULT_PG_URL = "postgresql+psycopg://postgres@127.0.0.1:5432/test"

# A 15 kW, 400 V, 50 Hz, 4-pole motor: figures of a typical catalogue IE3 motor (from memory); fictional tag.
MOTOR = {"site": "Quarry Lane pumping", "tag": "FLT-01", "location": "plant room", "description": "fault tests",
         "rated_power_kw": 15, "rated_voltage_v": 400, "rated_current_a": 28.5, "rated_frequency_hz": 50,
         "rated_speed_rpm": 1460, "driven_load": "variable_torque"}


def reading_body(motor_id: int, n: int, client_id: str | None = None) -> dict:
    """A plausible reading whose speed and currents vary with n (so rows differ)."""
    amps = 17.0 + (n % 9)
    return {"client_id": client_id or str(uuid.uuid4()), "motor_id": motor_id, "frequency_hz": 50,
            "speed_rpm": 1466 + (n % 14), "current_l1_a": amps, "current_l2_a": amps + 0.4,
            "current_l3_a": amps - 0.3, "voltage_l12_v": 401, "voltage_l23_v": 398, "voltage_l31_v": 404,
            "taken_at": f"2025-06-03T{8 + (n // 3600) % 10:02d}:{(n // 60) % 60:02d}:{n % 60:02d}+02:00"}


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


# --- databases ------------------------------------------------------------------
def postgres_url() -> str:
    url = os.environ.get("DATABASE_URL")
    if url and normalise_url(url).startswith("postgresql"):
        return normalise_url(url)
    return DEFAULT_PG_URL


class Backend:
    """Where one test's data lives: an SQLite file in a folder, or a fresh PostgreSQL schema."""

    def __init__(self, kind: str, folder: Path):
        self.kind = kind
        self.schema = None
        if kind == "sqlite":
            self.url = sqlite_url(folder / "slipwise.sqlite3")
            self.admin = None
        else:
            self.url = postgres_url()
            self.schema = "sw_fault_" + uuid.uuid4().hex[:16]
            self.admin = create_engine(self.url)
            problem = None
            try:
                with self.admin.begin() as conn:
                    conn.exec_driver_sql(f'CREATE SCHEMA "{self.schema}"')
            except Exception as e:  # noqa: BLE001 - any failure to reach it is the message
                problem = str(e).splitlines()[0]
                self.admin.dispose()
            if problem:
                pytest.fail(f"PostgreSQL is not reachable at {self.url} ({problem}): this test needs it; start it "
                            "(scripts/setup --test) or set DATABASE_URL", pytrace=False)

    @classmethod
    def public_schema(cls, url: str) -> "Backend":
        """A PostgreSQL database of the test's own (a throwaway cluster): its public schema, nothing to drop."""
        b = cls.__new__(cls)
        b.kind, b.url, b.schema, b.admin = "postgresql", url, None, None
        return b

    def env(self) -> dict[str, str]:
        env = {"DATABASE_URL": self.url}
        if self.schema:
            env["SLIPWISE_DB_SCHEMA"] = self.schema
        return env

    def engine(self):
        if self.kind == "sqlite" or not self.schema:
            return create_engine(self.url)
        return create_engine(self.url, connect_args={"options": f"-csearch_path={self.schema}"})

    def drop(self) -> None:
        if self.admin is not None:
            with self.admin.begin() as conn:
                conn.exec_driver_sql(f'DROP SCHEMA IF EXISTS "{self.schema}" CASCADE')
            self.admin.dispose()


# --- the CLI and the server ---------------------------------------------------------
def cli(args: list[str], env: dict[str, str], input: str | None = None, prefix: list[str] | None = None) -> str:
    r = subprocess.run([*(prefix or []), SLIPWISE, *args], input=input, capture_output=True, text=True,
                       env={**os.environ, **env}, timeout=120, cwd=REPO)
    assert r.returncode == 0, f"slipwise {' '.join(args)} exited {r.returncode}: {r.stderr}"
    return r.stdout


def accounts(env: dict[str, str]) -> dict[str, str]:
    """A technician and a supervisor made with the CLI; returns their bearer tokens."""
    tokens = {}
    for name, role in (("tova", "technician"), ("sid", "supervisor")):
        cli(["user", "add", name, "--role", role, "--full-name", name.title() + " Faultcheck", "--password-stdin"],
            env, input=f"{name}-fault-pass-1\n")
        tokens[name] = cli(["token", "create", name, "--label", "fault tests"], env).strip()
    return tokens


class Server:
    """``slipwise serve`` (gunicorn, 2 workers x 4 threads) as a process group of its own."""

    def __init__(self, env: dict[str, str], port: int | None = None, prefix: list[str] | None = None):
        self.env = env
        self.port = port or free_port()
        self.base = f"http://127.0.0.1:{self.port}"
        self.prefix = prefix or []
        self.log = Path(env["SLIPWISE_DATA_DIR"]).parent / f"server-{self.port}.log"
        self.proc: subprocess.Popen | None = None
        self.starts = 0

    def start(self, timeout: float = 60) -> "Server":
        self.starts += 1
        with self.log.open("a") as log:
            log.write(f"\n--- start {self.starts}\n")
            log.flush()
            self.proc = subprocess.Popen([*self.prefix, SLIPWISE, "serve", "--port", str(self.port)],
                                         env={**os.environ, **self.env}, stdout=log, stderr=subprocess.STDOUT,
                                         cwd=REPO, start_new_session=True)
        deadline = time.monotonic() + timeout
        while time.monotonic() < deadline:
            if self.proc.poll() is not None:
                raise AssertionError(f"slipwise serve exited {self.proc.returncode}:\n{self.output()}")
            try:
                with urllib.request.urlopen(self.base + "/api/v1/health", timeout=2):
                    return self
            except urllib.error.HTTPError:  # it answers (503 while its database is down)
                return self
            except OSError:
                time.sleep(0.1)
        raise AssertionError("slipwise serve did not answer:\n" + self.output())

    def pids(self) -> list[int]:
        """The gunicorn master and its workers."""
        master = self.proc.pid
        children = []
        for entry in Path("/proc").iterdir():
            if entry.name.isdigit():
                try:
                    stat = (entry / "stat").read_text()
                except OSError:
                    continue
                ppid = int(stat.rsplit(")", 1)[1].split()[1])
                if ppid == master:
                    children.append(int(entry.name))
        return [master, *children]

    def kill(self) -> None:
        """SIGKILL to the master and every worker at once: no handler, no cleanup, no flush."""
        os.killpg(self.proc.pid, signal.SIGKILL)
        self.proc.wait(30)

    def stop(self) -> None:
        if self.proc is not None and self.proc.poll() is None:
            self.proc.terminate()
            try:
                self.proc.wait(30)
            except subprocess.TimeoutExpired:
                os.killpg(self.proc.pid, signal.SIGKILL)
                self.proc.wait(30)

    def output(self) -> str:
        return self.log.read_text(errors="replace") if self.log.exists() else ""


class Http:
    """Bearer-token JSON calls. Returns (status, headers, parsed JSON or text); status 0 = no answer."""

    def __init__(self, base: str, token: str | None = None, timeout: float = 30):
        self.base, self.token, self.timeout = base, token, timeout

    def call(self, method: str, path: str, body=None, headers: dict | None = None):
        data = None if body is None else json.dumps(body).encode()
        req = urllib.request.Request(self.base + path, data=data, method=method)
        if self.token:
            req.add_header("Authorization", "Bearer " + self.token)
        if data is not None:
            req.add_header("Content-Type", "application/json")
        for k, v in (headers or {}).items():
            req.add_header(k, v)
        try:
            with urllib.request.urlopen(req, timeout=self.timeout) as r:
                status, hdrs, raw = r.status, r.headers, r.read()
        except urllib.error.HTTPError as e:
            status, hdrs, raw = e.code, e.headers, e.read()
        except (OSError, http.client.HTTPException):  # refused, reset, cut short, timed out: no answer
            return 0, {}, None
        ctype = hdrs.get("Content-Type", "")
        return status, hdrs, (json.loads(raw) if "json" in ctype and raw else raw.decode("utf-8", "replace"))


def assert_unavailable(status, headers, body, *, cannot_write: bool) -> None:
    """The documented error shape for a database that is down (503), with a message that says so."""
    assert status == 503, (status, body)
    assert isinstance(body, dict) and set(body) == {"error"}, body
    err = body["error"]
    assert set(err) == {"code", "message", "field"}, err
    assert err["code"] == "unavailable" and err["field"] is None, err
    assert "nothing was stored" in err["message"], err
    assert ("read-only or full" in err["message"]) == cannot_write, err
    assert ("not reachable" in err["message"]) != cannot_write, err
    assert "Traceback" not in err["message"] and "sqlalchemy" not in err["message"].lower(), err
    assert int(headers["Retry-After"]) > 0


# --- what is stored ---------------------------------------------------------------------
def stored_readings(backend: Backend) -> list[dict]:
    eng = backend.engine()
    try:
        with eng.connect() as conn:
            rows = [dict(r) for r in conn.execute(text(
                "SELECT id, client_id, inputs, result, engine_version, content_hash FROM readings ORDER BY id"))
                .mappings()]
    finally:
        eng.dispose()
    return rows


def assert_nothing_half_written(backend: Backend) -> list[dict]:
    """Every stored reading is whole: its result, its flags and its audit entry; no orphan rows.
    Returns the stored readings."""
    eng = backend.engine()
    try:
        with eng.connect() as conn:
            if backend.kind == "sqlite":
                assert conn.exec_driver_sql("PRAGMA integrity_check").scalar_one() == "ok"
                assert conn.exec_driver_sql("PRAGMA foreign_key_check").fetchall() == []
            readings = [dict(r) for r in conn.execute(text(
                "SELECT id, client_id, inputs, result, engine_version FROM readings ORDER BY id")).mappings()]
            flags: dict[int, set] = {}
            for rid, flag in conn.execute(text("SELECT reading_id, flag FROM reading_flags")):
                flags.setdefault(rid, set()).add(flag)
            audited = [r[0] for r in conn.execute(text(
                "SELECT object_id FROM audit_log WHERE action = 'reading.submit' AND object_type = 'reading'"))]
    finally:
        eng.dispose()
    ids = {r["id"] for r in readings}
    assert len(ids) == len(readings) and len({r["client_id"] for r in readings}) == len(readings)
    assert set(flags) <= ids, f"flag rows of readings that do not exist: {sorted(set(flags) - ids)}"
    assert sorted(audited) == sorted(ids), "every stored reading has exactly one audit entry, and no other"
    for r in readings:
        result, inputs = json.loads(r["result"]), json.loads(r["inputs"])
        assert r["engine_version"] and result["engine_version"] == r["engine_version"], r["id"]
        assert isinstance(result["slip_pct"], float) and isinstance(result["load_pct"], float), r["id"]
        assert inputs["speed_rpm"] > 0, r["id"]
        assert flags.get(r["id"], set()) == set(result["flags"]), r["id"]
    return readings


# --- a PostgreSQL cluster of our own, to stop and start ------------------------------------
class PgCluster:
    """A throwaway PostgreSQL server on a free port (initdb refuses root: run as postgres when root)."""

    def __init__(self):
        bins = sorted(Path("/usr/lib/postgresql").glob("*/bin/initdb"),
                      key=lambda p: [int(x) for x in p.parts[-3].split(".") if x.isdigit()])
        if bins:
            self.bin = bins[-1].parent
        elif shutil.which("initdb"):
            self.bin = Path(shutil.which("initdb")).parent
        else:
            pytest.fail("the PostgreSQL server programs (initdb, pg_ctl) are missing: apt-get install -y postgresql",
                        pytrace=False)
        self.root = Path(tempfile.mkdtemp(prefix="slipwise-pg-"))
        self.as_user: list[str] = []
        if os.geteuid() == 0:
            shutil.chown(self.root, "postgres", "postgres")
            self.as_user = ["runuser", "-u", "postgres", "--"]
        self.port = free_port()
        self.url = f"postgresql+psycopg://postgres@127.0.0.1:{self.port}/test"
        self._run("initdb", "-D", str(self.root / "data"), "-U", "postgres", "-A", "trust", "-E", "UTF8", "--no-sync")
        self.start()
        self._run("createdb", "-h", "127.0.0.1", "-p", str(self.port), "-U", "postgres", "test")

    def _run(self, program: str, *args: str) -> None:
        r = subprocess.run([*self.as_user, str(self.bin / program), *args], capture_output=True, text=True, timeout=120)
        assert r.returncode == 0, f"{program} failed: {r.stderr}{r.stdout}"

    def start(self) -> None:
        self._run("pg_ctl", "-D", str(self.root / "data"), "-l", str(self.root / "log"), "-w", "-o",
                  f"-p {self.port} -k {self.root} -c listen_addresses=127.0.0.1 -c fsync=off", "start")

    def stop(self) -> None:
        """Fast shutdown: every session is ended and the port stops answering."""
        self._run("pg_ctl", "-D", str(self.root / "data"), "-m", "fast", "-w", "stop")

    def destroy(self) -> None:
        subprocess.run([*self.as_user, str(self.bin / "pg_ctl"), "-D", str(self.root / "data"), "-m", "immediate",
                        "-w", "stop"], capture_output=True, timeout=60)
        shutil.rmtree(self.root, ignore_errors=True)
