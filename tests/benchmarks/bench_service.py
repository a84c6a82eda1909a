"""Service benchmarks: they print figures, they are not timed tests.

    .venv/bin/python tests/benchmarks/bench_service.py [--seconds 10] [--export-rows 100000] [--only submissions]

Uses ``DATABASE_URL`` when set (PostgreSQL), an SQLite file in a temporary
folder otherwise. Figures:

1. ``slipwise serve`` (gunicorn, 2 workers x 4 threads) with 16 concurrent
   connections on loopback (wrk): stored and interpreted readings per second
   (POST /api/v1/readings, bearer token, a new client_id per request) as a
   ratio of a trivial JSON endpoint (GET /api/v1/health) in the same run.
   Goal: ratio >= 0.4, zero errors, p99 <= 100 ms.
2. The day's log of 10,000 readings as JSON (GET /api/v1/readings?date=...).
   Goal: <= 300 ms.
   And the lean listing the supervisor's page draws from (GET /api/v1/readings/listing, every page
   followed by next): bytes per reading (goal <= 800) and its time as a ratio of the listing's own SQL
   on the driver's cursor plus json.dumps of the same rows, in this process (goal <= 5).
3. The CSV export of 100,000 readings against pandas ``to_csv`` of the same
   frame. Goal: <= 2x.
"""

from __future__ import annotations

import argparse
import json
import os
import re
import secrets
import shutil
import socket
import statistics
import subprocess
import sys
import tempfile
import time
import urllib.request
import uuid
from pathlib import Path

REPO = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(REPO / "server"))

from slipwise.contract import NAMEPLATE_FIELDS  # noqa: E402
from slipwise.engine import interpret_records  # noqa: E402
from slipwise.store import Database, sqlite_url  # noqa: E402
from slipwise.services.records import engine_record, to_json  # noqa: E402
from slipwise.store.schema import motor_revisions, reading_flags, readings  # noqa: E402
from slipwise.store.types import utcnow  # noqa: E402

SLIPWISE = str(Path(sys.executable).with_name("slipwise"))
MOTOR = {"site": "Bench Works", "tag": "B-1", "rated_power_kw": 15, "rated_voltage_v": 400, "rated_current_a": 28.5,
         "rated_frequency_hz": 50, "rated_speed_rpm": 1460, "driven_load": "variable_torque"}

WRK_POST = r"""
local counter = 0
local threads = {}
local next_id = 0
function setup(thread)
  thread:set("tid", next_id)
  next_id = next_id + 1
end
function request()
  counter = counter + 1
  local cid = string.format("%s-%04x-4000-8000-%012x", "PREFIX", tid, counter)
  local body = string.format('{"client_id":"%s","motor_id":MOTOR_ID,"frequency_hz":50,"speed_rpm":%d,' ..
    '"current_l1_a":20.1,"current_l2_a":20.4,"current_l3_a":19.9,"voltage_l12_v":401,"voltage_l23_v":399,' ..
    '"voltage_l31_v":404,"taken_at":"2025-04-02T10:00:00+02:00"}', cid, 1468 + (counter % 12))
  return wrk.format("POST", "/api/v1/readings", {["Content-Type"] = "application/json",
    ["Authorization"] = "Bearer TOKEN"}, body)
end
"""
WRK_GET = r"""
function request()
  return wrk.format("GET", "/api/v1/health")
end
"""


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def cli(args, env, input=None):
    r = subprocess.run([SLIPWISE, *args], env={**os.environ, **env}, input=input, capture_output=True, text=True)
    if r.returncode:
        raise SystemExit(f"slipwise {' '.join(args)} failed: {r.stderr}")
    return r.stdout


def call(base, method, path, token, body=None):
    req = urllib.request.Request(base + path, method=method, data=json.dumps(body).encode() if body else None,
                                 headers={"Authorization": "Bearer " + token, "Content-Type": "application/json"})
    with urllib.request.urlopen(req, timeout=300) as r:
        return r.status, r.read()


