"""One table of hostile raw values, fed to every entry point: the same decision and the same field everywhere.

Entry points: the API (``POST /api/v1/interpret``, the value as a JSON string), the page's
checks (``static/js/fieldrules.js`` with ``static/fields.json``, run in node), the contract's
vectorised parser (``parse_column``, what ``slipwise analyze`` switches to) and its scalar
one (``parse_value``). ``slipwise analyze`` itself is the last test, as a subprocess; the table's
last column records the rows where release 2's analyze decided differently (it has since been
switched to the contract's parser, so every row must now agree).

The expected decisions are the cell rules of ``slipwise.contract.cells`` (its docstring has them
in words); each row says why where it is not obvious.
"""

from __future__ import annotations

import json
import math
import shutil
import subprocess
from pathlib import Path

import pandas as pd
import pytest

from slipwise.contract import FieldError, parse_column, parse_value
from slipwise.web.openapi import EXAMPLES
from tests.engine.test_cli_analyze import run as run_analyze
from tests.service.conftest import app, database, static_dir, tech  # noqa: F401  (fixtures)

ROOT = Path(__file__).resolve().parents[2]
REFUSED = object()

# (id, field, raw, expected value or REFUSED, release 2's analyze decided differently)
TABLE = [
    ("decimal comma", "frequency_hz", "50,0", 50.0, True),
    ("surrounding spaces", "frequency_hz", " 50 ", 50.0, False),
    ("exponent", "frequency_hz", "5e1", 50.0, False),
    ("beyond float range", "frequency_hz", "1e400", REFUSED, False),      # infinite: out of range
    ("inf text", "frequency_hz", "inf", REFUSED, False),
    ("Infinity text", "frequency_hz", "Infinity", REFUSED, False),
    ("NaN text", "frequency_hz", "NaN", REFUSED, False),
    ("minus zero out of range", "frequency_hz", "-0", REFUSED, False),      # 0 Hz is below 1 Hz
    ("minus zero in range", "minutes_running", "-0", 0.0, False),         # -0 is 0
    ("space as thousands separator", "frequency_hz", "1 000", REFUSED, False),
    ("underscore as thousands separator", "speed_rpm", "1_472", REFUSED, True),
    ("comma and three digits is ambiguous", "frequency_hz", "1,500", REFUSED, False),
    ("Arabic-Indic digits", "frequency_hz", "\u0665\u0660", REFUSED, True),
    ("trailing point", "frequency_hz", "50.", 50.0, False),
    ("leading point", "power_factor", ".5", 0.5, False),
    ("plus sign", "frequency_hz", "+50", 50.0, False),
    ("no-break space around", "frequency_hz", "\u00a050\u00a0", 50.0, False),
    ("hexadecimal", "frequency_hz", "0x32", REFUSED, False),
    ("whole number written with a point", "poles", "4.0", 4, False),
    ("fraction for a whole-number field", "poles", "4.5", REFUSED, False),
    ("choice in another case", "design", "b", "B", False),
    ("choice unknown", "design", "Z", REFUSED, False),
    ("tag with zero-width space", "tag", "P-1\u200b01", REFUSED, True),
    ("tag with right-to-left override", "tag", "P-1\u202e01", REFUSED, True),
    ("tag with soft hyphen", "tag", "P-1\u00ad01", REFUSED, True),
    ("tag with an emoji", "tag", "P-101 \U0001F525", "P-101 \U0001F525", False),
    ("tag with a private-use character", "tag", "P-\U000F3F82", REFUSED, True),
    ("tag in Greek", "tag", "Αντλία-3", "Αντλία-3", False),
    ("tag with a newline", "tag", "P-1\n01", REFUSED, False),
    ("tag of 81 characters", "tag", "P" * 81, REFUSED, False),
    ("tag of 80 characters", "tag", "P" * 80, "P" * 80, False),
    ("tag with spaces around", "tag", " P-101 ", "P-101", False),
    # the commissioning sheet's tests (engine 1.2.0)
    ("insulation test voltage with a decimal comma", "insulation_test_voltage_v", "500,0", 500.0, False),
    ("insulation resistance negative", "insulation_resistance_1min_mohm", "-1", REFUSED, False),
    ("insulation resistance words", "insulation_resistance_1min_mohm", ">2000", REFUSED, False),
    ("insulation resistance beyond 1 TΩ", "insulation_resistance_10min_mohm", "2e6", REFUSED, False),
    ("insulation test voltage below 50 V", "insulation_test_voltage_v", "10", REFUSED, False),
    ("winding temperature below -40 °C", "winding_temperature_c", "-41", REFUSED, False),
    ("winding temperature negative, allowed", "winding_temperature_c", "-5", -5.0, False),
    ("winding resistance zero", "winding_resistance_l12_ohm", "0", REFUSED, False),
    ("winding resistance ambiguous comma", "winding_resistance_l23_ohm", "1,250", REFUSED, False),
    ("winding resistance small", "winding_resistance_l31_ohm", "0,0125", 0.0125, False),
    ("overload setting zero", "overload_setting_a", "0", REFUSED, False),
    ("vibration above 100 mm/s", "vibration_velocity_mm_s", "150", REFUSED, False),
    ("vibration in inches", "vibration_velocity_mm_s", "0.1in/s", REFUSED, False),
    ("winding type another case", "winding_type", "Form", "form", False),
    ("winding type unknown", "winding_type", "hairpin", REFUSED, False),
    ("insulation class lower case", "insulation_class", "f", "F", False),
    ("insulation class E unknown", "insulation_class", "E", REFUSED, False),
    ("winding material aluminum spelling", "winding_material", "aluminum", REFUSED, False),
    ("starter star-delta with a hyphen", "starter", "star-delta", REFUSED, False),
    ("starter upper case", "starter", "STAR_DELTA", "star_delta", False),
    ("foundation unknown", "foundation", "soft", REFUSED, False),
    ("rotation true is not yes", "rotation_correct", "true", REFUSED, False),
    ("rotation YES", "rotation_correct", "YES", "yes", False),
    ("instruments, two lines", "instruments", "IR tester; A-1; 2030-01-31\nClamp; C-9; 2030-06-30",
     "IR tester; A-1; 2030-01-31\nClamp; C-9; 2030-06-30", False),
    ("instruments without a serial", "instruments", "IR tester; 2030-01-31", REFUSED, False),
    ("instruments with a blank serial", "instruments", "IR tester; ; 2030-01-31", REFUSED, False),
    ("instruments with a day that does not exist", "instruments", "IR tester; A-1; 2030-02-30", REFUSED, False),
    ("instruments with a day-first date", "instruments", "IR tester; A-1; 31/01/2030", REFUSED, False),
    ("instruments with a control character", "instruments", "IR tester; A\x07; 2030-01-31", REFUSED, False),
    ("notes on two lines", "notes", "Coupling checked.\nGuard refitted.", "Coupling checked.\nGuard refitted.", False),
    ("notes of 2001 characters", "notes", "n" * 2001, REFUSED, False),
]
IDS = [row[0] for row in TABLE]


