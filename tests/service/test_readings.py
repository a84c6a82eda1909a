"""POST/GET /api/v1/readings: stored interpretation, replays, corrections, the day's log."""

from __future__ import annotations

import json

import pytest

from slipwise.contract import ENGINE_VERSION, RESULT_COLUMNS
from slipwise.engine import interpret_one

from .conftest import MOTOR, READING, count_rows, reading_body


def test_submit_stores_reading_and_engine_result(app, tech, motor):
    body = reading_body(motor["id"])
    r = tech.post("/api/v1/readings", json=body)
    assert r.status_code == 201
    got = r.get_json()
    assert got["client_id"] == body["client_id"]
    assert got["technician"] == "tess"
    assert got["motor_revision"] == 1
    assert got["taken_at"] == "2025-03-14T09:30:00+01:00"
    assert got["engine_version"] == ENGINE_VERSION
    assert set(RESULT_COLUMNS) <= set(got["result"])
    # the stored result is the engine's own, for the nameplate revision used
    record = {k: v for k, v in MOTOR.items() if k not in ("site", "location", "description")}
    record.update(READING)
    direct = interpret_one(record)
    for key in ("sync_speed_rpm", "slip_pct", "load_pct", "load_low_pct", "load_high_pct", "efficiency_pct",
                "voltage_unbalance_pct", "breakdown_margin"):
        assert got["result"][key] == pytest.approx(direct[key], rel=1e-12), key
    # 4 poles at 50 Hz: 1500 rpm synchronous; slip (1500 - 1475) / 1500 = 1.667 % (definition of slip)
    assert got["result"]["sync_speed_rpm"] == pytest.approx(1500.0)
    assert got["result"]["slip_pct"] == pytest.approx(100 * 25 / 1500)
    assert count_rows(app, "readings") == 1
    with app.extensions["slipwise"].db.read() as conn:
        row = conn.exec_driver_sql("SELECT inputs, result, technician_id, received_at, motor_revision_id "
                                   "FROM readings").one()
    assert json.loads(row[0])["speed_rpm"] == 1475.0
    assert json.loads(row[1])["slip_pct"] == pytest.approx(got["result"]["slip_pct"])
    assert row[3] is not None
    assert row[4] == motor["revision_id"]
    assert count_rows(app, "audit_log") >= 1


def test_replay_returns_same_record_without_second_row(app, tech, motor):
    body = reading_body(motor["id"])
    first = tech.post("/api/v1/readings", json=body)
    again = tech.post("/api/v1/readings", json=body)
    assert (first.status_code, again.status_code) == (201, 200)
    assert again.get_json() == first.get_json()
    # the same values written differently are the same content
    as_text = {**body, "speed_rpm": "1475", "frequency_hz": 50.0}
    third = tech.post("/api/v1/readings", json=as_text)
    assert third.status_code == 200 and third.get_json()["id"] == first.get_json()["id"]
    assert count_rows(app, "readings") == 1


def test_same_client_id_other_content_is_conflict(app, tech, tech2, motor):
    body = reading_body(motor["id"])
    assert tech.post("/api/v1/readings", json=body).status_code == 201
    r = tech.post("/api/v1/readings", json={**body, "speed_rpm": 1474})
    assert r.status_code == 409
    assert r.get_json()["error"]["field"] == "client_id"
    # another technician replaying someone else's client_id is other content too
    assert tech2.post("/api/v1/readings", json=body).status_code == 409
    assert count_rows(app, "readings") == 1


