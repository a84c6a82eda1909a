"""One commissioning-record writer: `slipwise analyze` and the CSV export agree cell for cell."""

from __future__ import annotations

import csv
import io
import re
from pathlib import Path

import pandas as pd

from slipwise import contract as C
from slipwise.cli_analyze import _csv_frame, analyze_frame
from slipwise.engine.records import RESULT_DECIMALS, number_cell

from .conftest import reading_body

ROOT = Path(__file__).resolve().parents[2]
SERVER = ROOT / "server" / "slipwise"


def _export_rows(client) -> list[dict]:
    text = client.get("/api/v1/export.csv").get_data(as_text=True)
    return list(csv.DictReader(io.StringIO(text)))


def _analyze_rows(reading: dict) -> list[dict]:
    record = {**reading["motor_inputs"], **reading["inputs"]}
    frame = pd.DataFrame([{k: v for k, v in record.items() if k in C.INPUT_FIELDS}])
    buf = io.StringIO()
    _csv_frame(analyze_frame(frame)).to_csv(buf, index=False, lineterminator="\n")
    return list(csv.DictReader(io.StringIO(buf.getvalue())))


def test_analyze_and_export_write_the_same_shared_cells(app, tech, sup, motor):
    body = reading_body(motor["id"], speed_rpm=1468, current_l1_a=17.5, current_l2_a=21.5, current_l3_a=21.0)
    stored = tech.post("/api/v1/readings", json=body).get_json()
    assert stored["result"]["flags"], "the reading should raise a flag so findings and cautions are compared"
    exported = _export_rows(sup)[0]
    motor_inputs = {k: v for k, v in motor.items() if k in C.NAMEPLATE_FIELDS and v is not None}
    analyzed = _analyze_rows({"motor_inputs": motor_inputs, "inputs": stored["inputs"]})[0]
    for col in C.RESULT_COLUMNS + ("cautions",):
        assert analyzed[col] == exported[col], col
    assert exported["findings"] and exported["cautions"]


def _decimals(text: str) -> int:
    return len(text.split(".", 1)[1]) if "." in text else 0


def test_no_result_cell_has_more_digits_than_its_rule(app, tech, sup, motor):
    for speed in (1468, 1471, 1477):
        tech.post("/api/v1/readings", json=reading_body(motor["id"], speed_rpm=speed))
    rows = _export_rows(sup)
    frame = pd.read_csv(ROOT / "field_samples" / "plant_day.csv", dtype=str, keep_default_na=False)
    frame = frame.replace("", None)
    buf = io.StringIO()
    _csv_frame(analyze_frame(frame)).to_csv(buf, index=False, lineterminator="\n")
    rows += list(csv.DictReader(io.StringIO(buf.getvalue())))
    seen = 0
    for row in rows:
        for col, places in RESULT_DECIMALS.items():
            cell = row[col]
            if cell:
                float(cell)
                assert _decimals(cell) <= places, (col, cell)
                seen += 1
    assert seen > 500


def test_the_rule_table_is_the_only_place_digits_are_set():
    # no float_format, round() or fixed-point format spec in the code that writes either CSV
    writers = [SERVER / "cli_analyze.py", SERVER / "web" / "export.py"]
    for path in writers:
        text = path.read_text(encoding="utf-8")
        assert "float_format" not in text and not re.search(r"\bround\(", text), path
        assert not re.search(r":\.\d+f\}", text), path
    # the writer itself holds no digit count of its own: every format comes from the table
    records = (SERVER / "engine" / "records.py").read_text(encoding="utf-8")
    assert not re.search(r"[\"']\.\d+f", records) and not re.search(r":\.\d+f\}", records)
    numeric = [c for c in C.RESULT_COLUMNS if c not in C.TEXT_RESULT_COLUMNS]
    assert sorted(RESULT_DECIMALS) == sorted(numeric)
    # and the table is what the cells follow: 1/3 has exactly the table's decimals in each column
    for col, places in RESULT_DECIMALS.items():
        assert _decimals(number_cell(col, 1 / 3)) == places, col
