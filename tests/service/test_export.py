"""GET /api/v1/export.csv read back with pandas; formula neutralisation."""

from __future__ import annotations

import io

import pandas as pd
import pytest

from slipwise.contract import RESULT_COLUMNS
from slipwise.engine.records import number_cell
from slipwise.web.export import EXPORT_COLUMNS, neutralise

from .conftest import MOTOR, reading_body


def _frame(resp) -> pd.DataFrame:
    assert resp.status_code == 200
    assert resp.headers["Content-Type"] == "text/csv; charset=utf-8"
    assert "attachment" in resp.headers["Content-Disposition"]
    return pd.read_csv(io.StringIO(resp.get_data(as_text=True)), dtype={"client_id": str})


def test_export_round_trip(app, tech, tech2, sup, motor):
    stored = [tech.post("/api/v1/readings", json=reading_body(motor["id"])).get_json(),
              tech2.post("/api/v1/readings", json=reading_body(
                  motor["id"], speed_rpm=1468, current_l1_a=17.5, current_l2_a=21.5, current_l3_a=21.0,
                  taken_at="2025-03-14T14:10:00+01:00")).get_json(),
              tech.post("/api/v1/readings", json=reading_body(motor["id"], taken_at="2025-03-16T08:00:00")).get_json()]
    sup.post(f"/api/v1/readings/{stored[0]['id']}/review", json={"decision": "accepted"})
    frame = _frame(sup.get("/api/v1/export.csv?date=2025-03-14"))
    assert tuple(frame.columns) == EXPORT_COLUMNS
    assert list(frame["reading_id"]) == [stored[0]["id"], stored[1]["id"]]
    for i, reading in enumerate(stored[:2]):
        row = frame.iloc[i]
        assert row["client_id"] == reading["client_id"]
        assert row["site"] == "Harbour Mill" and row["tag"] == "PMP-07"
        assert row["rated_speed_rpm"] == 1460.0 and row["speed_rpm"] == reading["inputs"]["speed_rpm"]
        for col in ("slip_pct", "load_pct", "load_low_pct", "load_high_pct", "efficiency_pct", "breakdown_margin",
                    "current_unbalance_pct"):
            # exact round trip of the value rounded by the record's one rule table
            assert row[col] == float(number_cell(col, reading["result"][col])), col
        assert row["technician"] == reading["technician"]
        assert row["engine_version"] == reading["engine_version"]
        flags = "" if pd.isna(row["flags"]) else row["flags"]
        assert [c for c in flags.split(";") if c] == reading["result"]["flags"]
    assert frame.iloc[0]["review_decision"] == "accepted" and frame.iloc[0]["reviewer"] == "sue"
    assert pd.isna(frame.iloc[1]["review_decision"])
    assert "current_unbalance" in frame.iloc[1]["flags"].split(";")
    texts = [f["text"] for f in stored[1]["result"]["findings"]]
    assert frame.iloc[1]["findings"] == " | ".join(texts)
    # every result column of the contract, in contract order
    cols = list(frame.columns)
    assert [c for c in cols if c in RESULT_COLUMNS] == list(RESULT_COLUMNS)
    assert cols.index("taken_at") < cols.index(RESULT_COLUMNS[0])
    assert len(_frame(sup.get("/api/v1/export.csv"))) == 3
    assert len(_frame(sup.get("/api/v1/export.csv?site=Nowhere"))) == 0
    assert sup.get("/api/v1/export.csv?date=14.03.2025").status_code == 400


