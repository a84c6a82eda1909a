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
