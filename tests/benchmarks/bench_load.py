"""Load: a busy morning against the production server. Prints figures; not a timed test.

    .venv/bin/python tests/benchmarks/bench_load.py [--seconds 60] [--connections 32] [--mixes api,page]
                                                    [--alone-seconds 5] [--json PATH]

``slipwise serve`` (gunicorn, 2 workers x 4 threads) on loopback, on SQLite in a temporary folder (or
``DATABASE_URL`` when set), driven by wrk with a Lua script for --seconds at --connections concurrent
connections. Two mixes, each drawn at random per request, on the same server one after the other:

``api`` — the issue's mix, heavy on the API's printable picture and the full day log (API users, scripts):

- 55 % submissions: POST /api/v1/readings, a fresh client_id each, across four motors (technician token);
- 25 % pictures: GET /api/v1/readings/{id}/torque-speed.svg of a reading this connection's thread has
  just stored, else the next reading of the finished day not asked for yet, so nearly all are drawn, not
  cached;
- 15 % day log: GET /api/v1/readings?date=... of a finished day of 300 readings, every full record;
- 5 % export: GET /api/v1/export.csv?date=... of that day (supervisor token).

``page`` — what today's field page and supervisor's page ask for: the page draws the picture itself from
the curve's numbers and the day log is the compact listing, a reading's whole record fetched when opened:

- 55 % submissions, as above;
- 25 % curve: GET /api/v1/readings/{id}/torque-speed.json of a reading just stored (as the pictures above);
- 10 % listing: GET /api/v1/readings/listing?date=... of the finished day (one page holds its 300);
- 5 % one reading: GET /api/v1/readings/{id} of a reading of that day (supervisor token), a different one
  each time;
- 5 % export, as above.

Figures per mix: requests and errors (non-2xx answers and socket errors, wrk's timeout 10 s), what was
acknowledged against what the database holds afterwards (every 201's client_id must be stored; a
submission stored while wrk hung up at the end is counted as "stored, answer cut off"), p50/p90/p99/max
latency of the mix, and its throughput as a ratio of GET /api/v1/health measured on the same server in the
same run. Then each request type alone (--alone-seconds each, 0 to skip): its throughput and p50/p99 at the
same connections, and the median of 15 single requests one after the other (its cost without queueing);
pictures and curves alone are of readings stored by the submissions-alone run, each asked for once.
The JSON's top-level figures are the ``api`` mix's; ``page_mix`` and ``alone`` hold the others.
Loopback only; each run is bounded by its seconds plus a fixed margin.
"""

from __future__ import annotations

import argparse
import json
import os
import secrets
import shutil
import statistics
import subprocess
import sys
import tempfile
import time
import urllib.request
import uuid
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

from bench_service import MOTOR, call, cli, fill_readings, free_port, parse_wrk  # noqa: E402

from sqlalchemy import text  # noqa: E402

from slipwise.store import Database, sqlite_url  # noqa: E402

FINISHED_DAY, TODAY = "2025-06-02", "2025-06-03"
FINISHED_DAY_READINGS = 300
KINDS = ("submit", "picture", "curve", "day_log", "listing", "detail", "export")
MIXES = {"api": {"submit": 55, "picture": 25, "day_log": 15, "export": 5},
         "page": {"submit": 55, "curve": 25, "listing": 10, "detail": 5, "export": 5}}
MIX = MIXES["api"]
LABELS = {"api": "API mix (SVG pictures, full day log)",
          "page": "page mix (curve numbers, listing, one reading opened)"}

