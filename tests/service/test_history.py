"""Issue 11 over HTTP: site defaults for the energy inputs, a motor's history with its baseline and change
findings, the site's view and its CSV, and analyze == API for the energy columns.

Sources: the change criteria are those of slipwise.physics.trend (IEEE 43 trending; ISO 10816-1 change of 25 % of
the zone B/C boundary, from memory; NEMA MG 1 current/voltage unbalance 6-10x, from memory).
"""

from __future__ import annotations

import csv
import io
import subprocess
import sys
from pathlib import Path

import pytest

from slipwise.contract import ENERGY_FIELDS, RESULT_COLUMNS
from slipwise.engine.records import number_cell

from .conftest import MOTOR, REPO, reading_body

ENERGY_RESULTS = ("input_power_kw", "input_power_low_kw", "input_power_high_kw", "annual_energy_kwh",
                  "annual_energy_cost", "right_size_rated_kw", "right_size_efficiency_pct", "right_size_savings_kwh")


def _site_id(api, name):
    sites = api.get("/api/v1/sites").get_json()["sites"]
    return next(s["id"] for s in sites if s["name"] == name)


def test_site_defaults_fill_blank_energy_inputs_and_a_reading_overrides_them(tech, sup, motor, app):
    sid = _site_id(sup, MOTOR["site"])
    # a technician may not set them; a bad value names its field and range
    assert tech.put(f"/api/v1/sites/{sid}/settings", json={"operating_hours_per_year": 6000}).status_code == 403
    bad = sup.put(f"/api/v1/sites/{sid}/settings", json={"operating_hours_per_year": 9000})
    assert bad.status_code == 400 and bad.get_json()["error"]["field"] == "operating_hours_per_year"
    assert "8784" in bad.get_json()["error"]["message"]
    ok = sup.put(f"/api/v1/sites/{sid}/settings", json={"operating_hours_per_year": 6000,
                                                        "energy_price_per_kwh": 0.18})
    assert ok.status_code == 200, ok.get_data(as_text=True)
    assert ok.get_json()["settings"] == {**ok.get_json()["settings"], "operating_hours_per_year": 6000.0,
                                         "energy_price_per_kwh": 0.18, "visit_interval_months": 12}
    r = tech.post("/api/v1/readings", json=reading_body(motor["id"])).get_json()
    assert r["inputs"]["operating_hours_per_year"] == 6000.0 and r["inputs"]["energy_price_per_kwh"] == 0.18
    res = r["result"]
    assert res["annual_energy_kwh"] == pytest.approx(res["input_power_kw"] * 6000.0)
    assert res["annual_energy_cost"] == pytest.approx(res["annual_energy_kwh"] * 0.18)
    assert res["input_power_low_kw"] <= res["input_power_kw"] <= res["input_power_high_kw"]
    # the reading's own value wins
    own = tech.post("/api/v1/readings", json=reading_body(motor["id"], operating_hours_per_year=2000)).get_json()
    assert own["inputs"]["operating_hours_per_year"] == 2000.0
    assert own["result"]["annual_energy_kwh"] == pytest.approx(own["result"]["input_power_kw"] * 2000.0)
    # the settings are a new entry each time, in the audit trail
    entries = sup.get("/api/v1/audit").get_json()["entries"]
    assert any(e["action"] == "site.settings" and e["object_id"] == sid for e in entries)


def test_analyze_gives_the_api_energy_columns(tech, sup, motor, tmp_path):
    body = reading_body(motor["id"], operating_hours_per_year=5000, energy_price_per_kwh=0.2, speed_rpm=1488,
                        current_l1_a=13.0, current_l2_a=13.2, current_l3_a=12.9)
    api = tech.post("/api/v1/readings", json=body).get_json()["result"]
    assert api["right_size_rated_kw"] is not None, api   # lightly loaded 15 kW pump: a candidate
    plate = {k: v for k, v in MOTOR.items() if k not in ("site", "location", "description")}
    row = {**plate, **{k: v for k, v in body.items() if k not in ("client_id", "motor_id")}}
    src = tmp_path / "r.csv"
    with src.open("w", newline="") as f:
        w = csv.DictWriter(f, fieldnames=list(row))
        w.writeheader()
        w.writerow(row)
    exe = Path(sys.executable).with_name("slipwise")
    out = subprocess.run([str(exe), "analyze", str(src)], capture_output=True, text=True, timeout=120)
    assert out.returncode == 0, out.stderr
    cells = next(csv.DictReader(io.StringIO(out.stdout)))
    for col in ENERGY_RESULTS:
        assert cells[col] == number_cell(col, api[col]), col


