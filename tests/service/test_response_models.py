"""Every route's real answer conforms to the response model the document names for its status.

The demo day (field_samples/: 13 motors, 36 readings with flags, findings, refused and superseded readings)
is loaded into the test database, then each route is called through the Flask test client and its JSON is
checked twice: by the contract's pydantic model (strict, no unnamed keys) and by the document's own schema
(``jsonschema_rs``), so neither the models nor the document can drift from what the handlers return.
"""

from __future__ import annotations

import json
import re
from pathlib import Path

import jsonschema_rs
import pytest
from pydantic import ValidationError

from slipwise import demo
from slipwise.contract import RESULT_COLUMNS, RESULT_COLUMNS_1_0
from slipwise.contract.responses import RESPONSE_MODELS, Result
from slipwise.web.render import served_result_text
from tests.service.conftest import MOTOR, REPO, reading_body

CHECKED: set[tuple[str, str, str]] = set()  # (method, documented path, status) validated in this module


def _as_json_schema(node):
    """OpenAPI 3.0's ``nullable`` as JSON Schema: the schema or null."""
    if isinstance(node, list):
        return [_as_json_schema(v) for v in node]
    if not isinstance(node, dict):
        return node
    out = {k: _as_json_schema(v) for k, v in node.items() if k not in ("nullable", "readOnly")}
    return {"anyOf": [out, {"type": "null"}]} if node.get("nullable") else out


@pytest.fixture
def doc(anon):
    return anon.get("/api/v1/openapi.json").get_json()


@pytest.fixture
def check(doc):
    """check(method, url, response): validate the answer against what the document says for its status."""
    components = _as_json_schema(doc["components"])
    templates = [(re.compile("^" + re.sub(r"{[a-z_]+}", "[^/]+", p) + "$"), p) for p in doc["paths"]]

    def run(method: str, url: str, response) -> dict:
        path = url.split("?")[0][len("/api/v1"):]
        found = [t for rx, t in templates if rx.match(path) and method.lower() in doc["paths"][t]]
        (template,) = [t for t in found if t == path] or found  # a literal path (/readings/listing) wins
        documented = doc["paths"][template][method.lower()]["responses"]
        status = str(response.status_code)
        assert status in documented, (method, url, status, response.get_data(as_text=True)[:300])
        schema = documented[status]["content"]["application/json"]["schema"]
        name = schema["$ref"].rsplit("/", 1)[1]
        text = response.get_data(as_text=True)
        RESPONSE_MODELS[name].model_validate_json(text)  # raises on any mismatch, with the path of it
        validator = jsonschema_rs.validator_for({"$ref": schema["$ref"], "components": components})
        errors = [f"{e.instance_path}: {e.message}" for e in validator.iter_errors(json.loads(text))]
        assert not errors, (method, url, status, errors[:5])
        CHECKED.add((method.upper(), template, status))
        return json.loads(text)
    return run


@pytest.fixture
def demo_day(app, tmp_path):
    counts = demo.load(app.extensions["slipwise"].db, Path(REPO) / "field_samples", tmp_path)
    assert counts["readings_added"] >= 30, counts
    return app


