"""Load: a busy morning against the production server. Prints figures; not a timed test.

    .venv/bin/python tests/benchmarks/bench_load.py [--seconds 60] [--connections 32] [--json PATH]

``slipwise serve`` (gunicorn, 2 workers x 4 threads) on loopback, on SQLite in a temporary folder (or
``DATABASE_URL`` when set), driven by wrk with a Lua script for --seconds at --connections concurrent
connections. The mix, drawn at random per request:

- 55 % submissions: POST /api/v1/readings, a fresh client_id each, across four motors (technician token);
- 25 % pictures: GET /api/v1/readings/{id}/torque-speed.svg of a reading this connection's thread has
  just stored (the page shows it after each submission), so most are drawn, not cached;
- 15 % day log: GET /api/v1/readings?date=... of a finished day of 300 readings (a supervisor reviewing);
- 5 % export: GET /api/v1/export.csv?date=... of that day (supervisor token).

Figures: requests and errors (non-2xx answers and socket errors, wrk's timeout 10 s), what was
acknowledged against what the database holds afterwards (every 201's client_id must be stored; a
submission stored while wrk hung up at the end is counted as "stored, answer cut off"), p50/p99 latency
of the mix, and its throughput as a ratio of GET /api/v1/health measured on the same server in the same
run. Loopback only; the run is bounded by --seconds plus a fixed margin.
"""

from __future__ import annotations

import argparse
import json
import os
import secrets
import shutil
import subprocess
import sys
import tempfile
import time
import urllib.request
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

from bench_service import MOTOR, call, cli, fill_readings, free_port, parse_wrk  # noqa: E402

from sqlalchemy import text  # noqa: E402

from slipwise.store import Database, sqlite_url  # noqa: E402

FINISHED_DAY, TODAY = "2025-06-02", "2025-06-03"
FINISHED_DAY_READINGS = 300
MIX = {"submit": 55, "picture": 25, "day_log": 15, "export": 5}

LUA = r"""
-- slipwise load mix; each wrk thread has its own copy of this state
local counter = 0
local picture_queue = {}
local state = 0
acked = {}
ok = {submit = 0, picture = 0, day_log = 0, export = 0}
bad = 0
bad_status = ""
local threads = {}

function setup(thread)
  thread:set("tid", #threads)
  table.insert(threads, thread)
end

function init(args)
  state = 1000 + 7919 * tid
end

-- Park and Miller's minimal standard generator (exact in doubles): 1..100, its own stream per thread
local function percent()
  state = (state * 16807) % 2147483647
  return 1 + state % 100
end

local function between(low, high)
  state = (state * 16807) % 2147483647
  return low + state % (high - low + 1)
end

local function submission()
  counter = counter + 1
  local cid = string.format("%s-%04x-4000-8000-%012x", "PREFIX", tid, counter)
  local amps = 17 + (counter % 9)
  local body = string.format('{"client_id":"%s","motor_id":%d,"frequency_hz":50,"speed_rpm":%d,' ..
    '"current_l1_a":%.1f,"current_l2_a":%.1f,"current_l3_a":%.1f,"voltage_l12_v":401,"voltage_l23_v":399,' ..
    '"voltage_l31_v":404,"taken_at":"TODAYT%02d:%02d:%02d+02:00"}', cid, motors_list[1 + counter % #motors_list],
    1466 + (counter % 14), amps, amps + 0.4, amps - 0.3, 8 + tid % 10, math.floor(counter / 60) % 60, counter % 60)
  return wrk.format("POST", "/api/v1/readings", {["Content-Type"] = "application/json",
    ["Authorization"] = "Bearer TECH_TOKEN"}, body)
end

function request()
  local r = percent()
  if r <= SUBMIT_PCT then
    return submission()
  elseif r <= SUBMIT_PCT + PICTURE_PCT then
    local id = table.remove(picture_queue, 1) or FIRST_ID + between(0, FINISHED_N - 1)
    return wrk.format("GET", "/api/v1/readings/" .. id .. "/torque-speed.svg", {["Authorization"] = "Bearer TECH_TOKEN"})
  elseif r <= SUBMIT_PCT + PICTURE_PCT + DAY_PCT then
    return wrk.format("GET", "/api/v1/readings?date=FINISHED_DAY", {["Authorization"] = "Bearer TECH_TOKEN"})
  else
    return wrk.format("GET", "/api/v1/export.csv?date=FINISHED_DAY", {["Authorization"] = "Bearer SUP_TOKEN"})
  end
end

function response(status, headers, body)
  local ctype = headers["Content-Type"] or ""
  if status == 201 then
    ok.submit = ok.submit + 1
    local cid = body:match('"client_id": ?"([%x%-]+)"')
    table.insert(acked, cid or "?")
    local id = body:match('^{"id": ?(%d+)')
    if id and #picture_queue < 64 then table.insert(picture_queue, id) end
  elseif status == 200 and ctype:find("image/svg", 1, true) then
    ok.picture = ok.picture + 1
  elseif status == 200 and ctype:find("text/csv", 1, true) then
    ok.export = ok.export + 1
  elseif status == 200 and body:sub(1, 9) == '{"count":' then
    ok.day_log = ok.day_log + 1
  else
    bad = bad + 1
    if #bad_status < 400 then bad_status = bad_status .. status .. " " end
  end
end

function done(summary, latency, requests)
  local f = io.open("OUT_PATH", "w")
  local totals = {submit = 0, picture = 0, day_log = 0, export = 0}
  local bad_total, statuses = 0, ""
  local ids = io.open("OUT_PATH.ids", "w")
  for _, t in ipairs(threads) do
    local tok = t:get("ok")
    for k, v in pairs(tok) do totals[k] = totals[k] + v end
    bad_total = bad_total + t:get("bad")
    statuses = statuses .. t:get("bad_status")
    for _, cid in ipairs(t:get("acked")) do ids:write(cid, "\n") end
  end
  ids:close()
  local e = summary.errors
  f:write(string.format('{"requests":%d,"duration_us":%d,"socket_errors":%d,"status_errors":%d,' ..
    '"bad_answers":%d,"bad_statuses":"%s","p50_us":%d,"p90_us":%d,"p99_us":%d,"max_us":%d,' ..
    '"ok_submit":%d,"ok_picture":%d,"ok_day_log":%d,"ok_export":%d}',
    summary.requests, summary.duration, e.connect + e.read + e.write + e.timeout, e.status, bad_total, statuses,
    latency:percentile(50), latency:percentile(90), latency:percentile(99), latency.max,
    totals.submit, totals.picture, totals.day_log, totals.export))
  f:close()
end
"""

