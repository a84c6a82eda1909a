"""The day's listing (GET /api/v1/readings/listing): what the supervisor's table needs, a few hundred bytes per
reading, paged by ``next``; the whole record of one reading stays GET /api/v1/readings/{id}.

Issue 13, goal 2: the listing the page needs to draw the day is at most 800 bytes per reading.
"""

from __future__ import annotations

import json
from pathlib import Path

from slipwise import demo
from tests.service.conftest import REPO, reading_body

GOAL_BYTES_PER_READING = 800  # issue 13, goal 2


def walk(api, url: str) -> tuple[list[dict], int, int]:
    """Every page from url on: (readings, pages, bytes of all pages)."""
    rows, pages, size = [], 0, 0
    while url:
        r = api.get(url)
        assert r.status_code == 200, r.get_data(as_text=True)
        size += len(r.get_data())
        page = r.get_json()
        assert page["count"] == len(page["readings"])
        rows += page["readings"]
        pages += 1
        url = page["next"]
        assert url is None or url.startswith("/api/v1/readings/listing?")  # a relative URL
    return rows, pages, size


def test_a_realistic_day_lists_in_at_most_800_bytes_per_reading(app, tech, sup, tmp_path):
    counts = demo.load(app.extensions["slipwise"].db, Path(REPO) / "field_samples", tmp_path)
    assert counts["readings_added"] >= 30, counts
    days = sorted({r["taken_at"][:10] for r in demo._rows(Path(REPO) / "field_samples" / "readings.csv")})
    full = []
    for day in days:
        full += tech.get(f"/api/v1/readings?date={day}").get_json()["readings"]
    # the supervisor has been through part of the day, with comments (which the listing does not carry)
    for r in full[::3]:
        done = sup.post(f"/api/v1/readings/{r['id']}/review",
                        json={"decision": "retake", "comment": "Tachometer on the coupling guard, not the shaft; "
                              "take the speed again at the shaft end and note the load of the line."})
        assert done.status_code == 201
    # and one reading was taken again: a correction supersedes it
    old = full[1]
    again = tech.post("/api/v1/readings", json=reading_body(old["motor_id"], supersedes=old["id"],
                                                            **{k: v for k, v in old["inputs"].items() if v is not None}))
    assert again.status_code == 201, again.get_data(as_text=True)
    full.append(again.get_json())
    listed, listing_bytes, full_bytes = [], 0, 0
    for day in days:
        rows, _, size = walk(tech, f"/api/v1/readings/listing?date={day}")
        listed += rows
        listing_bytes += size
        full_bytes += len(tech.get(f"/api/v1/readings?date={day}").get_data())
    assert len(listed) == len(full) >= 30
    per_reading = listing_bytes / len(listed)
    print(f"listing {per_reading:.0f} bytes per reading (whole records {full_bytes / len(full):.0f}) "
          f"over {len(listed)} readings")
    assert per_reading <= GOAL_BYTES_PER_READING, per_reading
    assert per_reading < full_bytes / len(full) / 3  # the listing is not the record under another name

    # every value in the listing is the whole record's
    assert any(r["flags"] for r in listed) and any(r["superseded_by"] for r in listed)
    for row in listed:
        one = tech.get(f"/api/v1/readings/{row['id']}").get_json()
        assert row["load_pct"] == one["result"]["load_pct"]
        assert row["flags"] == one["result"]["flags"]
        assert row["verdict"] == one["result"]["verdict"]
        assert row["review_decision"] == (one["review"]["decision"] if one["review"] else None)
        for key in ("motor_id", "site", "tag", "technician", "technician_name", "taken_at", "superseded_by"):
            assert row[key] == one[key], key


def test_next_walks_every_reading_exactly_once_in_order(app, tech, sup, motor):
    other = sup.post("/api/v1/motors", json={**_motor_of(motor), "tag": "PMP-08"}).get_json()
    ids = []
    for i in range(23):
        # ties on taken_at: the pages are cut on (taken_at, id), so none is lost or repeated at a page edge
        minute = 10 + (i // 4)
        body = reading_body(motor["id"] if i % 3 else other["id"], speed_rpm=1470 + i % 9,
                            taken_at=f"2025-03-14T09:{minute:02d}:00+01:00")
        r = tech.post("/api/v1/readings", json=body)
        assert r.status_code == 201, r.get_data(as_text=True)
        ids.append(r.get_json()["id"])
    tech.post("/api/v1/readings", json=reading_body(motor["id"], taken_at="2025-03-15T09:00:00+01:00"))  # next day

    whole = [r["id"] for r in tech.get("/api/v1/readings?date=2025-03-14").get_json()["readings"]]
    assert sorted(whole) == sorted(ids)
    for limit in (1, 4, 5, 22, 23, 100):
        rows, pages, _ = walk(tech, f"/api/v1/readings/listing?date=2025-03-14&limit={limit}")
        assert [r["id"] for r in rows] == whole, limit  # each once, in the day log's order
        assert pages == max(1, -(-len(ids) // limit)), limit  # no empty page at the end

    # the filters travel in next
    rows, pages, _ = walk(tech, f"/api/v1/readings/listing?date=2025-03-14&motor_id={other['id']}&limit=2")
    assert [r["id"] for r in rows] == [i for i in whole if i in ids[::3]] and pages == 4

    # a reading taken earlier, stored while the walk is under way, does not shift the pages
    first = tech.get("/api/v1/readings/listing?date=2025-03-14&limit=10").get_json()
    tech.post("/api/v1/readings", json=reading_body(motor["id"], taken_at="2025-03-14T09:00:00+01:00"))
    rest, _, _ = walk(tech, first["next"])
    seen = [r["id"] for r in first["readings"]] + [r["id"] for r in rest]
    assert seen == whole


def test_listing_parameters_are_checked(tech, reading):
    for query, field in (("limit=0", "limit"), ("limit=10001", "limit"), ("after=0", "after"), ("after=x", "after"),
                         ("date=14.03.2025", "date"), ("flag=nonsense", "flag"), ("page=2", "page")):
        r = tech.get(f"/api/v1/readings/listing?{query}")
        assert r.status_code == 400, query
        assert r.get_json()["error"]["field"] == field, query
    assert tech.get("/api/v1/readings/listing").get_json()["count"] == 1
    assert tech.client.application.test_client().get("/api/v1/readings/listing").status_code == 401
    # the listing's JSON is what it says: flags a list, numbers numbers
    page = json.loads(tech.get("/api/v1/readings/listing").get_data())
    assert page["next"] is None and isinstance(page["readings"][0]["flags"], list)
    assert isinstance(page["readings"][0]["load_pct"], float)


def _motor_of(m: dict) -> dict:
    keep = ("site", "tag", "location", "description", "rated_power_kw", "rated_voltage_v", "rated_current_a",
            "rated_frequency_hz", "rated_speed_rpm", "driven_load")
    return {k: m[k] for k in keep}