@pytest.mark.parametrize("field,value,words", [
    ("speed_rpm", 9000, "7500"),
    ("frequency_hz", "fifty", "frequency_hz"),
    ("current_l1_a", -1, "current_l1_a"),
    ("client_id", "not-a-uuid", "UUID"),
    ("motor_id", "x", "motor_id"),
    ("taken_at", "yesterday", "ISO 8601"),
    ("taken_at", "1999-12-31T23:00:00", "2000-01-01"),
    ("colour", "red", "unknown field"),
    ("speed_rpm", None, "required"),
])
def test_bad_reading_is_400_naming_field_and_nothing_stored(app, tech, motor, field, value, words):
    before_audit = count_rows(app, "audit_log")
    r = tech.post("/api/v1/readings", json=reading_body(motor["id"], **{field: value}))
    assert r.status_code == 400, r.get_data(as_text=True)
    err = r.get_json()["error"]
    assert err["field"] == field
    assert words in err["message"]
    assert count_rows(app, "readings") == 0
    assert count_rows(app, "audit_log") == before_audit


def test_engine_refusal_stores_nothing(app, tech, motor):
    # a shaft speed far above synchronous speed for 50 Hz, 4 poles: the engine refuses it
    r = tech.post("/api/v1/readings", json=reading_body(motor["id"], speed_rpm=3600))
    assert r.status_code == 400
    assert r.get_json()["error"]["field"]
    assert count_rows(app, "readings") == 0
    assert count_rows(app, "reading_flags") == 0


def test_unknown_motor_is_404(app, tech):
    r = tech.post("/api/v1/readings", json=reading_body(999))
    assert r.status_code == 404 and r.get_json()["error"]["field"] == "motor_id"
    assert count_rows(app, "readings") == 0


def test_correction_supersedes_never_overwrites(app, tech, sup, motor, reading):
    fix = reading_body(motor["id"], speed_rpm=1471, supersedes=reading["id"])
    r = tech.post("/api/v1/readings", json=fix)
    assert r.status_code == 201
    new = r.get_json()
    assert new["supersedes"] == reading["id"]
    old = tech.get(f"/api/v1/readings/{reading['id']}").get_json()
    assert old["superseded_by"] == new["id"]
    assert old["inputs"]["speed_rpm"] == 1475.0  # the old row is untouched
    assert count_rows(app, "readings") == 2
    # a second correction of the same reading is refused: correct the newest one instead
    twice = tech.post("/api/v1/readings", json=reading_body(motor["id"], supersedes=reading["id"]))
    assert twice.status_code == 409 and twice.get_json()["error"]["field"] == "supersedes"
    assert tech.post("/api/v1/readings", json=reading_body(motor["id"], supersedes=12345)).status_code == 404
    other = sup.post("/api/v1/motors", json={**MOTOR, "tag": "PMP-08"}).get_json()
    cross = tech.post("/api/v1/readings", json=reading_body(other["id"], supersedes=new["id"]))
    assert cross.status_code == 400 and cross.get_json()["error"]["field"] == "supersedes"
    assert count_rows(app, "readings") == 2


def test_reading_keeps_the_revision_it_was_interpreted_with(app, tech, sup, motor, reading):
    # the nameplate is corrected: 1450 rpm rated speed
    r = sup.put(f"/api/v1/motors/{motor['id']}", json={**MOTOR, "rated_speed_rpm": 1450})
    assert r.status_code == 200 and r.get_json()["revision"] == 2
    later = tech.post("/api/v1/readings", json=reading_body(motor["id"])).get_json()
    first = tech.get(f"/api/v1/readings/{reading['id']}").get_json()
    assert first["motor_revision"] == 1 and later["motor_revision"] == 2
    # slip-based load scales with rated slip: 10 rpm -> 50 rpm of rated slip changes it
    assert first["result"]["load_slip_pct"] != pytest.approx(later["result"]["load_slip_pct"])
    csv_text = sup.get("/api/v1/export.csv").get_data(as_text=True)
    assert ",1460.0," in csv_text and ",1450.0," in csv_text