def test_every_answer_matches_its_model(demo_day, doc, check, anon, tech, sup):
    ok = check("POST", "/api/v1/session", tech.client.post("/api/v1/session", json={"username": "tess",
                                                                                      "password": "tess-password-1"}))
    assert ok["csrf_token"] and ok["expires_at"]
    tech.csrf = ok["csrf_token"]  # the new session's
    check("GET", "/api/v1/session", tech.get("/api/v1/session"))
    check("GET", "/api/v1/health", anon.get("/api/v1/health"))

    motors = check("GET", "/api/v1/motors", tech.get("/api/v1/motors"))["motors"]
    assert len(motors) >= 13
    for m in motors:
        check("GET", f"/api/v1/motors/{m['id']}", tech.get(f"/api/v1/motors/{m['id']}"))
    made = check("POST", "/api/v1/motors", sup.post("/api/v1/motors", json=MOTOR))
    edit = MOTOR | {"rated_current_a": 28.9, "revision": 1}
    edited = check("PUT", f"/api/v1/motors/{made['id']}", sup.put(f"/api/v1/motors/{made['id']}", json=edit))
    assert [r["revision"] for r in edited["revisions"]] == [1, 2]

    readings = []
    for day in sorted({r["taken_at"][:10] for r in demo._rows(Path(REPO) / "field_samples" / "readings.csv")}):
        readings += check("GET", f"/api/v1/readings?date={day}", tech.get(f"/api/v1/readings?date={day}"))["readings"]
    assert len(readings) >= 30
    listed = []
    for day in sorted({r["taken_at"][:10] for r in readings}):
        url = f"/api/v1/readings/listing?date={day}&limit=5"
        while url:
            page = check("GET", url, tech.get(url))
            listed += page["readings"]
            url = page["next"]
    assert sorted(r["id"] for r in listed) == sorted(r["id"] for r in readings)
    for r in readings:
        one = check("GET", f"/api/v1/readings/{r['id']}", tech.get(f"/api/v1/readings/{r['id']}"))
        assert list(one["result"]) == list(RESULT_COLUMNS)  # every column, in the contract's order
        body = {k: v for k, v in one["inputs"].items() if v is not None} | {"motor_id": r["motor_id"]}
        check("POST", "/api/v1/interpret", tech.post("/api/v1/interpret", json=body))
    # the demo day exercises what a result can hold: flags with findings and cautions
    assert any(r["result"]["flags"] for r in readings) and any(r["result"]["findings"] for r in readings)

    body = reading_body(made["id"])
    first = check("POST", "/api/v1/readings", tech.post("/api/v1/readings", json=body))
    assert "id" in first, first
    replay = check("POST", "/api/v1/readings", tech.post("/api/v1/readings", json=body))
    check("POST", f"/api/v1/readings/{replay['id']}/review",
          sup.post(f"/api/v1/readings/{replay['id']}/review", json={"decision": "retake", "comment": "again"}))
    reviewed = check("GET", f"/api/v1/readings/{replay['id']}", tech.get(f"/api/v1/readings/{replay['id']}"))
    assert reviewed["review"]["decision"] == "retake" and len(reviewed["reviews"]) == 1
    points = check("GET", f"/api/v1/readings/{replay['id']}/torque-speed.json",
                   tech.get(f"/api/v1/readings/{replay['id']}/torque-speed.json"))
    assert len(points["speed_rpm"]) == len(points["torque_measured_v_nm"]) > 100
    asked = check("GET", "/api/v1/retakes", tech.get("/api/v1/retakes"))["readings"]
    assert [r["id"] for r in asked] == [replay["id"]] and asked[0]["review"]["comment"] == "again"
    entries = check("GET", "/api/v1/audit", sup.get("/api/v1/audit"))["entries"]
    assert entries

    # issue 11: history, sites, settings, the site's view
    for m in motors:
        check("GET", f"/api/v1/motors/{m['id']}/history", tech.get(f"/api/v1/motors/{m['id']}/history"))
    sites = check("GET", "/api/v1/sites", tech.get("/api/v1/sites"))["sites"]
    for s in sites:
        check("GET", f"/api/v1/sites/{s['id']}", tech.get(f"/api/v1/sites/{s['id']}"))
        check("GET", f"/api/v1/sites/{s['id']}/overview", tech.get(f"/api/v1/sites/{s['id']}/overview"))
    check("PUT", f"/api/v1/sites/{sites[0]['id']}/settings",
          sup.put(f"/api/v1/sites/{sites[0]['id']}/settings", json={"operating_hours_per_year": 4000}))

    # errors, in the one documented shape
    check("POST", "/api/v1/motors", sup.post("/api/v1/motors", json={**MOTOR, "rated_voltage_v": -1}))  # 400
    check("GET", "/api/v1/motors", anon.get("/api/v1/motors"))  # 401
    check("GET", "/api/v1/audit", tech.get("/api/v1/audit"))  # 403
    check("GET", "/api/v1/readings/999999", tech.get("/api/v1/readings/999999"))  # 404
    check("POST", "/api/v1/motors", sup.post("/api/v1/motors", json=MOTOR))  # 409
    check("POST", "/api/v1/interpret", tech.post("/api/v1/interpret", data="x", content_type="text/plain"))  # 415

    success = {(m.upper(), p, s) for p, ops in doc["paths"].items() for m, op in ops.items()
               for s, resp in op["responses"].items()
               if s.startswith("2") and "application/json" in resp.get("content", {}) and p != "/openapi.json"}
    assert success <= CHECKED, sorted(success - CHECKED)
    assert {s for _, _, s in CHECKED} >= {"400", "401", "403", "404", "409", "415"}


