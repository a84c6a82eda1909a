"""Schemathesis over every operation of /api/v1/openapi.json, as each role, in-process.

Checks on every generated case: no 5xx, status codes and content types as documented,
bodies that conform to the documented schemas, and every 4xx in the documented error
shape ``{"error": {"code", "message", "field"}}``. Both schema-conforming and
schema-violating (negative) inputs are generated; a negative input must be refused, and a
conforming one accepted (``documented_requests_are_accepted``): the document admits no request
the contract refuses.
"""

from __future__ import annotations

import json
import secrets
import shutil
import tempfile
from collections import Counter
from pathlib import Path

import jsonschema_rs
import pytest
import schemathesis
from hypothesis import HealthCheck, settings
from schemathesis.checks import not_a_server_error
from schemathesis.specs.openapi.checks import (allow_header_conformance, content_type_conformance, ignored_auth,
                                               missing_required_header, negative_data_rejection,
                                               positive_data_acceptance,
                                               response_schema_conformance, status_code_conformance,
                                               unsupported_method)

from slipwise.contract import FieldError
from slipwise.contract.models import REQUEST_MODELS, parse_body
from slipwise.store import accounts, sqlite_url
from slipwise.store.schema import api_tokens
from slipwise.store.types import utcnow
from slipwise.web import create_app
from tests.service.conftest import MOTOR, reading_body
from tests.service.conftest import app, database, static_dir, sup, tech  # noqa: F401  (fixtures)

ROLES = {"anonymous": None, "technician": "tess", "supervisor": "sue"}
EXAMPLES_PER_OPERATION = 25
CASES: dict[tuple[str, str], Counter] = {}  # (role, operation) -> status -> cases


def error_shape(ctx, response, case):
    """Every 4xx is JSON {"error": {"code": str, "message": str, "field": str|null}} and nothing else."""
    if not 400 <= response.status_code < 500:
        return None
    body = json.loads(response.content)
    assert set(body) == {"error"}, body
    err = body["error"]
    assert set(err) == {"code", "message", "field"}, err
    assert isinstance(err["code"], str) and err["code"], err
    assert isinstance(err["message"], str) and err["message"], err
    assert err["field"] is None or isinstance(err["field"], str), err
    return True


def finite_json(ctx, response, case):
    """No NaN or Infinity anywhere in a JSON answer (json.loads accepts them; strict parsers do not)."""
    if "json" not in response.headers.get("Content-Type", [""])[0]:
        return None

    def refuse(token):
        raise AssertionError(f"non-finite number {token} in the JSON answer")
    json.loads(response.content, parse_constant=refuse)
    return True


MODEL_OF = {"POST /session": "Login", "POST /motors": "MotorInput", "PUT /motors/{motor_id}": "MotorUpdate",
            "POST /readings": "ReadingInput", "POST /readings/{reading_id}/review": "ReviewInput",
            "POST /interpret": "InterpretInput"}


def _as_json_schema(node):
    """OpenAPI 3.0's ``nullable`` written as JSON Schema (``type``/``enum`` with null)."""
    if isinstance(node, list):
        return [_as_json_schema(v) for v in node]
    if not isinstance(node, dict):
        return node
    out = {k: _as_json_schema(v) for k, v in node.items() if k not in ("nullable", "readOnly")}
    if node.get("nullable"):
        if "type" in out:
            out["type"] = [out["type"], "null"]
        if "enum" in out and None not in out["enum"]:
            out["enum"] = [*out["enum"], None]
    return out


def _documented(case) -> bool:
    """The body conforms to the whole documented schema (the coverage phase may leave out anyOf clauses)."""
    model = MODEL_OF.get(case.operation.label)
    schema = anonymous_schema.raw_schema["components"]["schemas"][model]
    return jsonschema_rs.validator_for(_as_json_schema(schema)).is_valid(case.body)


def documented_requests_are_accepted(ctx, response, case):
    """A request the document admits is accepted, with two exceptions a schema cannot know about:

    * 409: it conflicts with a stored record (a tag already registered, a replayed client_id);
    * 400 from the engine's consistency checks across fields (a rated speed that gives no pole
      count at the rated frequency, ...) on a body the contract's model itself accepts. A body
      the model refuses is a gap between the document and the handler, and fails here.
    """
    try:
        return positive_data_acceptance(ctx, response, case)
    except AssertionError:
        if response.status_code == 409:
            return None
        model = REQUEST_MODELS.get(MODEL_OF.get(case.operation.label, ""))
        if response.status_code == 400 and model is not None and isinstance(case.body, dict):
            if not _documented(case):
                return None
            try:
                parse_body(model, case.body)
            except FieldError:
                raise
            if json.loads(response.content)["error"]["field"] not in ("site", "tag"):
                return None
        raise


CHECKS = [not_a_server_error, status_code_conformance, content_type_conformance, response_schema_conformance,
          negative_data_rejection, ignored_auth, missing_required_header, unsupported_method,
          allow_header_conformance]


@pytest.fixture
def seeded(app, sup, tech):
    """A motor, a reading and a review, so that some generated ids find a record."""
    motor = sup.post("/api/v1/motors", json=MOTOR).get_json()
    reading = tech.post("/api/v1/readings", json=reading_body(motor["id"])).get_json()
    assert (motor["id"], reading["id"]) == (1, 1)  # the ids the documented examples use
    assert sup.post("/api/v1/readings/1/review", json={"decision": "accepted"}).status_code == 201
    return app