def test_day_log_filters(app, tech, tech2, sup, motor):
    other = sup.post("/api/v1/motors", json={**MOTOR, "site": "Quarry Road", "tag": "FAN-2"}).get_json()
    tech.post("/api/v1/readings", json=reading_body(motor["id"]))
    tech2.post("/api/v1/readings", json=reading_body(other["id"], taken_at="2025-03-15T08:00:00+01:00"))
    # max deviation from the mean 2.5 A of 20 A = 12.5 % current unbalance, above the default 10 % threshold
    tech2.post("/api/v1/readings", json=reading_body(motor["id"], current_l1_a=17.5, current_l2_a=21.5,
                                                     current_l3_a=21.0, taken_at="2025-03-14T11:00:00+01:00"))
    log = tech.get("/api/v1/readings?date=2025-03-14").get_json()
    assert log["count"] == 2
    assert [x["taken_at"] for x in log["readings"]] == ["2025-03-14T09:30:00+01:00", "2025-03-14T11:00:00+01:00"]
    assert tech.get("/api/v1/readings?site=Quarry%20Road").get_json()["count"] == 1
    assert tech.get("/api/v1/readings?technician=theo").get_json()["count"] == 2
    flagged = tech.get("/api/v1/readings?flag=current_unbalance").get_json()
    assert flagged["count"] == 1
    assert all("current_unbalance" in x["result"]["flags"] for x in flagged["readings"])
    assert flagged["count"] == sum("current_unbalance" in x["result"]["flags"]
                                   for x in tech.get("/api/v1/readings").get_json()["readings"])
    for query, field in (("date=2025-13-01", "date"), ("flag=hot", "flag"), ("limit=0", "limit"),
                         ("colour=red", "colour")):
        r = tech.get("/api/v1/readings?" + query)
        assert r.status_code == 400 and r.get_json()["error"]["field"] == field


def test_review_is_append_only(app, tech, sup, reading):
    url = f"/api/v1/readings/{reading['id']}/review"
    r = sup.post(url, json={"decision": "retake", "comment": "clamp on the wrong phase"})
    assert r.status_code == 201 and r.get_json()["reading"]["review"]["decision"] == "retake"
    assert sup.post(url, json={"decision": "retake"}).status_code == 400  # retake needs a reason
    assert sup.post(url, json={"decision": "maybe"}).get_json()["error"]["field"] == "decision"
    r = sup.post(url, json={"decision": "accepted", "comment": ""})
    assert r.status_code == 201
    got = tech.get(f"/api/v1/readings/{reading['id']}").get_json()
    assert got["review"]["decision"] == "accepted" and got["review"]["reviewer"] == "sue"
    assert count_rows(app, "reviews") == 2
    assert sup.post("/api/v1/readings/999/review", json={"decision": "accepted"}).status_code == 404


def test_interpret_stores_nothing(app, tech, motor):
    body = {k: v for k, v in MOTOR.items() if k not in ("site", "location", "description")} | READING
    r = tech.post("/api/v1/interpret", json=body)
    assert r.status_code == 200
    assert r.get_json()["slip_pct"] == pytest.approx(100 * 25 / 1500)
    by_motor = tech.post("/api/v1/interpret", json={"motor_id": motor["id"], **READING})
    assert by_motor.get_json()["slip_pct"] == pytest.approx(r.get_json()["slip_pct"])
    bad = tech.post("/api/v1/interpret", json={**body, "rated_voltage_v": 5})
    assert bad.status_code == 400 and bad.get_json()["error"]["field"] == "rated_voltage_v"
    assert "100" in bad.get_json()["error"]["message"]
    assert count_rows(app, "readings") == 0


def test_audit_trail_names_who_did_what(app, tech, sup, reading):
    sup.post(f"/api/v1/readings/{reading['id']}/review", json={"decision": "accepted"})
    entries = sup.get("/api/v1/audit").get_json()["entries"]
    actions = [(e["actor"], e["action"], e["object_id"]) for e in entries]
    assert ("tess", "reading.submit", reading["id"]) in actions
    assert ("sue", "reading.review", reading["id"]) in actions
    assert ("sue", "motor.create", reading["motor_id"]) in actions
    assert all(e["at"].endswith("+00:00") for e in entries)