def _same(value, expected) -> bool:
    if expected is REFUSED:
        return value is REFUSED
    if isinstance(expected, float):
        return isinstance(value, (int, float)) and math.isclose(value, expected)
    return value == expected


# --------------------------------------------------------------------------- the contract
@pytest.mark.parametrize("name, field, raw, expected, _", TABLE, ids=IDS)
def test_contract_scalar(name, field, raw, expected, _):
    try:
        value = parse_value(field, raw)
    except FieldError as e:
        assert e.field == field and field in e.message
        value = REFUSED
    assert _same(value, expected), (raw, value)


@pytest.mark.parametrize("name, field, raw, expected, _", TABLE, ids=IDS)
def test_contract_vectorised(name, field, raw, expected, _):
    # the raw value among good ones, in a column as pandas reads a CSV of text
    good = {"tag": "P-1", "design": "N", "power_factor": "0.8", "poles": "4", "speed_rpm": "1472", "winding_type": "form",
            "insulation_class": "F", "winding_material": "copper", "starter": "direct", "foundation": "rigid",
            "rotation_correct": "yes", "instruments": "IR tester; A-1; 2030-01-31", "notes": "ok"}.get(field, "50")
    column = pd.Series([good, raw, None], dtype=object)
    values, messages = parse_column(field, column)
    value = REFUSED if messages[1] else values[1]
    assert _same(value, expected), (raw, value, messages[1])
    if expected is REFUSED:
        assert field in messages[1]
    assert messages[0] == "" and messages[2] == ""


