"""Every field of the commissioning sheet interpreted identically by ``slipwise analyze`` (a subprocess on a CSV)
and the API (``POST /api/v1/interpret`` over HTTP), refusals included: the same result cells, written by the
one record writer, and the same field named in a refusal.
"""

from __future__ import annotations

import pandas as pd
import pytest

from slipwise import contract as C
from slipwise.engine.records import cautions_cell, result_cells
from tests.engine.test_cli_analyze import run as run_analyze
from tests.service.conftest import app, database, static_dir, tech  # noqa: F401  (fixtures)

PLATE = {"tag": "S-1", "rated_power_kw": "22", "rated_voltage_v": "400", "rated_current_a": "39.0",
         "rated_frequency_hz": "50", "rated_speed_rpm": "2940", "rated_power_factor": "0.88",
         "rated_efficiency_pct": "92.7", "design": "N", "driven_load": "variable_torque"}
NEMA = {**PLATE, "tag": "S-2", "rated_power_kw": "", "rated_power_hp": "100", "rated_voltage_v": "460",
        "rated_current_a": "114", "rated_frequency_hz": "60", "rated_speed_rpm": "1785", "rated_power_factor": "0.86",
        "rated_efficiency_pct": "95.4", "service_factor": "1.15", "design": "B"}
RUN = {"frequency_hz": "50.02", "speed_rpm": "2956", "current_l1_a": "32.8", "current_l2_a": "32.1",
       "current_l3_a": "32.2", "voltage_l12_v": "408", "voltage_l23_v": "406", "voltage_l31_v": "407",
       "taken_at": "2026-11-24T07:30:00+01:00"}
RUN_60 = {**RUN, "frequency_hz": "60", "speed_rpm": "1787", "current_l1_a": "98", "current_l2_a": "98",
          "current_l3_a": "97", "voltage_l12_v": "478", "voltage_l23_v": "476", "voltage_l31_v": "477"}
INSTRUMENTS = "Insulation tester; MT-4471; 2027-03-31\nMicro-ohmmeter; LR-0392; 2026-11-23"

# (name, nameplate, reading, tests, refused field or None): every sheet field at least once, each state
CASES = [
    ("every test clear", PLATE, RUN, dict(
        insulation_resistance_1min_mohm="850", insulation_resistance_10min_mohm="2400", insulation_test_voltage_v="500",
        winding_temperature_c="18", winding_type="random", insulation_class="F", winding_made_before_1970="no",
        winding_resistance_l12_ohm="0.412", winding_resistance_l23_ohm="0.414", winding_resistance_l31_ohm="0.413",
        winding_material="copper", overload_setting_a="39", starter="direct", vibration_velocity_mm_s="1.1",
        foundation="rigid", rotation_correct="yes", instruments="Insulation tester; MT-4471; 2027-03-31",
        notes="First run after installation."), None),
    ("every test beyond", PLATE, RUN, dict(
        insulation_resistance_1min_mohm="1,8", insulation_resistance_10min_mohm="2.2", insulation_test_voltage_v="1000",
        winding_temperature_c="12", winding_type="Random", insulation_class="a",
        winding_resistance_l12_ohm="1.52", winding_resistance_l23_ohm="1.61", winding_resistance_l31_ohm="1.60",
        winding_material="ALUMINIUM", overload_setting_a="30", starter="direct", vibration_velocity_mm_s="7.2",
        foundation="flexible", rotation_correct="no", instruments=INSTRUMENTS, notes="=cmd|' /C calc'!A0"), None),
    ("at the limit", PLATE, RUN, dict(
        insulation_resistance_1min_mohm="5", winding_temperature_c="40", winding_resistance_l12_ohm="102",
        winding_resistance_l23_ohm="100", winding_resistance_l31_ohm="98", overload_setting_a="40.95",
        starter="direct", vibration_velocity_mm_s="2.8"), None),
    ("star-delta on NEMA", NEMA, RUN_60, dict(overload_setting_a="114", starter="star_delta",
                                              winding_made_before_1970="yes", insulation_resistance_1min_mohm="3",
                                              winding_temperature_c="30"), None),
    ("soft starter and drive", NEMA, RUN_60, dict(overload_setting_a="142", starter="soft"), None),
    ("refused: resistance out of range", PLATE, RUN, dict(winding_resistance_l12_ohm="0"), "winding_resistance_l12_ohm"),
    ("refused: unknown starter", PLATE, RUN, dict(overload_setting_a="39", starter="wye-delta"), "starter"),
    ("refused: relay without starter", PLATE, RUN, dict(overload_setting_a="39"), "starter"),
    ("refused: IR without temperature", PLATE, RUN, dict(insulation_resistance_1min_mohm="100"),
     "winding_temperature_c"),
    ("refused: instruments line", PLATE, RUN, dict(instruments="Clamp; 2027-01-01"), "instruments"),
    ("refused: vibration", PLATE, RUN, dict(vibration_velocity_mm_s="101"), "vibration_velocity_mm_s"),
    ("refused: foundation", PLATE, RUN, dict(vibration_velocity_mm_s="2", foundation="concrete"), "foundation"),
    ("refused: rotation", PLATE, RUN, dict(rotation_correct="maybe"), "rotation_correct"),
    ("refused: insulation class", PLATE, RUN, dict(insulation_class="E"), "insulation_class"),
    ("refused: test voltage", PLATE, RUN, dict(insulation_test_voltage_v="20000"), "insulation_test_voltage_v"),
    ("refused: temperature", PLATE, RUN, dict(winding_temperature_c="abc"), "winding_temperature_c"),
    ("refused: 10-min without 1-min", PLATE, RUN, dict(insulation_resistance_10min_mohm="200"),
     "insulation_resistance_1min_mohm"),
    ("refused: winding type", PLATE, RUN, dict(winding_type="hairpin"), "winding_type"),
    ("refused: material", PLATE, RUN, dict(winding_material="aluminum"), "winding_material"),
    ("refused: before 1970", PLATE, RUN, dict(winding_made_before_1970="1969"), "winding_made_before_1970"),
    ("refused: notes too long", PLATE, RUN, dict(notes="n" * 2001), "notes"),
    ("refused: relay setting", PLATE, RUN, dict(overload_setting_a="-3", starter="direct"), "overload_setting_a"),
    ("refused: 10-min IR", PLATE, RUN, dict(insulation_resistance_1min_mohm="10", winding_temperature_c="20",
                                            insulation_resistance_10min_mohm="x"), "insulation_resistance_10min_mohm"),
    ("refused: resistance L2-L3", PLATE, RUN, dict(winding_resistance_l23_ohm="1e6"), "winding_resistance_l23_ohm"),
    ("refused: resistance L3-L1", PLATE, RUN, dict(winding_resistance_l31_ohm="1 000"), "winding_resistance_l31_ohm"),
]
IDS = [c[0] for c in CASES]


