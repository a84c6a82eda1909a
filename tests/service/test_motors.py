"""/api/v1/motors: nameplates with revisions."""

from __future__ import annotations

from .conftest import MOTOR, count_rows


def test_create_and_read_motor(app, sup, tech, motor):
    assert motor["site"] == "Harbour Mill" and motor["tag"] == "PMP-07" and motor["revision"] == 1
    assert motor["rated_power_kw"] == 15.0 and motor["driven_load"] == "variable_torque"
    listed = tech.get("/api/v1/motors").get_json()
    assert listed["count"] == 1 and listed["motors"][0]["id"] == motor["id"]
    one = tech.get(f"/api/v1/motors/{motor['id']}").get_json()
    assert [r["revision"] for r in one["revisions"]] == [1]
    assert tech.get("/api/v1/motors?site=Elsewhere").get_json()["count"] == 0
    assert count_rows(app, "sites") == 1


def test_duplicate_tag_on_site_is_conflict(app, sup, motor):
    r = sup.post("/api/v1/motors", json=MOTOR)
    assert r.status_code == 409 and r.get_json()["error"]["field"] == "tag"
    # the same tag on another site is another motor
    assert sup.post("/api/v1/motors", json={**MOTOR, "site": "Quarry Road"}).status_code == 201
    assert count_rows(app, "motors") == 2


def test_edit_makes_revision_and_keeps_history(app, sup, motor):
    url = f"/api/v1/motors/{motor['id']}"
    same = sup.put(url, json=MOTOR)
    assert same.status_code == 200 and same.get_json()["revision"] == 1  # nothing changed: no revision
    r = sup.put(url, json={**MOTOR, "rated_current_a": 29.0, "revision": 1})
    assert r.status_code == 200
    got = r.get_json()
    assert got["revision"] == 2 and got["rated_current_a"] == 29.0
    assert [(x["revision"], x["rated_current_a"]) for x in got["revisions"]] == [(1, 28.5), (2, 29.0)]
    stale = sup.put(url, json={**MOTOR, "rated_current_a": 30.0, "revision": 1})
    assert stale.status_code == 409 and stale.get_json()["error"]["field"] == "revision"
    retag = sup.put(url, json={**MOTOR, "tag": "PMP-99"})
    assert retag.status_code == 400 and retag.get_json()["error"]["field"] == "tag"
    assert count_rows(app, "motor_revisions") == 2
    assert sup.put("/api/v1/motors/4242", json=MOTOR).status_code == 404


def test_bad_nameplate_names_field_and_range(app, sup):
    cases = [({"rated_voltage_v": 50}, "rated_voltage_v", "100 to 15000 V"),
             ({"rated_frequency_hz": None}, "rated_frequency_hz", "required"),
             ({"design": "Z"}, "design", "one of A, B, C, D, N, H"),
             ({"poles": 3.5}, "poles", "whole number"),
             ({"rated_power_kw": None}, "rated_power_kw", "rated_power_hp"),
             ({"tag": ""}, "tag", "required"),
             ({"site": "x" * 500}, "site", "120"),
             ({"rated_speed_rpm": 1600}, "rated_speed_rpm", "")]  # above 1500 rpm synchronous for 4 poles at 50 Hz
    for change, field, words in cases:
        r = sup.post("/api/v1/motors", json={**MOTOR, **change})
        assert r.status_code == 400, (change, r.get_data(as_text=True))
        err = r.get_json()["error"]
        assert err["field"] == field, (change, err)
        assert words in err["message"], (change, err)
    assert count_rows(app, "motors") == 0


def test_motor_carries_its_provisional_basis(app, sup, tech, motor):
    """The motor list and the motor itself carry what the page judges a reading with offline, worked out by
    the engine from the nameplate revision (the page caches the list)."""
    from slipwise.engine import interpret_one

    listed = tech.get("/api/v1/motors").get_json()["motors"][0]["provisional_basis"]
    one = tech.get(f"/api/v1/motors/{motor['id']}").get_json()["provisional_basis"]
    assert listed == one == motor["provisional_basis"]
    b = one
    # 1460 rpm at 50 Hz: 4 poles, 1500 rpm synchronous, rated slip 40/1500 (IEC 60034-1 definitions)
    assert (b["poles"], b["sync_rated_rpm"]) == (4, 1500) and abs(b["rated_slip"] - 40 / 1500) < 1e-12
    assert b["supply"] == "mains" and b["driven_load"] == "variable_torque" and not b["is_nema"]
    # the thresholds in force (the session reports the same) and the reading fields' defaults
    assert b["thresholds"] == tech.get("/api/v1/session").get_json()["thresholds"]
    assert b["reading_defaults"] == {"tachometer_resolution_rpm": 1.0, "current_accuracy_pct": 2.0,
                                     "voltage_accuracy_pct": 1.0, "power_accuracy_pct": 2.0}
    # the fitted circuit's no-load current: the current the engine reads at synchronous speed and rated voltage
    # (the current method's zero load; common practice puts it at 25-50 % of rated current for a 15 kW motor)
    assert 0.2 * 28.5 < b["no_load_current_a"] < 0.55 * 28.5
    plate = {k: motor[k] for k in MOTOR if k not in ("site", "location", "description")}
    idle = interpret_one({**plate, "frequency_hz": 50, "speed_rpm": 1499.9, "tachometer_resolution_rpm": 0.01,
                          "current_l1_a": b["no_load_current_a"], "voltage_l12_v": 400})
    assert idle["load_current_pct"] == 0.0
    # the breakdown band: the design's typical torque (IEC design N) above its lowest credible one
    assert b["breakdown_torque_low_pct"] < b["breakdown_torque_pct"]
    # a new revision brings its own basis
    r = sup.put(f"/api/v1/motors/{motor['id']}", json={**MOTOR, "rated_current_a": 31.0, "revision": 1}).get_json()
    assert r["provisional_basis"]["rated_current_a"] == 31.0
    assert r["provisional_basis"]["no_load_current_a"] != b["no_load_current_a"]


def test_a_nameplate_without_a_circuit_has_no_basis(sup):
    """0.08 hp at 400 V and 21.8 A: accepted as typed, but no circuit fits it; the page gets no basis (and
    so gives no provisional verdict) rather than a basis with holes."""
    body = {**MOTOR, "tag": "ODD-1", "rated_power_kw": None, "rated_power_hp": 0.08, "rated_current_a": 21.8}
    r = sup.post("/api/v1/motors", json=body)
    assert r.status_code == 201 and r.get_json()["provisional_basis"] is None
    assert sup.get("/api/v1/motors").get_json()["motors"][0]["provisional_basis"] is None
