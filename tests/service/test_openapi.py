"""The OpenAPI document describes exactly the routes Flask serves, with the shapes they return."""

from __future__ import annotations

import re

from slipwise.contract import FLAG_CODES, RESULT_COLUMNS


def _doc(anon):
    r = anon.get("/api/v1/openapi.json")
    assert r.status_code == 200
    return r.get_json()


def _flask_routes(app) -> set[tuple[str, str]]:
    out = set()
    for rule in app.url_map.iter_rules():
        if not rule.rule.startswith("/api/v1/"):
            continue
        path = re.sub(r"<(?:[a-z]+:)?([a-z_]+)>", r"{\1}", rule.rule[len("/api/v1"):])
        out |= {(m.lower(), path) for m in rule.methods - {"HEAD", "OPTIONS"}}
    return out


def test_every_route_is_documented_and_nothing_else(app, anon):
    doc = _doc(anon)
    assert doc["openapi"].startswith("3.")
    documented = {(m, p) for p, ops in doc["paths"].items() for m in ops}
    assert documented == _flask_routes(app)


def test_operations_are_complete(anon):
    doc = _doc(anon)
    schemas = doc["components"]["schemas"]

    def resolve(ref: str):
        assert ref.startswith("#/components/schemas/"), ref
        return schemas[ref.rsplit("/", 1)[1]]

    def walk(node):
        if isinstance(node, dict):
            if "$ref" in node:
                resolve(node["$ref"])
            for v in node.values():
                walk(v)
        elif isinstance(node, list):
            for v in node:
                walk(v)

    walk(doc)  # every $ref resolves
    for path, ops in doc["paths"].items():
        for method, op in ops.items():
            assert op.get("summary"), (method, path)
            assert "security" in op, (method, path)
            for name in re.findall(r"{([a-z_]+)}", path):
                assert any(p["name"] == name and p["in"] == "path" for p in op["parameters"]), (method, path)
            if method in ("post", "put"):
                if path not in ("/session",):
                    assert any(p["name"] == "X-CSRF-Token" for p in op.get("parameters", [])), (method, path)
                assert "requestBody" in op, (method, path)
            for status, resp in op["responses"].items():
                if status.startswith("4"):
                    assert resp["content"]["application/json"]["schema"] == {"$ref": "#/components/schemas/Error"}
    err = schemas["Error"]["properties"]["error"]
    assert err["required"] == ["code", "message", "field"]
    assert schemas["Result"]["required"] == list(RESULT_COLUMNS)
    assert schemas["Result"]["properties"]["flags"]["items"]["enum"] == list(FLAG_CODES)


def test_responses_match_documented_properties(anon, tech, sup, reading):
    doc = _doc(anon)
    schemas = doc["components"]["schemas"]
    got = tech.get(f"/api/v1/readings/{reading['id']}").get_json()
    assert set(got) == set(schemas["Reading"]["properties"])
    assert set(got["result"]) <= set(schemas["Result"]["properties"])
    assert set(got["inputs"]) == set(schemas["Reading"]["properties"]["inputs"]["properties"])
    motor = tech.get(f"/api/v1/motors/{reading['motor_id']}").get_json()
    assert set(motor) == set(schemas["MotorDetail"]["properties"])
    assert set(motor["revisions"][0]) == set(schemas["MotorDetail"]["properties"]["revisions"]["items"]["properties"])
    assert set(tech.get("/api/v1/session").get_json()) <= set(schemas["Session"]["properties"])
    assert set(anon.get("/api/v1/health").get_json()) == set(schemas["Health"]["properties"])
    review = sup.post(f"/api/v1/readings/{reading['id']}/review", json={"decision": "accepted"}).get_json()
    assert set(review) == set(schemas["ReviewCreated"]["properties"])
    entry = sup.get("/api/v1/audit").get_json()["entries"][0]
    assert set(entry) == set(schemas["AuditList"]["properties"]["entries"]["items"]["properties"])
    # the documented input fields are exactly the accepted ones
    from slipwise.web.readings import SUBMISSION_FIELDS
    assert set(schemas["ReadingInput"]["properties"]) == set(SUBMISSION_FIELDS)
    from slipwise.web.motors import MOTOR_FIELDS
    assert set(schemas["MotorInput"]["properties"]) == set(MOTOR_FIELDS)