def test_health_when_the_database_is_down(app, check, anon, monkeypatch):
    db = app.extensions["slipwise"].db

    def down():
        raise OSError("database down")
    monkeypatch.setattr(db, "stored_version", down)
    body = check("GET", "/api/v1/health", anon.get("/api/v1/health"))
    assert body["status"] == "unavailable"


def test_bearer_session_has_no_csrf_token(app, check):
    from slipwise.store import accounts
    from slipwise.store.schema import api_tokens
    from slipwise.store.types import utcnow
    with app.extensions["slipwise"].db.write() as conn:
        user = accounts.get_user_by_name(conn, "sue")
        conn.execute(api_tokens.insert().values(user_id=user["id"], token_hash=accounts.token_hash("swt_t-1"),
                                                label="t", created_at=utcnow()))
    r = app.test_client().get("/api/v1/session", headers={"Authorization": "Bearer swt_t-1"})
    assert check("GET", "/api/v1/session", r)["csrf_token"] is None


def test_result_model_follows_the_declaration():
    """The result model is the declaration's columns, in order, all required: a column added to
    RESULT_COLUMNS reaches the model and the document with no further edit."""
    schema = Result.model_json_schema()
    assert list(schema["properties"]) == list(RESULT_COLUMNS) == schema["required"]
    with pytest.raises(ValidationError, match="made_up"):  # a key the declaration does not name is refused
        Result.model_validate({**{c: None for c in RESULT_COLUMNS}, "flags": [], "findings": [], "made_up": 1})


def test_a_drifted_answer_is_refused(check, anon):
    """The check itself bites: an answer with a key the model does not name fails."""
    class Fake:
        status_code = 200

        @staticmethod
        def get_data(as_text=True):
            return json.dumps({"status": "ok", "engine_version": "1", "schema_version": 1, "database": "sqlite",
                               "uptime_s": 3})
    with pytest.raises(ValidationError, match="uptime_s"):
        check("GET", "/api/v1/health", Fake)


def test_results_stored_by_engine_1_0_still_match_the_model():
    """A result stored by release 2 (engine 1.0.0) is served with its own values, the columns added since as
    null, and conforms to the model; the stored text is untouched."""
    rows = json.loads((Path(__file__).parent / "fixtures" / "schema_2_rows.json").read_text())["tables"]["readings"]
    results = [json.loads(r["result"]) if isinstance(r["result"], str) else r["result"] for r in rows]
    assert results and all(r.get("engine_version") == "1.0.0" for r in results if r.get("engine_version"))
    for row, result in zip(rows, results):
        assert "verdict" not in result       # the fixture is what release 2 wrote
        text = row["result"] if isinstance(row["result"], str) else json.dumps(row["result"])
        served = json.loads(served_result_text({"engine_version": row["engine_version"], "result": text}))
        Result.model_validate(served)
        assert {k: served[k] for k in result} == result
        assert all(served[c] is None for c in RESULT_COLUMNS if c not in RESULT_COLUMNS_1_0)