def test_history_baseline_changes_and_overdue(tech, sup, motor):
    mid = motor["id"]
    first = tech.post("/api/v1/readings", json=reading_body(mid, taken_at="2024-01-10T09:00:00+01:00")).get_json()
    # before any sign-off there is no baseline and no change finding
    h = tech.get(f"/api/v1/motors/{mid}/history").get_json()
    assert h["baseline_reading_id"] is None and [v["changes"] for v in h["visits"]] == [[]]
    assert sup.post(f"/api/v1/readings/{first['id']}/review", json={"decision": "accepted"}).status_code == 201
    # months later: current unbalance risen far beyond what the (unchanged) voltage unbalance explains
    tech.post("/api/v1/readings", json=reading_body(mid, taken_at="2024-07-10T09:00:00+02:00",
                                                    current_l1_a=18.0, current_l2_a=22.5, current_l3_a=19.8))
    h = tech.get(f"/api/v1/motors/{mid}/history").get_json()
    assert h["baseline_reading_id"] == first["id"] and h["count"] == 2
    assert [v["baseline"] for v in h["visits"]] == [True, False]
    assert [c["code"] for c in h["visits"][1]["changes"]] == ["current_unbalance_rising"]
    assert h["visits"][0]["insulation_resistance_40c_mohm"] is None   # not measured: null
    # last visit in July 2024 with the default 12 months: overdue since July 2025
    assert h["last_visit"] == "2024-07-10" and h["next_visit_due"] == "2025-07-10" and h["overdue"] is True
    assert tech.get("/api/v1/motors/999999/history").status_code == 404


def test_site_overview_and_csv(tech, sup, motor):
    mid = motor["id"]
    tech.post("/api/v1/readings", json=reading_body(mid, operating_hours_per_year=5000, speed_rpm=1488,
                                                    current_l1_a=13.0, current_l2_a=13.2, current_l3_a=12.9))
    sid = _site_id(tech, MOTOR["site"])
    o = tech.get(f"/api/v1/sites/{sid}/overview").get_json()
    assert sum(o["by_verdict"].values()) == len(o["motors"]) == 1
    assert [m["tag"] for m in o["right_sizing"]] == [MOTOR["tag"]]
    assert o["right_sizing"][0]["right_size_savings_kwh"] >= 0
    assert tech.get(f"/api/v1/sites/{sid}/overview.csv").status_code == 403
    text = sup.get(f"/api/v1/sites/{sid}/overview.csv").get_data(as_text=True)
    rows = list(csv.DictReader(io.StringIO(text)))
    assert rows[0]["tag"] == MOTOR["tag"] and rows[0]["right_size_rated_kw"]


def test_a_replay_from_before_the_energy_fields_is_still_a_replay():
    # a tablet's outbox entry made before issue 11 has no energy keys; after the upgrade the parsed body has
    # them as null: the content hash must not change, or the replay would be refused as a conflict (409)
    from slipwise.services.records import Submission
    old = Submission("6f1c2d3e-4b5a-4c6d-8e7f-901a2b3c4d5e", 1, None, {"speed_rpm": 1475.0}, None, "2025-03-14", None)
    new = Submission(old.client_id, 1, None, {"speed_rpm": 1475.0, **{f: None for f in ENERGY_FIELDS}}, None,
                     "2025-03-14", None)
    assert old.content_hash(7) == new.content_hash(7)
    given = Submission(old.client_id, 1, None, {"speed_rpm": 1475.0, "operating_hours_per_year": 4000.0}, None,
                       "2025-03-14", None)
    assert given.content_hash(7) != old.content_hash(7)