def parse_wrk(out: str) -> dict:
    rps = float(re.search(r"Requests/sec:\s+([\d.]+)", out).group(1))
    non2xx = re.search(r"Non-2xx or 3xx responses:\s+(\d+)", out)
    sock = re.search(r"Socket errors: connect (\d+), read (\d+), write (\d+), timeout (\d+)", out)
    p99 = re.search(r"\s99%\s+([\d.]+)(us|ms|s)\b", out)
    scale = {"us": 0.001, "ms": 1.0, "s": 1000.0}
    return {"rps": rps, "errors": (int(non2xx.group(1)) if non2xx else 0) + (sum(map(int, sock.groups())) if sock else 0),
            "p99_ms": float(p99.group(1)) * scale[p99.group(2)] if p99 else float("nan")}


def wrk(base, script_text, seconds, tmp) -> dict:
    script = Path(tmp) / f"wrk-{secrets.token_hex(3)}.lua"
    script.write_text(script_text)
    out = subprocess.run(["wrk", "-t2", "-c16", f"-d{seconds}s", "--latency", "-s", str(script), base],
                         capture_output=True, text=True, timeout=seconds + 60).stdout
    return parse_wrk(out)


def fill_readings(db: Database, motor_id: int, n: int, date: str, spread_days: int = 1) -> None:
    """Insert n interpreted readings quickly: one engine batch, one transaction."""
    with db.read() as conn:
        rev = conn.execute(motor_revisions.select().where(motor_revisions.c.motor_id == motor_id)).mappings().first()
    inputs, records = [], []
    for i in range(n):
        day = int(date[-2:]) + (i % spread_days)
        taken = f"{date[:-2]}{day:02d}T{6 + (i // 600) % 12:02d}:{(i // 10) % 60:02d}:{i % 60:02d}+02:00"
        x = {"frequency_hz": 50.0, "speed_rpm": 1465.0 + (i % 30), "current_l1_a": 18.0 + (i % 7),
             "current_l2_a": 18.3 + (i % 7), "current_l3_a": 17.9 + (i % 7), "voltage_l12_v": 398.0 + (i % 9),
             "voltage_l23_v": 401.0, "voltage_l31_v": 403.0, "power_kw": None, "power_factor": None,
             "tachometer_resolution_rpm": None, "current_accuracy_pct": None, "voltage_accuracy_pct": None,
             "power_accuracy_pct": None, "minutes_running": 60.0}
        inputs.append((x, taken))
        records.append(engine_record(rev, "B-1", x, taken))
    results = interpret_records(records)
    now = utcnow()
    from datetime import datetime, timezone
    with db.write() as conn:
        tech = conn.exec_driver_sql("SELECT id FROM users ORDER BY id").scalar()
        start = conn.exec_driver_sql("SELECT COALESCE(MAX(id), 0) FROM readings").scalar()
        batch, flags = [], []
        for i, ((x, taken), res) in enumerate(zip(inputs, results)):
            rid = start + i + 1
            batch.append({"id": rid, "client_id": str(uuid.uuid4()), "motor_id": motor_id, "motor_revision_id": rev["id"],
                          "technician_id": tech, "inputs": to_json({**x, "taken_at": taken}), "result": to_json(res),
                          "engine_version": res["engine_version"], "content_hash": "bench", "taken_at": taken,
                          "taken_date": taken[:10],
                          "taken_at_utc": datetime.fromisoformat(taken).astimezone(timezone.utc), "received_at": now})
            flags += [{"reading_id": rid, "flag": f} for f in sorted(set(res["flags"]))]
            if len(batch) == 5000:
                conn.execute(readings.insert(), batch)
                batch = []
        if batch:
            conn.execute(readings.insert(), batch)
        if flags:
            conn.execute(reading_flags.insert(), flags)
        if db.dialect == "postgresql":
            conn.exec_driver_sql("SELECT setval(pg_get_serial_sequence('readings', 'id'), (SELECT MAX(id) FROM readings))")


def median_time(fn, repeat: int) -> tuple[float, object]:
    times, value = [], None
    for _ in range(repeat):
        t = time.perf_counter()
        value = fn()
        times.append(time.perf_counter() - t)
    return statistics.median(times), value