def test_cases_cover_every_sheet_field():
    used = set()
    for _, _, _, tests, refused in CASES:
        used |= set(tests)
    assert used == set(C.TEST_FIELDS)
    refused = {c[4] for c in CASES if c[4]}
    assert set(C.TEST_FIELDS) - {"notes"} - refused == set(), set(C.TEST_FIELDS) - refused


@pytest.fixture(scope="module")
def analyzed(tmp_path_factory):
    folder = tmp_path_factory.mktemp("sheet")
    rows = [{**plate, **reading, **tests} for _, plate, reading, tests, _ in CASES]
    src, out = folder / "in.csv", folder / "out.csv"
    pd.DataFrame(rows).fillna("").to_csv(src, index=False)
    proc = run_analyze(src, "-o", out)
    assert proc.returncode in (0, 1), proc.stderr
    frame = pd.read_csv(out, keep_default_na=False, dtype=str)
    return dict(zip(IDS, frame.to_dict("records")))


@pytest.mark.parametrize("name, plate, reading, tests, refused", CASES, ids=IDS)
def test_analyze_and_api_agree(tech, analyzed, name, plate, reading, tests, refused):
    body = {k: v for k, v in {**plate, **reading, **tests}.items() if v != ""}
    r = tech.post("/api/v1/interpret", json=body)
    row = analyzed[name]
    if refused:
        assert r.status_code == 400, r.get_data(as_text=True)[:300]
        err = r.get_json()["error"]
        assert err["field"] == refused and refused in err["message"], err
        assert row["error_field"] == refused and refused in row["error"], row["error"]
        return
    assert r.status_code == 200, r.get_data(as_text=True)[:300]
    assert row["error"] == ""
    api = r.get_json()
    want = dict(zip(C.RESULT_COLUMNS, result_cells(api)))
    got = {c: row[c] for c in C.RESULT_COLUMNS}
    assert got == want
    assert row["cautions"] == cautions_cell(api)


def test_the_cases_reach_each_state(analyzed):
    beyond = analyzed["every test beyond"]
    assert set(beyond["flags"].split(";")) >= {
        "insulation_low", "polarization_index_low", "winding_resistance_unbalance", "overload_setting_low",
        "vibration_high", "rotation_wrong", "instrument_calibration_expired"}
    assert beyond["vibration_zone"] == "D" and beyond["notes"].startswith("'=")   # neutralised in the record
    clear = analyzed["every test clear"]
    assert clear["verdict"] == "sound" and clear["flags"] == ""
    limit = analyzed["at the limit"]
    assert set(limit["limit_flags"].split(";")) >= {"insulation_low", "winding_resistance_unbalance",
                                                    "overload_setting_high", "vibration_high"}
    assert "overload_setting_high" in analyzed["star-delta on NEMA"]["flags"]


def test_instrument_date_pattern_is_the_calendar_exactly():
    """The instruments line's date pattern (also the OpenAPI document's) admits exactly the real dates of
    2000-2099, leap days included, checked day by day against Python's datetime (the reference calendar):
    the document must not admit a date the service refuses (2000-11-31 once slipped through)."""
    import datetime
    import re

    from slipwise.contract.fields import _DATE_20XX

    pattern = re.compile(f"^{_DATE_20XX}$")
    real, day = set(), datetime.date(2000, 1, 1)
    while day.year < 2100:
        real.add(day.isoformat())
        day += datetime.timedelta(days=1)
    wrong = [t for t in (f"{y}-{m:02d}-{d:02d}" for y in range(2000, 2100) for m in range(1, 13) for d in range(1, 32))
             if bool(pattern.match(t)) != (t in real)]
    assert wrong == [] and len(real) == 36525