# Fixed for the run: schemathesis builds the documented examples' cases while collecting, before any
# database exists, so each test's database learns these tokens (stored hashed, as `slipwise token create`
# stores them) instead of making new ones.
TOKENS = {role: f"swt_fuzz-{role}-{secrets.token_urlsafe(16)}" for role, name in ROLES.items() if name}


@pytest.fixture
def tokens(seeded):
    with seeded.extensions["slipwise"].db.write() as conn:
        for role, token in TOKENS.items():
            user = accounts.get_user_by_name(conn, ROLES[role])
            conn.execute(api_tokens.insert().values(user_id=user["id"], token_hash=accounts.token_hash(token),
                                                    label="fuzz", created_at=utcnow()))
    return TOKENS


def _load_schema():
    """The document as the service serves it, read from an app on a throwaway SQLite database.

    Each test then sends its cases to its own app (``app=``), on its own database.
    """
    folder = tempfile.mkdtemp(prefix="slipwise-openapi-")
    try:
        loader = create_app({"DATA_DIR": folder, "DATABASE_URL": sqlite_url(Path(folder) / "doc.sqlite3"),
                             "DB_SCHEMA": None, "SECRET_KEY": "schema-loader", "TESTING": True})
        try:
            loaded = schemathesis.openapi.from_wsgi("/api/v1/openapi.json", loader)
            # schemathesis leaves out the URL the document came from; GET /openapi.json is a route too
            loaded.location = None
            return loaded
        finally:
            loader.extensions["slipwise"].db.dispose()
    finally:
        shutil.rmtree(folder, ignore_errors=True)


def _schema_as(role: str):
    """One schema per role; a signed-in role's cases carry its bearer token (as explicit auth, so
    that the ignored_auth check can take it away and expect 401)."""
    loaded = _load_schema()
    if ROLES[role]:
        @loaded.auth(refresh_interval=None)
        class _Bearer:
            def get(self, case, ctx):
                return TOKENS[role]

            def set(self, case, data, ctx):
                case.headers = {**(case.headers or {}), "Authorization": "Bearer " + data}
    return loaded


anonymous_schema = _schema_as("anonymous")
technician_schema = _schema_as("technician")
supervisor_schema = _schema_as("supervisor")


def _run(case, app, role):
    response = case.call_and_validate(app=app, checks=CHECKS, additional_checks=[error_shape, finite_json,
                                                                                   documented_requests_are_accepted])
    key = (role, case.operation.label)
    CASES.setdefault(key, Counter())[response.status_code] += 1


FUZZ = settings(max_examples=EXAMPLES_PER_OPERATION, deadline=None, suppress_health_check=list(HealthCheck))


@anonymous_schema.parametrize()
@FUZZ
def test_as_anonymous(case, seeded, tokens):
    _run(case, seeded, "anonymous")


@technician_schema.parametrize()
@FUZZ
def test_as_technician(case, seeded, tokens):
    _run(case, seeded, "technician")


@supervisor_schema.parametrize()
@FUZZ
def test_as_supervisor(case, seeded, tokens):
    _run(case, seeded, "supervisor")


def test_documented_examples_are_accepted(seeded, tokens):
    """The request examples in the document are valid requests (schemathesis starts from them)."""
    from slipwise.web.openapi import EXAMPLES
    client = seeded.test_client()
    auth = {"Authorization": "Bearer " + TOKENS["supervisor"]}
    want = {("POST", "/api/v1/session", "Login"): 401,  # well-formed; not tess's password here
            ("POST", "/api/v1/motors", "MotorInput"): 201, ("PUT", "/api/v1/motors/1", "MotorUpdate"): 200,
            ("POST", "/api/v1/readings", "ReadingInput"): 201, ("POST", "/api/v1/interpret", "InterpretInput"): 200,
            ("POST", "/api/v1/readings/1/review", "ReviewInput"): 201}
    assert {k[2] for k in want} == set(EXAMPLES)
    for (method, url, name), status in want.items():
        r = client.open(url, method=method, json=EXAMPLES[name], headers=auth)
        assert r.status_code == status, (name, r.get_data(as_text=True)[:300])


def test_case_count_and_coverage():
    """At least 1,000 generated cases in all, every operation of the document run as every role."""
    ran = {role for role, _ in CASES}
    if ran != set(ROLES):
        pytest.skip("run with the three fuzzing tests (this one sums their cases)")
    operations = {f"{m.upper()} {p}" for p, ops in anonymous_schema.raw_schema["paths"].items() for m in ops}
    for role in ROLES:
        assert {op for r, op in CASES if r == role} == operations, role
    total = sum(sum(c.values()) for c in CASES.values())
    assert total >= 1000, total
    by_status = Counter()
    for c in CASES.values():
        by_status.update(c)
    print(f"\nschemathesis: {total} cases over {len(operations)} operations x {len(ROLES)} roles; "
          f"by status: {dict(sorted(by_status.items()))}")
    # the fuzzing reached the stored-record paths, not only refusals
    for role, op, status in (("technician", "POST /readings", 201), ("supervisor", "GET /export.csv", 200),
                             ("supervisor", "POST /readings/{reading_id}/review", 201),
                             ("technician", "POST /interpret", 200)):
        assert CASES[(role, op)][status] >= 1, (role, op, status, CASES[(role, op)])