def test_formula_cells_are_neutralised(app, tech, sup):
    motor = sup.post("/api/v1/motors", json={**MOTOR, "site": "=HYPERLINK(\"http://example.invalid\",\"x\")",
                                             "tag": "@SUM(A1:A9)", "location": "+41 22 555", "description": "-1+2"}
                     ).get_json()
    reading = tech.post("/api/v1/readings", json=reading_body(motor["id"])).get_json()
    sup.post(f"/api/v1/readings/{reading['id']}/review", json={"decision": "rejected", "comment": "=cmd|' /C calc'!A0"})
    text = sup.get("/api/v1/export.csv").get_data(as_text=True)
    frame = pd.read_csv(io.StringIO(text))
    row = frame.iloc[0]
    assert row["site"] == "'=HYPERLINK(\"http://example.invalid\",\"x\")"
    assert row["tag"] == "'@SUM(A1:A9)"
    assert row["location"] == "'+41 22 555"
    assert row["description"] == "'-1+2"
    assert row["review_comment"] == "'=cmd|' /C calc'!A0"
    # no text cell of the file starts with a formula character any more (negative numbers are numbers)
    cells = pd.read_csv(io.StringIO(text), dtype=str, keep_default_na=False).to_numpy().ravel()
    for cell in cells:
        if cell:
            assert cell[0] not in "=+@\t\r" and (cell[0] != "-" or _is_number(cell)), cell
    assert isinstance(row["voltage_deviation_pct"], float)


def _is_number(text: str) -> bool:
    try:
        float(text)
        return True
    except ValueError:
        return False


@pytest.mark.parametrize("value,expected", [
    ("=1+1", "'=1+1"), ("+1", "'+1"), ("-1", "'-1"), ("@A1", "'@A1"), ("\tx", "'\tx"), ("\rx", "'\rx"),
    ("plain", "plain"), ("", ""), (-1.5, -1.5), (None, None), (3, 3)])
def test_neutralise(value, expected):
    assert neutralise(value) == expected


def test_record_keeps_every_review_and_follows_the_day_log_filters(app, tech, tech2, sup, motor):
    """A reject and its comment stay in the record after a later accept; the reviewer by full name; the
    export takes the day log's technician and finding filters and a date range (issue 12, item 5)."""
    body = reading_body(motor["id"], taken_at="2025-04-01T09:00:00+02:00")
    first = tech.post("/api/v1/readings", json=body).get_json()
    odd = tech2.post("/api/v1/readings", json=reading_body(
        motor["id"], speed_rpm=1468, current_l1_a=17.5, current_l2_a=21.5, current_l3_a=21.0,
        taken_at="2025-04-02T14:10:00+01:00")).get_json()
    tech.post("/api/v1/readings", json=reading_body(motor["id"], taken_at="2025-04-05T08:00:00")).get_json()
    assert sup.post(f"/api/v1/readings/{first['id']}/review",
                    json={"decision": "rejected", "comment": "clamp on the wrong phase"}).status_code == 201
    assert sup.post(f"/api/v1/readings/{first['id']}/review", json={"decision": "accepted"}).status_code == 201
    frame = _frame(sup.get("/api/v1/export.csv?date_from=2025-04-01&date_to=2025-04-02"))
    assert tuple(frame.columns) == EXPORT_COLUMNS and EXPORT_COLUMNS[-2:] == ("reviewer_name", "review_history")
    assert list(frame["reading_id"]) == [first["id"], odd["id"]]
    row = frame.iloc[0]
    assert row["review_decision"] == "accepted" and row["reviewer"] == "sue"
    history = row["review_history"].split(" | ")
    assert len(history) == 2
    assert " rejected by " in history[0] and history[0].endswith(": clamp on the wrong phase")
    assert " accepted by " in history[1]
    name = row["reviewer_name"]
    assert isinstance(name, str) and name and f"by {name} (sue)" in history[0]
    assert pd.isna(frame.iloc[1]["review_history"])
    assert list(_frame(sup.get("/api/v1/export.csv?technician=" + odd["technician"]))["reading_id"]) == [odd["id"]]
    flagged = _frame(sup.get("/api/v1/export.csv?flag=current_unbalance&date_from=2025-04-01"))
    assert list(flagged["reading_id"]) == [odd["id"]]
    assert len(_frame(sup.get("/api/v1/export.csv?date_from=2025-04-03&date_to=2025-04-02"))) == 0
    assert sup.get("/api/v1/export.csv?date_to=2.4.2025").get_json()["error"]["field"] == "date_to"