TRIVIAL_LUA = r"""
function request()
  return wrk.format("GET", "/api/v1/health")
end
"""


def wrk(base: str, script: str, seconds: int, connections: int, tmp: Path, threads: int = 2) -> str:
    path = tmp / f"wrk-{secrets.token_hex(3)}.lua"
    path.write_text(script)
    r = subprocess.run(["wrk", f"-t{threads}", f"-c{connections}", f"-d{seconds}s", "--timeout", "10s", "--latency",
                        "-s", str(path), base], capture_output=True, text=True, timeout=seconds + 120)
    if r.returncode:
        raise SystemExit(f"wrk failed: {r.stderr}")
    return r.stdout


def run(seconds: int, connections: int, trivial_seconds: int) -> dict:
    if not shutil.which("wrk"):
        raise SystemExit("wrk is not installed: apt-get install -y wrk")
    tmp = Path(tempfile.mkdtemp(prefix="slipwise-load-"))
    env = {"SLIPWISE_DATA_DIR": str(tmp / "data")}
    url, schema, admin = os.environ.get("DATABASE_URL"), None, None
    if url:
        schema = "sw_load_" + secrets.token_hex(6)
        admin = Database(url)
        with admin.engine.begin() as conn:
            conn.exec_driver_sql(f"CREATE SCHEMA {schema}")
        env.update(DATABASE_URL=url, SLIPWISE_DB_SCHEMA=schema)
    else:
        url = sqlite_url(tmp / "data" / "slipwise.sqlite3")
        env.update(DATABASE_URL=url, SLIPWISE_DB_SCHEMA="")
    cli(["user", "add", "sid", "--role", "supervisor", "--password-stdin"], env, input="load-password-1\n")
    cli(["user", "add", "tova", "--role", "technician", "--password-stdin"], env, input="load-password-2\n")
    sup_token = cli(["token", "create", "sid"], env).strip()
    tech_token = cli(["token", "create", "tova"], env).strip()
    port = free_port()
    base = f"http://127.0.0.1:{port}"
    log = open(tmp / "slipwise.log", "w")
    server = subprocess.Popen([str(Path(sys.executable).with_name("slipwise")), "serve", "--port", str(port)],
                              env={**os.environ, **env}, stdout=log, stderr=subprocess.STDOUT, start_new_session=True)
    db = None
    try:
        for _ in range(300):
            try:
                call(base, "GET", "/api/v1/health", sup_token)
                break
            except OSError:
                time.sleep(0.1)
        motors = [json.loads(call(base, "POST", "/api/v1/motors", sup_token,
                                  {**MOTOR, "tag": f"L-{k}", "rated_power_kw": kw, "rated_current_a": amps})[1])["id"]
                  for k, (kw, amps) in enumerate(((15, 28.5), (11, 21.5), (18.5, 35.0), (22, 41.0)))]
        db = Database(url, schema=schema)
        fill_readings(db, motors[0], FINISHED_DAY_READINGS, FINISHED_DAY)
        with db.read() as conn:
            first_id = conn.exec_driver_sql("SELECT MIN(id) FROM readings").scalar_one()
        # warm both workers: matplotlib and the engine load on first use
        for _ in range(6):
            call(base, "GET", f"/api/v1/readings/{first_id}/torque-speed.svg", tech_token)
            call(base, "GET", f"/api/v1/readings?date={FINISHED_DAY}", tech_token)

        wrk(base, TRIVIAL_LUA, 3, connections, tmp)  # warm-up
        trivial = parse_wrk(wrk(base, TRIVIAL_LUA, trivial_seconds, connections, tmp))

        out = tmp / "mix.json"
        script = LUA
        for key, value in {"PREFIX": secrets.token_hex(4), "TECH_TOKEN": tech_token, "SUP_TOKEN": sup_token,
                           "TODAY": TODAY,
                           "FINISHED_DAY": FINISHED_DAY, "FIRST_ID": str(first_id),
                           "FINISHED_N": str(FINISHED_DAY_READINGS), "SUBMIT_PCT": str(MIX["submit"]),
                           "PICTURE_PCT": str(MIX["picture"]), "DAY_PCT": str(MIX["day_log"]),
                           "OUT_PATH": str(out)}.items():
            script = script.replace(key, value)
        script = "motors_list = {" + ",".join(map(str, motors)) + "}\n" + script
        t0 = time.monotonic()
        raw = wrk(base, script, seconds, connections, tmp)
        wall = time.monotonic() - t0
        mix = json.loads(out.read_text())
        acked = [line for line in Path(str(out) + ".ids").read_text().splitlines() if line]

        with db.read() as conn:
            stored = {r[0] for r in conn.execute(text("SELECT client_id FROM readings WHERE taken_date = :d"),
                                                 {"d": TODAY})}
            half = conn.execute(text(
                "SELECT COUNT(*) FROM readings r WHERE r.taken_date = :d AND NOT EXISTS (SELECT 1 FROM audit_log a "
                "WHERE a.object_type = 'reading' AND a.object_id = r.id)"), {"d": TODAY}).scalar_one()
        missing = sorted(set(acked) - stored)
        duration_s = mix["duration_us"] / 1e6
        mix_rps = mix["requests"] / duration_s
        figures = {
            "database": db.dialect, "connections": connections, "seconds": seconds, "wall_s": round(wall, 1),
            "mix_pct": MIX, "finished_day_readings": FINISHED_DAY_READINGS,
            "requests": mix["requests"], "rps": round(mix_rps, 1),
            "errors": mix["socket_errors"] + mix["bad_answers"], "socket_errors": mix["socket_errors"],
            "bad_answers": mix["bad_answers"], "bad_statuses": mix["bad_statuses"].split(),
            "ok": {k: mix["ok_" + k] for k in MIX},
            "acknowledged": len(acked), "stored": len(stored), "acknowledged_missing": len(missing),
            "stored_answer_cut_off": len(stored - set(acked)), "stored_without_audit": half,
            "p50_ms": mix["p50_us"] / 1000, "p90_ms": mix["p90_us"] / 1000, "p99_ms": mix["p99_us"] / 1000,
            "max_ms": mix["max_us"] / 1000,
            "trivial_rps": trivial["rps"], "trivial_p99_ms": trivial["p99_ms"], "trivial_errors": trivial["errors"],
            "ratio": round(mix_rps / trivial["rps"], 3),
            "submissions_per_s": round(len(acked) / duration_s, 1),
        }
        if figures["errors"] == 0 and "Non-2xx" in raw:
            figures["errors"] = parse_wrk(raw)["errors"]
        return figures
    finally:
        server.terminate()
        try:
            server.wait(30)
        except subprocess.TimeoutExpired:
            server.kill()
        log.close()
        if db is not None:
            db.dispose()
        if admin is not None:
            with admin.engine.begin() as conn:
                conn.exec_driver_sql(f"DROP SCHEMA {schema} CASCADE")
            admin.dispose()
        shutil.rmtree(tmp, ignore_errors=True)


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--seconds", type=int, default=60)
    parser.add_argument("--connections", type=int, default=32)
    parser.add_argument("--trivial-seconds", type=int, default=15)
    parser.add_argument("--json", metavar="PATH", help="also write the figures as JSON to PATH")
    args = parser.parse_args()
    f = run(args.seconds, args.connections, args.trivial_seconds)
    print(f"database: {f['database']}; server: slipwise serve (gunicorn gthread, 2 workers x 4 threads); "
          f"{f['connections']} connections for {f['seconds']} s (wrk)")
    print(f"mix {f['mix_pct']}: {f['requests']} requests, {f['rps']:.0f} req/s; ok {f['ok']}")
    print(f"errors: {f['errors']} ({f['socket_errors']} socket, {f['bad_answers']} bad answers {f['bad_statuses']})")
    print(f"acknowledged {f['acknowledged']}, stored {f['stored']}: {f['acknowledged_missing']} acknowledged but "
          f"missing, {f['stored_answer_cut_off']} stored with the answer cut off at the end, "
          f"{f['stored_without_audit']} without an audit entry")
    print(f"latency of the mix: p50 {f['p50_ms']:.1f} ms, p90 {f['p90_ms']:.1f} ms, p99 {f['p99_ms']:.1f} ms, "
          f"max {f['max_ms']:.0f} ms")
    print(f"GET /api/v1/health alone: {f['trivial_rps']:.0f} req/s (p99 {f['trivial_p99_ms']:.1f} ms); "
          f"mix throughput ratio {f['ratio']:.2f}")
    if args.json:
        Path(args.json).write_text(json.dumps(f, indent=2))
    return 0


if __name__ == "__main__":
    sys.exit(main())