def bare_listing(db: Database, date: str) -> tuple[float, int]:
    """The listing's own SQL statement run on the driver's cursor, its rows encoded with json.dumps: the
    least any listing of these rows can cost in this process. Returns (seconds, rows)."""
    from slipwise.store.readings import _filtered, _listing_select
    q = _filtered(_listing_select(), date=date)
    compiled = q.compile(dialect=db.engine.dialect)
    raw = db.engine.raw_connection()
    try:
        params = compiled.params if db.dialect == "postgresql" else tuple(compiled.params[k] for k in compiled.positiontup)

        def run():
            cur = raw.cursor()
            cur.execute(str(compiled), params)
            rows = cur.fetchall()
            cur.close()
            raw.rollback()
            return json.dumps(rows), len(rows)
        elapsed, (_, n) = median_time(run, 5)
    finally:
        raw.close()
    return elapsed, n


def listing_figures(base: str, token: str, db: Database, date: str, count: int) -> dict:
    """Issue 13, goal 2: the day's listing (every page, following next) against a bare query + JSON encoding."""
    def walk():
        url, size, rows, pages = f"/api/v1/readings/listing?date={date}", 0, 0, 0
        while url:
            _, body = call(base, "GET", url, token)  # next is relative to the server's root
            page = json.loads(body)
            size, rows, pages, url = size + len(body), rows + page["count"], pages + 1, page["next"]
        return size, rows, pages
    elapsed, (size, rows, pages) = median_time(walk, 5)
    bare_s, bare_rows = bare_listing(db, date)
    assert rows == bare_rows == count, (rows, bare_rows, count)
    ratio = elapsed / bare_s
    print(f"2b. day's listing: {rows} readings in {pages} page(s), {size / rows:.0f} bytes per reading "
          f"({size / 1e6:.2f} MB) in {elapsed * 1000:.0f} ms over HTTP (median of 5); the listing's query on the "
          f"driver's cursor + json.dumps of the same rows {bare_s * 1000:.0f} ms; ratio {ratio:.2f} "
          "(goals: <= 800 bytes per reading, ratio <= 5)")
    return {"listing_readings": rows, "listing_pages": pages, "listing_bytes_per_reading": size / rows,
            "listing_ms": elapsed * 1000, "listing_bare_ms": bare_s * 1000, "listing_ratio": ratio}


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--seconds", type=int, default=10)
    parser.add_argument("--day-rows", type=int, default=10_000)
    parser.add_argument("--export-rows", type=int, default=100_000)
    parser.add_argument("--json", metavar="PATH", help="also write the figures as JSON to PATH")
    parser.add_argument("--only", choices=("submissions",), help="run figure 1 alone (submissions against the "
                                                                 "trivial endpoint), without the day's log and export")
    args = parser.parse_args()
    figures: dict = {"connections": 16, "seconds": args.seconds}
    tmp = tempfile.mkdtemp(prefix="slipwise-bench-")
    env = {"SLIPWISE_DATA_DIR": str(Path(tmp) / "data")}
    schema = None
    url = os.environ.get("DATABASE_URL")
    if url:
        schema = "sw_bench_" + secrets.token_hex(6)
        admin = Database(url)
        with admin.engine.begin() as conn:
            conn.exec_driver_sql(f"CREATE SCHEMA {schema}")
        env.update(DATABASE_URL=url, SLIPWISE_DB_SCHEMA=schema)
    else:
        url = sqlite_url(Path(tmp) / "data" / "slipwise.sqlite3")
        env["DATABASE_URL"] = url
    cli(["user", "add", "bench", "--role", "supervisor", "--password-stdin"], env, input="bench-password\n")
    token = cli(["token", "create", "bench"], env).strip()
    port = free_port()
    base = f"http://127.0.0.1:{port}"
    log = open(Path(tmp) / "slipwise.log", "w")
    server = subprocess.Popen([SLIPWISE, "serve", "--port", str(port)], env={**os.environ, **env}, stdout=log,
                              stderr=subprocess.STDOUT, start_new_session=True)
    try:
        for _ in range(200):
            try:
                call(base, "GET", "/api/v1/health", token)
                break
            except OSError:
                time.sleep(0.1)
        motor = json.loads(call(base, "POST", "/api/v1/motors", token, MOTOR)[1])
        print(f"database: {Database(url).dialect}; server: slipwise serve (gunicorn gthread, 2 workers x 4 threads)")

        if shutil.which("wrk"):
            wrk(base, WRK_GET.replace("TOKEN", token), 2, tmp)  # warm up
            trivial = wrk(base, WRK_GET.replace("TOKEN", token), args.seconds, tmp)
            post = WRK_POST.replace("TOKEN", token).replace("MOTOR_ID", str(motor["id"])).replace(
                "PREFIX", secrets.token_hex(4))
            submit = wrk(base, post, args.seconds, tmp)
            ratio = submit["rps"] / trivial["rps"]
            print(f"1. 16 connections, {args.seconds} s each (wrk):")
            print(f"   GET /api/v1/health     {trivial['rps']:8.0f} req/s  p99 {trivial['p99_ms']:6.1f} ms  "
                  f"errors {trivial['errors']}")
            print(f"   POST /api/v1/readings  {submit['rps']:8.0f} req/s  p99 {submit['p99_ms']:6.1f} ms  "
                  f"errors {submit['errors']}")
            print(f"   ratio {ratio:.2f} (goal >= 0.4, zero errors, p99 <= 100 ms)")
            figures.update(trivial_rps=trivial["rps"], trivial_p99_ms=trivial["p99_ms"], trivial_errors=trivial["errors"],
                           submit_rps=submit["rps"], submit_p99_ms=submit["p99_ms"], submit_errors=submit["errors"],
                           submit_ratio=ratio)
        else:
            print("1. skipped: wrk is not installed (apt-get install -y wrk)")

        if args.only != "submissions":
            db = Database(url, schema=schema)
            fill_readings(db, motor["id"], args.day_rows, "2025-04-01")
            elapsed, (status, body) = median_time(lambda: call(base, "GET", "/api/v1/readings?date=2025-04-01", token), 5)
            count = json.loads(body)["count"]
            print(f"2. day's log: {count} readings, {len(body) / 1e6:.1f} MB of JSON in {elapsed * 1000:.0f} ms "
                  "(median of 5; goal <= 300 ms)")
            figures.update(day_log_readings=count, day_log_mb=len(body) / 1e6, day_log_ms=elapsed * 1000)

            figures.update(listing_figures(base, token, db, "2025-04-01", count))

            more = args.export_rows - count
            if more > 0:
                fill_readings(db, motor["id"], more, "2025-05-01", spread_days=20)
            elapsed_export, (status, csv_bytes) = median_time(lambda: call(base, "GET", "/api/v1/export.csv", token), 3)
            import io

            import pandas as pd
            frame = pd.read_csv(io.BytesIO(csv_bytes), dtype={"client_id": str}, keep_default_na=False, na_values=[""])
            elapsed_pandas, _ = median_time(lambda: frame.to_csv(index=False), 3)
            print(f"3. export: {len(frame)} readings x {frame.shape[1]} columns, {len(csv_bytes) / 1e6:.0f} MB in "
                  f"{elapsed_export:.2f} s over HTTP; pandas to_csv of the same frame {elapsed_pandas:.2f} s; "
                  f"ratio {elapsed_export / elapsed_pandas:.2f} (goal <= 2)")
            figures.update(export_readings=len(frame), export_columns=frame.shape[1], export_mb=len(csv_bytes) / 1e6,
                           export_s=elapsed_export, pandas_to_csv_s=elapsed_pandas, export_ratio=elapsed_export / elapsed_pandas)
            db.dispose()
    finally:
        server.terminate()
        server.wait(30)
        log.close()
        if schema:
            with admin.engine.begin() as conn:
                conn.exec_driver_sql(f"DROP SCHEMA {schema} CASCADE")
            admin.dispose()
        shutil.rmtree(tmp, ignore_errors=True)
    figures["database"] = "postgresql" if schema else "sqlite"
    if args.json:
        Path(args.json).write_text(json.dumps(figures, indent=2))
    return 0


if __name__ == "__main__":
    sys.exit(main())
