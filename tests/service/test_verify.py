"""`slipwise verify`: the record's chain of fingerprints, walked by a separate process as a site would.

One value changed directly in the database with SQL (as someone with database access could) must be
named by the reading (or review) that holds it; an untouched database passes. SQLite by default,
PostgreSQL with DATABASE_URL set (each test in its own schema, see conftest).
"""

from __future__ import annotations

import json

from slipwise.store import Database

from .conftest import reading_body, run_cli


def _env(database, tmp_path) -> dict[str, str]:
    return {**database.env(), "SLIPWISE_DATA_DIR": str(tmp_path / "data")}


def _record(tech, sup, motor, count: int = 3) -> list[dict]:
    """``count`` readings, a retake and an acceptance (the sign-off), a correction: the chain interleaves them."""
    made = []
    for i in range(count):
        r = tech.post("/api/v1/readings", json=reading_body(motor["id"], current_l1_a=20.0 + i))
        assert r.status_code == 201, r.get_data(as_text=True)
        made.append(r.get_json())
    assert sup.post(f"/api/v1/readings/{made[0]['id']}/review",
                    json={"decision": "retake", "comment": "clamp meter on the wrong lead"}).status_code == 201
    assert sup.post(f"/api/v1/readings/{made[1]['id']}/review", json={"decision": "accepted"}).status_code == 201
    r = tech.post("/api/v1/readings", json=reading_body(motor["id"], supersedes=made[0]["id"]))
    assert r.status_code == 201
    made.append(r.get_json())
    return made


def _sql(database, statement: str) -> None:
    db = Database(database.url, schema=database.schema)
    with db.write() as conn:
        conn.exec_driver_sql(statement)
    db.dispose()


def test_untouched_record_verifies(database, tmp_path, tech, sup, motor):
    made = _record(tech, sup, motor)
    # the API gives each reading and review its fingerprint, all distinct
    one = tech.get(f"/api/v1/readings/{made[1]['id']}").get_json()
    prints = [m["fingerprint"] for m in made] + [one["review"]["fingerprint"]]
    assert all(isinstance(p, str) and len(p) == 64 for p in prints) and len(set(prints)) == len(prints)
    assert one["reviews"][0]["fingerprint"] == one["review"]["fingerprint"]

    r = run_cli(["verify"], _env(database, tmp_path))
    assert r.returncode == 0, r.stdout + r.stderr
    assert "record intact: 4 readings and 2 reviews in one chain" in r.stdout, r.stdout
    print(r.stdout)


def test_changed_reading_value_is_named(database, tmp_path, tech, sup, motor):
    made = _record(tech, sup, motor)
    target = made[1]
    # someone edits the stored current in place: the JSON text of the inputs, nothing else
    inputs = json.dumps({**target["inputs"], "current_l1_a": 18.0})
    _sql(database, f"UPDATE readings SET inputs = '{inputs}' WHERE id = {target['id']}")
    r = run_cli(["verify"], _env(database, tmp_path))
    assert r.returncode == 1, r.stdout + r.stderr
    assert f"reading {target['id']}:" in r.stderr and "no longer matches" in r.stderr, r.stderr
    print(r.stderr)


def test_changed_engine_result_is_named_even_in_the_last_reading(database, tmp_path, tech, sup, motor):
    made = _record(tech, sup, motor)
    last = made[-1]
    _sql(database, f"UPDATE readings SET taken_at = '2025-03-14T10:30:00+01:00' WHERE id = {last['id']}")
    r = run_cli(["verify"], _env(database, tmp_path))
    assert r.returncode == 1 and f"reading {last['id']}:" in r.stderr, r.stderr


def test_changed_review_is_named_with_its_reading(database, tmp_path, tech, sup, motor):
    made = _record(tech, sup, motor)
    # the retake of reading made[0] turned into an acceptance
    _sql(database, f"UPDATE reviews SET decision = 'accepted' WHERE reading_id = {made[0]['id']}")
    r = run_cli(["verify"], _env(database, tmp_path))
    assert r.returncode == 1, r.stderr
    assert f"of reading {made[0]['id']}:" in r.stderr and "review " in r.stderr, r.stderr


def test_deleted_entries_are_found(database, tmp_path, tech, sup, motor):
    made = _record(tech, sup, motor)
    # the last reading deleted (no review refers to it): only the chain head can tell
    _sql(database, f"DELETE FROM audit_log WHERE object_id = {made[-1]['id']} AND action = 'reading.supersede'")
    _sql(database, f"DELETE FROM reading_flags WHERE reading_id = {made[-1]['id']}")
    _sql(database, f"DELETE FROM readings WHERE id = {made[-1]['id']}")
    r = run_cli(["verify"], _env(database, tmp_path))
    assert r.returncode == 1 and "chain head records 6 entries" in r.stderr, r.stderr
    # a reading in the middle deleted: a gap in the chain
    _sql(database, f"DELETE FROM reading_flags WHERE reading_id = {made[2]['id']}")
    _sql(database, f"DELETE FROM readings WHERE id = {made[2]['id']}")
    r = run_cli(["verify"], _env(database, tmp_path))
    assert r.returncode == 1 and "missing before" in r.stderr, r.stderr


def test_verify_takes_the_database_url_option(database, tmp_path, tech, sup, motor):
    _record(tech, sup, motor, count=2)
    env = {"SLIPWISE_DATA_DIR": str(tmp_path / "elsewhere")}
    if database.schema:
        env["SLIPWISE_DB_SCHEMA"] = database.schema
    r = run_cli(["verify", "--database-url", database.url], {**env, "DATABASE_URL": ""})
    assert r.returncode == 0 and "3 readings and 2 reviews" in r.stdout, r.stdout + r.stderr
