"""What the field page needs from the service: thresholds in force, review history, technician registration."""

from __future__ import annotations

from .conftest import MOTOR, count_rows


def test_session_carries_the_thresholds_in_force(tech):
    body = tech.get("/api/v1/session").get_json()
    # defaults of slipwise.engine.Thresholds: 40 % underloaded (common practice), rated output overloaded
    assert body["thresholds"]["underloaded_pct"] == 40.0
    assert body["thresholds"]["overloaded_pct"] == 100.0


def test_reading_detail_lists_every_review(tech, sup, reading):
    for decision in ("retake", "accepted"):
        assert sup.post(f"/api/v1/readings/{reading['id']}/review",
                        json={"decision": decision, "comment": decision}).status_code == 201
    detail = tech.get(f"/api/v1/readings/{reading['id']}").get_json()
    assert [r["decision"] for r in detail["reviews"]] == ["retake", "accepted"]
    assert detail["review"]["decision"] == "accepted"          # the latest, as before
    assert all(r["reviewer"] == "sue" for r in detail["reviews"])


def test_technician_registers_a_motor(app, tech):
    before = count_rows(app, "motors")
    resp = tech.post("/api/v1/motors", json={**MOTOR, "tag": "PMP-NEW-1"})
    assert resp.status_code == 201, resp.get_json()
    assert count_rows(app, "motors") == before + 1
    # editing a nameplate stays with supervisors
    put = tech.put(f"/api/v1/motors/{resp.get_json()['id']}", json={"rated_current_a": 29.0})
    assert put.status_code == 403
