"""GET /api/v1/retakes: a supervisor's retake request reaches the technician on any later day, until a new
reading that supersedes it answers it (issue 12, item 2)."""

from __future__ import annotations

from .conftest import reading_body


def test_retakes_cross_days_and_close_when_answered(app, tech, tech2, sup, motor):
    old = tech.post("/api/v1/readings", json=reading_body(motor["id"], taken_at="2025-02-03T09:00:00+01:00")).get_json()
    other = tech2.post("/api/v1/readings", json=reading_body(motor["id"], taken_at="2025-02-04T09:00:00+01:00")).get_json()
    fine = tech.post("/api/v1/readings", json=reading_body(motor["id"], taken_at="2025-02-05T09:00:00+01:00")).get_json()
    for reading, comment in ((old, "speed looks misread"), (other, "clamp the third phase")):
        assert sup.post(f"/api/v1/readings/{reading['id']}/review",
                        json={"decision": "retake", "comment": comment}).status_code == 201
    assert sup.post(f"/api/v1/readings/{fine['id']}/review", json={"decision": "accepted"}).status_code == 201

    mine = tech.get("/api/v1/retakes").get_json()
    assert [r["id"] for r in mine["readings"]] == [old["id"]]  # tess sees her own, from an earlier day
    assert mine["readings"][0]["review"]["comment"] == "speed looks misread"
    assert mine["readings"][0]["review"]["reviewer_name"]  # the full name, for the page
    assert [r["id"] for r in sup.get("/api/v1/retakes").get_json()["readings"]] == [old["id"], other["id"]]

    # answered: a new reading superseding it closes the request
    again = tech.post("/api/v1/readings", json=reading_body(motor["id"], supersedes=old["id"], speed_rpm=1478)).get_json()
    assert again["supersedes"] == old["id"]
    assert tech.get("/api/v1/retakes").get_json()["readings"] == []
    # a later accept of a retaken reading is no longer a request either
    assert sup.post(f"/api/v1/readings/{other['id']}/review", json={"decision": "accepted"}).status_code == 201
    assert sup.get("/api/v1/retakes").get_json() == {"count": 0, "readings": []}
    assert tech.get("/api/v1/retakes?date=2025-02-03").status_code == 400  # no parameters: named, not ignored
