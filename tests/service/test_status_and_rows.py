"""Each write route: the HTTP status it answers and what it changed in the database (nothing when refused)."""

from __future__ import annotations

from .conftest import MOTOR, count_rows, reading_body


def _rows(app) -> dict[str, int]:
    return {t: count_rows(app, t) for t in ("motors", "motor_revisions", "readings", "reading_flags", "reviews",
                                            "audit_log")}


def test_motor_routes(app, sup):
    start = _rows(app)
    r = sup.post("/api/v1/motors", json=MOTOR)
    assert r.status_code == 201
    after_create = _rows(app)
    assert after_create == {**start, "motors": 1, "motor_revisions": 1, "audit_log": start["audit_log"] + 1}
    assert sup.post("/api/v1/motors", json=MOTOR).status_code == 409
    assert _rows(app) == after_create
    mid = r.get_json()["id"]
    assert sup.put(f"/api/v1/motors/{mid}", json=MOTOR).status_code == 200          # nothing changed
    assert _rows(app) == after_create
    r = sup.put(f"/api/v1/motors/{mid}", json={**MOTOR, "rated_current_a": 29.0, "revision": 1})
    assert r.status_code == 200 and r.get_json()["revision"] == 2
    assert _rows(app)["motor_revisions"] == 2
    assert sup.put(f"/api/v1/motors/{mid}", json={**MOTOR, "tag": "PMP-99"}).status_code == 400
    assert sup.put(f"/api/v1/motors/{mid}", json={**MOTOR, "rated_current_a": 30.0, "revision": 1}).status_code == 409
    assert _rows(app)["motor_revisions"] == 2


def test_reading_routes(app, tech, sup, motor):
    start = _rows(app)
    body = reading_body(motor["id"])
    r = tech.post("/api/v1/readings", json=body)
    assert r.status_code == 201
    stored = _rows(app)
    flags = set(r.get_json()["result"]["flags"] or [])
    assert stored == {**start, "readings": 1, "reading_flags": len(flags), "audit_log": start["audit_log"] + 1}
    assert tech.post("/api/v1/readings", json=body).status_code == 200              # replay
    assert tech.post("/api/v1/readings", json={**body, "speed_rpm": 1470}).status_code == 409
    assert tech.post("/api/v1/interpret", json={k: v for k, v in body.items() if k != "client_id"}).status_code == 200
    assert _rows(app) == stored
    rid = r.get_json()["id"]
    assert sup.post(f"/api/v1/readings/{rid}/review", json={"decision": "rejected"}).status_code == 400
    assert _rows(app) == stored
    r = sup.post(f"/api/v1/readings/{rid}/review", json={"decision": "rejected", "comment": "wrong phase"})
    assert r.status_code == 201 and r.get_json()["reading"]["review"]["decision"] == "rejected"
    assert _rows(app) == {**stored, "reviews": 1, "audit_log": stored["audit_log"] + 1}