LUA = r"""
-- slipwise load mix; each wrk thread has its own copy of this state
local counter = 0
local picture_queue = {}
local state = 0
acked = {}
ok = {submit = 0, picture = 0, curve = 0, day_log = 0, listing = 0, detail = 0, export = 0}
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

-- a reading to picture: one this thread has just stored, else the next of FIRST_ID .. FIRST_ID + FINISHED_N - 1
local walked = 0
local function picture_id()
  local id = table.remove(picture_queue, 1)
  if id then return id end
  walked = walked + 1
  return FIRST_ID + (tid + NTHREADS * walked) % FINISHED_N
end

local detail_walk = 0
function request()
  local r = percent()
  if r <= PCT_submit then
    return submission()
  end
  r = r - PCT_submit
  if r <= PCT_picture then
    return wrk.format("GET", "/api/v1/readings/" .. picture_id() .. "/torque-speed.svg", {["Authorization"] = "Bearer TECH_TOKEN"})
  end
  r = r - PCT_picture
  if r <= PCT_curve then
    return wrk.format("GET", "/api/v1/readings/" .. picture_id() .. "/torque-speed.json", {["Authorization"] = "Bearer TECH_TOKEN"})
  end
  r = r - PCT_curve
  if r <= PCT_day_log then
    return wrk.format("GET", "/api/v1/readings?date=FINISHED_DAY", {["Authorization"] = "Bearer TECH_TOKEN"})
  end
  r = r - PCT_day_log
  if r <= PCT_listing then
    return wrk.format("GET", "/api/v1/readings/listing?date=FINISHED_DAY", {["Authorization"] = "Bearer SUP_TOKEN"})
  end
  r = r - PCT_listing
  if r <= PCT_detail then
    detail_walk = detail_walk + 1
    return wrk.format("GET", "/api/v1/readings/" .. (LOG_START_ID + (tid + NTHREADS * detail_walk) % LOG_COUNT),
                      {["Authorization"] = "Bearer SUP_TOKEN"})
  end
  return wrk.format("GET", "/api/v1/export.csv?date=FINISHED_DAY", {["Authorization"] = "Bearer SUP_TOKEN"})
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
  elseif status == 200 and body:sub(1, 13) == '{"speed_rpm":' then
    ok.curve = ok.curve + 1
  elseif status == 200 and body:sub(1, 9) == '{"count":' and body:find(',"next":', 1, true) then
    ok.listing = ok.listing + 1
  elseif status == 200 and body:sub(1, 9) == '{"count":' then
    ok.day_log = ok.day_log + 1
  elseif status == 200 and body:sub(1, 6) == '{"id":' then
    ok.detail = ok.detail + 1
  else
    bad = bad + 1
    if #bad_status < 400 then bad_status = bad_status .. status .. " " end
  end
end

function done(summary, latency, requests)
  local f = io.open("OUT_PATH", "w")
  local totals = {submit = 0, picture = 0, curve = 0, day_log = 0, listing = 0, detail = 0, export = 0}
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
    '"ok_submit":%d,"ok_picture":%d,"ok_curve":%d,"ok_day_log":%d,"ok_listing":%d,"ok_detail":%d,"ok_export":%d}',
    summary.requests, summary.duration, e.connect + e.read + e.write + e.timeout, e.status, bad_total, statuses,
    latency:percentile(50), latency:percentile(90), latency:percentile(99), latency.max,
    totals.submit, totals.picture, totals.curve, totals.day_log, totals.listing, totals.detail, totals.export))
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


def wrk_script(mix: dict, tokens: dict, ids: dict, motors: list[int], out: Path) -> tuple[str, str]:
    """The Lua mix with its placeholders filled (longest name first: none is a prefix of another)."""
    values = {"PREFIX": secrets.token_hex(4), "TECH_TOKEN": tokens["tech"], "SUP_TOKEN": tokens["sup"],
              "TODAY": TODAY, "FINISHED_DAY": FINISHED_DAY, "FIRST_ID": str(ids["first"]),
              "FINISHED_N": str(ids["count"]), "LOG_START_ID": str(ids["day_first"]),
              "LOG_COUNT": str(FINISHED_DAY_READINGS), "NTHREADS": "2", "OUT_PATH": str(out),
              **{f"PCT_{k}": str(mix.get(k, 0)) for k in KINDS}}
    script = LUA
    for key in sorted(values, key=len, reverse=True):
        script = script.replace(key, values[key])
    return "motors_list = {" + ",".join(map(str, motors)) + "}\n" + script, values["PREFIX"]


def run_mix(name: str, mix: dict, base: str, db: Database, tokens: dict, ids: dict, motors: list[int],
            seconds: int, connections: int, tmp: Path) -> dict:
    """One wrk run of ``mix``; its figures, with the submissions it made checked against the database."""
    out = tmp / f"mix-{name}-{secrets.token_hex(3)}.json"
    script, prefix = wrk_script(mix, tokens, ids, motors, out)
    t0 = time.monotonic()
    raw = wrk(base, script, seconds, connections, tmp)
    wall = time.monotonic() - t0
    got = json.loads(out.read_text())
    acked = [line for line in Path(str(out) + ".ids").read_text().splitlines() if line]
    with db.read() as conn:
        like = {"p": prefix + "-%"}
        rows = conn.execute(text("SELECT id, client_id FROM readings WHERE client_id LIKE :p ORDER BY id"), like).all()
        half = conn.execute(text(
            "SELECT COUNT(*) FROM readings r WHERE r.client_id LIKE :p AND NOT EXISTS (SELECT 1 FROM audit_log a "
            "WHERE a.object_type = 'reading' AND a.object_id = r.id)"), like).scalar_one()
    stored = {r[1] for r in rows}
    missing = sorted(set(acked) - stored)
    duration_s = got["duration_us"] / 1e6
    figures = {
        "name": name, "label": LABELS.get(name, name), "connections": connections, "seconds": seconds,
        "wall_s": round(wall, 1), "mix_pct": mix, "requests": got["requests"],
        "rps": round(got["requests"] / duration_s, 1),
        "errors": got["socket_errors"] + got["bad_answers"], "socket_errors": got["socket_errors"],
        "bad_answers": got["bad_answers"], "bad_statuses": got["bad_statuses"].split(),
        "ok": {k: got["ok_" + k] for k in mix},
        "acknowledged": len(acked), "stored": len(stored), "acknowledged_missing": len(missing),
        "stored_answer_cut_off": len(stored - set(acked)), "stored_without_audit": half,
        "p50_ms": got["p50_us"] / 1000, "p90_ms": got["p90_us"] / 1000, "p99_ms": got["p99_us"] / 1000,
        "max_ms": got["max_us"] / 1000, "submissions_per_s": round(len(acked) / duration_s, 1),
        "stored_ids": [r[0] for r in rows],
    }
    if figures["errors"] == 0 and "Non-2xx" in raw:
        figures["errors"] = parse_wrk(raw)["errors"]
    return figures


def sequential_ms(base: str, kind: str, tokens: dict, ids: list[int], day_ids: list[int], motors: list[int],
                  repeat: int = 15) -> tuple[float, list[int]]:
    """The median of ``repeat`` single requests of one kind, one after the other (no queueing): its own cost
    [ms], and the ids of the readings stored (submissions).

    Pictures and curves are of the readings in ``ids``, which nothing has asked for before."""
    times, stored = [], []
    for k in range(repeat):
        if kind == "submit":
            body = {"client_id": str(uuid.uuid4()), "motor_id": motors[k % len(motors)], "frequency_hz": 50,
                    "speed_rpm": 1466 + k % 14, "current_l1_a": 18.0, "current_l2_a": 18.4, "current_l3_a": 17.7,
                    "voltage_l12_v": 401, "voltage_l23_v": 399, "voltage_l31_v": 404,
                    "taken_at": f"{TODAY}T07:00:{k:02d}+02:00"}
            args = ("POST", "/api/v1/readings", tokens["tech"], body)
        elif kind in ("picture", "curve"):
            args = ("GET", f"/api/v1/readings/{ids[k]}/torque-speed.{'svg' if kind == 'picture' else 'json'}",
                    tokens["tech"])
        elif kind == "day_log":
            args = ("GET", f"/api/v1/readings?date={FINISHED_DAY}", tokens["tech"])
        elif kind == "listing":
            args = ("GET", f"/api/v1/readings/listing?date={FINISHED_DAY}", tokens["sup"])
        elif kind == "detail":
            args = ("GET", f"/api/v1/readings/{day_ids[k]}", tokens["sup"])
        else:
            args = ("GET", f"/api/v1/export.csv?date={FINISHED_DAY}", tokens["sup"])
        t = time.perf_counter()
        _, body = call(base, *args)
        times.append(time.perf_counter() - t)
        if kind == "submit":
            stored.append(json.loads(body)["id"])
    return statistics.median(times) * 1000, stored


def run(seconds: int, connections: int, trivial_seconds: int, mixes: tuple[str, ...] = ("api", "page"),
        alone_seconds: int = 0) -> dict:
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
    tokens = {"sup": cli(["token", "create", "sid"], env).strip(), "tech": cli(["token", "create", "tova"], env).strip()}
    port = free_port()
    base = f"http://127.0.0.1:{port}"
    log = open(tmp / "slipwise.log", "w")
    server = subprocess.Popen([str(Path(sys.executable).with_name("slipwise")), "serve", "--port", str(port)],
                              env={**os.environ, **env}, stdout=log, stderr=subprocess.STDOUT, start_new_session=True)
    db = None
    try:
        for _ in range(300):
            try:
                call(base, "GET", "/api/v1/health", tokens["sup"])
                break
            except OSError:
                time.sleep(0.1)
        motors = [json.loads(call(base, "POST", "/api/v1/motors", tokens["sup"],
                                  {**MOTOR, "tag": f"L-{k}", "rated_power_kw": kw, "rated_current_a": amps})[1])["id"]
                  for k, (kw, amps) in enumerate(((15, 28.5), (11, 21.5), (18.5, 35.0), (22, 41.0)))]
        db = Database(url, schema=schema)
        fill_readings(db, motors[0], FINISHED_DAY_READINGS, FINISHED_DAY)
        with db.read() as conn:
            first_id = conn.exec_driver_sql("SELECT MIN(id) FROM readings").scalar_one()
        day = {"first": first_id, "count": FINISHED_DAY_READINGS, "day_first": first_id}
        # warm both workers: the engine (and matplotlib, where a route uses it) load on first use; the readings
        # pictured here are the last of the finished day, which the mixes reach last
        last = first_id + FINISHED_DAY_READINGS - 1
        for k in range(6):
            call(base, "GET", f"/api/v1/readings/{last - k}/torque-speed.svg", tokens["tech"])
            call(base, "GET", f"/api/v1/readings/{last - k}/torque-speed.json", tokens["tech"])
            call(base, "GET", f"/api/v1/readings?date={FINISHED_DAY}", tokens["tech"])
            call(base, "GET", f"/api/v1/readings/listing?date={FINISHED_DAY}", tokens["sup"])

        wrk(base, TRIVIAL_LUA, 3, connections, tmp)  # warm-up
        trivial = parse_wrk(wrk(base, TRIVIAL_LUA, trivial_seconds, connections, tmp))

        results = {}
        for name in mixes:
            f = run_mix(name, MIXES[name], base, db, tokens, day, motors, seconds, connections, tmp)
            f.pop("stored_ids")
            f["ratio"] = round(f["rps"] / trivial["rps"], 3)
            results[name] = f

        alone = {}
        if alone_seconds:
            # submissions first: the pictures and curves alone are of the readings they stored (wrk's walk wraps
            # round if it asks for more), and one at a time of the 15 readings the single submissions stored
            fresh, seq_ids = None, []
            for kind in ("submit", "picture", "curve", "day_log", "listing", "detail", "export"):
                f = run_mix(kind, {kind: 100}, base, db, tokens, fresh or day, motors, alone_seconds, connections,
                            tmp)
                stored_ids = f.pop("stored_ids")
                if kind == "submit":
                    fresh = {"first": stored_ids[0], "count": len(stored_ids), "day_first": first_id}
                seq, made = sequential_ms(base, kind, tokens, seq_ids, list(range(first_id, first_id + 15)), motors)
                seq_ids = seq_ids or made
                alone[kind] = {"rps": f["rps"], "p50_ms": f["p50_ms"], "p99_ms": f["p99_ms"], "errors": f["errors"],
                               "requests": f["requests"], "acknowledged_missing": f["acknowledged_missing"],
                               "sequential_median_ms": round(seq, 1)}

        first = results[mixes[0]]
        figures = {"database": db.dialect, "finished_day_readings": FINISHED_DAY_READINGS,
                   "trivial_rps": trivial["rps"], "trivial_p99_ms": trivial["p99_ms"],
                   "trivial_errors": trivial["errors"], **first}
        if "page" in results and mixes[0] != "page":
            figures["page_mix"] = results["page"]
        figures["mixes"] = results
        figures["alone"] = alone
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


def print_mix(f: dict) -> None:
    print(f"{f['label']} {f['mix_pct']}: {f['requests']} requests, {f['rps']:.0f} req/s "
          f"(ratio to GET /health {f['ratio']:.3f}); ok {f['ok']}")
    print(f"  errors: {f['errors']} ({f['socket_errors']} socket, {f['bad_answers']} bad answers {f['bad_statuses']})")
    print(f"  acknowledged {f['acknowledged']}, stored {f['stored']}: {f['acknowledged_missing']} acknowledged but "
          f"missing, {f['stored_answer_cut_off']} stored with the answer cut off at the end, "
          f"{f['stored_without_audit']} without an audit entry")
    print(f"  latency: p50 {f['p50_ms']:.1f} ms, p90 {f['p90_ms']:.1f} ms, p99 {f['p99_ms']:.1f} ms, "
          f"max {f['max_ms']:.0f} ms")


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--seconds", type=int, default=60)
    parser.add_argument("--connections", type=int, default=32)
    parser.add_argument("--trivial-seconds", type=int, default=15)
    parser.add_argument("--mixes", default="api,page", help="which mixes, in order: api, page (default both)")
    parser.add_argument("--alone-seconds", type=int, default=5,
                        help="seconds for each request type alone (0: skip those runs)")
    parser.add_argument("--json", metavar="PATH", help="also write the figures as JSON to PATH")
    args = parser.parse_args()
    mixes = tuple(m.strip() for m in args.mixes.split(",") if m.strip())
    unknown = [m for m in mixes if m not in MIXES]
    if unknown or not mixes:
        parser.error(f"--mixes: choose from {', '.join(MIXES)}")
    f = run(args.seconds, args.connections, args.trivial_seconds, mixes, args.alone_seconds)
    print(f"database: {f['database']}; server: slipwise serve (gunicorn gthread, 2 workers x 4 threads); "
          f"{f['connections']} connections for {f['seconds']} s per mix (wrk); finished day of "
          f"{f['finished_day_readings']} readings")
    print(f"GET /api/v1/health alone: {f['trivial_rps']:.0f} req/s (p99 {f['trivial_p99_ms']:.1f} ms)")
    for m in f["mixes"].values():
        print_mix(m)
    if f["alone"]:
        print(f"each request type alone, {args.alone_seconds} s at {f['connections']} connections; and the median "
              "of 15 single requests one after the other:")
        for kind, a in f["alone"].items():
            print(f"  {kind:8s} {a['rps']:7.1f} req/s  p50 {a['p50_ms']:7.1f} ms  p99 {a['p99_ms']:7.1f} ms  "
                  f"errors {a['errors']}  missing {a['acknowledged_missing']}  one at a time "
                  f"{a['sequential_median_ms']:6.1f} ms")
    if args.json:
        Path(args.json).write_text(json.dumps(f, indent=2))
    return 0


if __name__ == "__main__":
    sys.exit(main())
