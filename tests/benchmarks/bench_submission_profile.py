"""Where one submission's time goes (issue 13, goal 3): cProfile of POST /api/v1/readings in-process.

    .venv/bin/python tests/benchmarks/bench_submission_profile.py [--count 200] [--json PATH]

Submits readings through the Flask test client on a temporary SQLite database (no HTTP, no gunicorn) and
prints the mean time of a submission and of GET /api/v1/health in the same process, then the share of a
submission spent in the engine, the store (SQLAlchemy and the driver) and the sign-in check, from cProfile's
cumulative times (profiling inflates every share by about the same factor). Prints, never fails.
"""

from __future__ import annotations

import argparse
import cProfile
import json
import pstats
import sys
import tempfile
import time
import uuid
from pathlib import Path

REPO = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(REPO / "server"))

from slipwise.store import accounts  # noqa: E402
from slipwise.web import create_app  # noqa: E402

MOTOR = {"site": "Bench Works", "tag": "B-1", "rated_power_kw": 15, "rated_voltage_v": 400, "rated_current_a": 28.5,
         "rated_frequency_hz": 50, "rated_speed_rpm": 1460, "driven_load": "variable_torque"}
PARTS = {  # (file suffix, function name) whose cumulative time is a part of the submission
    "engine (interpret one reading)": ("services/interpretation.py", "interpret_together"),
    "store: read before (client_id, revision, site)": ("services/readings.py", "_read_before"),
    "store: read back the stored record": ("store/readings.py", "reading_row"),
    "store: insert reading, flags": ("store/readings.py", "insert_reading"),
    "sign-in check (bearer token)": ("web/auth.py", "load_user"),
    "request parsing (pydantic)": ("web/readings.py", "parse_submission"),
    "render the answer": ("web/render.py", "reading_record_json"),
}


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--count", type=int, default=200)
    parser.add_argument("--json", metavar="PATH")
    args = parser.parse_args()
    tmp = tempfile.mkdtemp(prefix="slipwise-profile-")
    app = create_app({"DATA_DIR": tmp, "SECRET_KEY": "bench", "TESTING": True})
    db = app.extensions["slipwise"].db
    with db.write() as conn:
        accounts.add_user(conn, "bench", "supervisor", "bench-password", "Bench", scrypt_n=2 ** 10)
        token = accounts.create_token(conn, "bench")
    client = app.test_client()
    headers = {"Authorization": "Bearer " + token}
    motor = client.post("/api/v1/motors", json=MOTOR, headers=headers).get_json()

    def submit(i: int) -> None:
        r = client.post("/api/v1/readings", headers=headers, json={
            "client_id": str(uuid.uuid4()), "motor_id": motor["id"], "frequency_hz": 50, "speed_rpm": 1468 + i % 12,
            "current_l1_a": 20.1, "current_l2_a": 20.4, "current_l3_a": 19.9, "voltage_l12_v": 401,
            "voltage_l23_v": 399, "voltage_l31_v": 404})
        assert r.status_code == 201, r.get_data(as_text=True)

    for i in range(20):
        submit(i)
    t = time.perf_counter()
    for i in range(args.count):
        submit(i)
    submit_ms = (time.perf_counter() - t) / args.count * 1000
    t = time.perf_counter()
    for _ in range(args.count):
        client.get("/api/v1/health")
    health_ms = (time.perf_counter() - t) / args.count * 1000
    profile = cProfile.Profile()
    profile.enable()
    for i in range(args.count):
        submit(i)
    profile.disable()
    stats = pstats.Stats(profile).stats  # type: ignore[attr-defined]
    total = sum(v[3] for (f, _, name), v in stats.items() if name == "wsgi_app" and f.endswith("flask/app.py"))
    print(f"one submission in-process {submit_ms:.1f} ms; GET /api/v1/health {health_ms:.2f} ms "
          f"(ratio {health_ms / submit_ms:.2f}); under cProfile, share of a submission's time in the app:")
    shares = {}
    for label, (suffix, name) in PARTS.items():
        ct = sum(v[3] for (f, _, n), v in stats.items() if n == name and f.endswith(suffix))
        shares[label] = ct / total
        print(f"   {label:48s} {100 * ct / total:5.1f} %")
    print(f"   {'the rest (Flask, werkzeug, transactions)':48s} {100 * (1 - sum(shares.values())):5.1f} %")
    engine_calls = sum(v[1] for (f, _, _n), v in stats.items() if "/engine/" in f or "/physics/" in f) / args.count
    print(f"   ({engine_calls:.0f} engine and physics function calls per reading: numpy on arrays of one element)")
    if args.json:
        Path(args.json).write_text(json.dumps({"submit_inprocess_ms": submit_ms, "health_inprocess_ms": health_ms,
                                               "shares": shares}, indent=2))
    return 0


if __name__ == "__main__":
    sys.exit(main())
