"""The day's log JSON (GET /api/v1/readings): written by one format string per reading and streamed in pieces;
the text must be exactly what encoding each reading's mapping with json.dumps gives."""

from __future__ import annotations

import json

from slipwise.services import readings as reading_services
import slipwise.web.readings as views
from slipwise.web import render

from .conftest import MOTOR, reading_body

# the keys of a reading in the order the API has always written them (web/render.py before it wrote them by hand)
HEAD_KEYS = ("id", "client_id", "motor_id", "motor_revision", "motor_revision_id", "site", "tag", "technician",
             "technician_name", "taken_at", "received_at", "engine_version", "supersedes", "superseded_by",
             "fingerprint", "review")


def _by_the_encoder(row) -> str:
    """The reference: the mapping encoded by json.dumps, inputs and result spliced as stored."""
    head = {"id": row["id"], "client_id": row["client_id"], "motor_id": row["motor_id"],
            "motor_revision": row["motor_revision"], "motor_revision_id": row["motor_revision_id"],
            "site": row["site"], "tag": row["tag"], "technician": row["technician"],
            "technician_name": row["technician_name"], "taken_at": row["taken_at"],
            "received_at": row["received_at"].isoformat(), "engine_version": row["engine_version"],
            "supersedes": row["supersedes_id"], "superseded_by": row["superseded_by"],
            "fingerprint": row["fingerprint"],
            "review": None if row["decision"] is None else {
                "decision": row["decision"], "comment": row["comment"], "reviewer": row["reviewer"],
                "reviewer_name": row["reviewer_name"] or None, "reviewed_at": row["reviewed_at"].isoformat(),
                "fingerprint": row["review_fingerprint"]}}
    text = json.dumps(head, ensure_ascii=False, separators=(",", ":"))
    return (text[:-1] + ',"inputs":' + render.served_inputs_text(row) + ',"result":' + render.served_result_text(row)
            + "}")


def test_day_log_text_is_the_encoders_for_awkward_text(app, sup, tech):
    """Quotes, backslashes, control characters, line and paragraph separators and non-Latin letters in the
    free text of a site, a tag and a review comment; a reading superseded, one reviewed, one not."""
    motor = sup.post("/api/v1/motors", json={**MOTOR, "site": 'Mühle "Süd" \\ 北', "tag": "P-1 «ä»"}).get_json()
    first = tech.post("/api/v1/readings", json=reading_body(motor["id"])).get_json()
    comment = 'say "again"\\ \u2028 tab\there \u00e9\u4e2d \U0001F527 </script>'
    assert sup.post(f"/api/v1/readings/{first['id']}/review",
                    json={"decision": "retake", "comment": comment}).status_code == 201
    second = tech.post("/api/v1/readings", json=reading_body(motor["id"], supersedes=first["id"])).get_json()
    tech.post("/api/v1/readings", json=reading_body(motor["id"], speed_rpm=1470))
    rows = reading_services.day_log(app.extensions["slipwise"].db, date="2025-03-14")
    assert len(rows) == 3 and rows[0]["decision"] == "retake" and rows[0]["superseded_by"] == second["id"]
    for row in rows:
        assert render.reading_json(row) == _by_the_encoder(row)
    parsed = json.loads(render.reading_json(rows[0]))
    assert list(parsed) == [*HEAD_KEYS, "inputs", "result"]
    assert parsed["site"] == 'Mühle "Süd" \\ 北' and parsed["review"]["comment"] == comment

    served = tech.get("/api/v1/readings?date=2025-03-14")
    assert served.status_code == 200 and served.headers["Content-Type"] == "application/json"
    assert served.get_data(as_text=True) == ('{"count":3,"readings":[' + ",".join(_by_the_encoder(r) for r in rows)
                                             + "]}")


def test_day_log_pieces_join_to_one_document(app, tech, motor, monkeypatch):
    for k in range(5):
        tech.post("/api/v1/readings", json=reading_body(motor["id"], speed_rpm=1466 + k))
    rows = reading_services.day_log(app.extensions["slipwise"].db, date="2025-03-14")
    whole = render.day_log_json(rows)
    for per_chunk in (1, 2, 5, 500):
        pieces = list(render.day_log_chunks(rows, per_chunk))
        assert "".join(pieces) == whole
        assert len(pieces) == 2 + -(-5 // per_chunk)
    doc = json.loads(whole)
    assert doc["count"] == 5 and [r["id"] for r in doc["readings"]] == [r["id"] for r in rows]
    assert render.day_log_json([]) == '{"count":0,"readings":[]}'
    # a day longer than one piece is streamed (no Content-Length), a short one is sent whole: the same text
    whole_served = tech.get("/api/v1/readings?date=2025-03-14")
    assert whole_served.headers["Content-Length"] == str(len(whole.encode("utf-8")))
    assert whole_served.get_data(as_text=True) == whole
    monkeypatch.setattr(views, "DAY_LOG_PIECE", 2)
    streamed = tech.get("/api/v1/readings?date=2025-03-14")
    assert "Content-Length" not in streamed.headers and streamed.headers["Content-Type"] == "application/json"
    assert streamed.get_data(as_text=True) == whole
    assert json.loads(tech.get("/api/v1/readings?date=2001-01-01").get_data()) == {"count": 0, "readings": []}