# --------------------------------------------------------------------------- the API
def _body(field, raw) -> dict:
    body = dict(EXAMPLES["InterpretInput"])
    body[field] = raw
    return body


@pytest.mark.parametrize("name, field, raw, expected, _", TABLE, ids=IDS)
def test_api(tech, name, field, raw, expected, _):
    r = tech.post("/api/v1/interpret", json=_body(field, raw))
    if expected is REFUSED:
        assert r.status_code == 400, r.get_data(as_text=True)[:300]
        err = r.get_json()["error"]
        assert err["field"] == field and field in err["message"], err
    else:
        assert r.status_code == 200, r.get_data(as_text=True)[:300]


# --------------------------------------------------------------------------- the page
NODE_SCRIPT = """
const fs = await import("node:fs");
const { fieldsFrom, parseField, parseText, parseChoice } = await import(process.argv[1] + "/static/js/fieldrules.js");
const decl = JSON.parse(fs.readFileSync(process.argv[1] + "/static/fields.json", "utf8"));
const F = fieldsFrom(decl);
const rows = JSON.parse(fs.readFileSync(0, "utf8"));
const out = rows.map(([field, raw]) => {
  let r;
  if (field in F.TEXT) r = parseText(F.TEXT[field], raw);
  else if (field in F.FIELD) r = parseField(F.FIELD[field], raw);
  else r = parseChoice(F.CHOICE[field], raw, F.NAMEPLATE_NUMBERS[0].rules);
  return { value: r.value, refused: r.error !== null, error: r.error };
});
process.stdout.write(JSON.stringify(out));
"""


@pytest.fixture(scope="module")
def page_decisions():
    node = shutil.which("node")
    if node is None:
        pytest.skip("node is not installed")
    proc = subprocess.run([node, "--experimental-default-type=module", "--input-type=module", "-e", NODE_SCRIPT,
                           str(ROOT)], input=json.dumps([[f, raw] for _, f, raw, _, _ in TABLE]),
                          capture_output=True, text=True, timeout=60)
    assert proc.returncode == 0, proc.stderr
    return dict(zip(IDS, json.loads(proc.stdout)))


@pytest.mark.parametrize("name, field, raw, expected, _", TABLE, ids=IDS)
def test_page(page_decisions, name, field, raw, expected, _):
    got = page_decisions[name]
    value = REFUSED if got["refused"] else got["value"]
    assert _same(value, expected), (raw, got)


# --------------------------------------------------------------------------- slipwise analyze (hook)
PLATE = {"tag": "P-1", "rated_power_kw": "11", "rated_voltage_v": "400", "rated_current_a": "21.5",
         "rated_frequency_hz": "50", "rated_speed_rpm": "1460", "design": "N"}
READING = {"frequency_hz": "50", "speed_rpm": "1472", "current_l1_a": "16.4", "current_l2_a": "16.8",
           "current_l3_a": "16.2", "voltage_l12_v": "402", "voltage_l23_v": "398", "voltage_l31_v": "405",
           "power_factor": "0.8", "minutes_running": "30"}


@pytest.fixture(scope="module")
def analyze_decisions(tmp_path_factory):
    """One CSV, one row per table entry (the entry's field set to its raw value), through the real CLI."""
    folder = tmp_path_factory.mktemp("hostile")
    rows = [{**PLATE, **READING, field: raw} for _, field, raw, _, _ in TABLE]
    src, out = folder / "in.csv", folder / "out.csv"
    pd.DataFrame(rows).to_csv(src, index=False)
    proc = run_analyze(src, "-o", out)
    assert proc.returncode in (0, 1), proc.stderr
    frame = pd.read_csv(out, keep_default_na=False, dtype=str)
    return dict(zip(IDS, frame[["error", "error_field"]].to_dict("records")))


@pytest.mark.parametrize("name, field, raw, expected, analyze_differed", TABLE, ids=IDS)
def test_analyze(analyze_decisions, name, field, raw, expected, analyze_differed):
    got = analyze_decisions[name]
    if expected is REFUSED:
        assert got["error_field"] == field, got
    else:
        assert got["error"] == "", got
