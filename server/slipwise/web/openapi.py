"""The OpenAPI 3 document of /api/v1, generated: request bodies and JSON responses are the contract's pydantic
models' JSON schemas (the request models are the ones the views parse with; the response models are what
``tests/service/test_response_models.py`` checks every route's answer against), and the route table below adds
what only the web layer knows (summaries, roles, statuses, examples).

``tests/service/test_openapi.py`` checks that every Flask route is here and
everything here is a Flask route.
"""

from __future__ import annotations

import functools
from datetime import date
from typing import Any

from slipwise.contract import ENGINE_VERSION, FLAG_CODES, MAX_ID
from slipwise.contract.models import REQUEST_MODELS, request_schema
from slipwise.contract.responses import response_schemas
from slipwise.store.types import utcnow

from .export import EXPORT_COLUMNS

REF = "#/components/schemas/"


def _ref(name: str) -> dict:
    return {"$ref": REF + name}


def _error(description: str) -> dict:
    return {"description": description, "content": {"application/json": {"schema": _ref("Error")}}}


def _json_response(description: str, schema: str) -> dict:
    return {"description": description, "content": {"application/json": {"schema": _ref(schema)}}}


def _body(schema: str) -> dict:
    media: dict[str, Any] = {"schema": _ref(schema)}
    if schema in EXAMPLES:
        media["example"] = EXAMPLES[schema]
    return {"required": True, "content": {"application/json": media}}


# Request examples (a fictional 11 kW pump, 400 V 50 Hz 4-pole, figures typical of a catalogue IE3 motor,
# from memory); clients and fuzzers start from them.
_EXAMPLE_NAMEPLATE = {"rated_power_kw": 11, "rated_voltage_v": 400, "rated_current_a": 21.5,
                      "rated_frequency_hz": 50, "rated_speed_rpm": 1460, "driven_load": "variable_torque"}
_EXAMPLE_READING = {"frequency_hz": 50, "speed_rpm": 1472, "current_l1_a": 16.4, "current_l2_a": 16.8,
                    "current_l3_a": 16.2, "voltage_l12_v": 402, "voltage_l23_v": 398, "voltage_l31_v": 405,
                    "taken_at": "2025-03-14T09:30:00+01:00"}
EXAMPLES = {
    "Login": {"username": "tess", "password": "a long passphrase"},
    "MotorInput": {"site": "Example Works", "tag": "P-101", "location": "pump house", **_EXAMPLE_NAMEPLATE},
    "MotorUpdate": {**_EXAMPLE_NAMEPLATE, "rated_current_a": 21.8, "revision": 1},
    "ReadingInput": {"client_id": "6f1c2d3e-4b5a-4c6d-8e7f-901a2b3c4d5e", "motor_id": 1, **_EXAMPLE_READING},
    "ReviewInput": {"decision": "retake", "comment": "speed reading looks like the pulley, not the shaft"},
    "InterpretInput": {**_EXAMPLE_NAMEPLATE, **_EXAMPLE_READING},
}


ERRORS = {
    "400": _error("invalid input; `field` names the field and `message` the allowed range"),
    "401": _error("not logged in, or the session or token is not valid"),
    "403": _error("the role does not allow this, or the CSRF token is missing or wrong"),
    "404": _error("no such record"),
    "409": _error("conflicts with a stored record"),
    "413": _error("the request body is larger than the limit"),
    "415": _error("the body is not sent as application/json"),
    "429": _error("too many failed logins; see Retry-After"),
    "503": _error("the database is down, read-only or full: nothing was stored; try again (see Retry-After)"),
}


def _errs(*codes: str) -> dict:
    return {c: ERRORS[c] for c in codes}


CSRF = {"name": "X-CSRF-Token", "in": "header", "required": False, "schema": {"type": "string"},
        "description": "required with cookie sessions on writes: the csrf_token from POST /session"}
AUTH = [{"cookieSession": []}, {"bearerToken": []}]


def _q(name: str, description: str, schema: dict | None = None) -> dict:
    # a blank value is the same as leaving the parameter out (server/web/params.py)
    return {"name": name, "in": "query", "required": False, "schema": schema or {"type": "string"},
            "allowEmptyValue": True, "description": description + "; blank is the same as absent"}


def _path_id(name: str) -> dict:
    return {"name": name, "in": "path", "required": True,
            "schema": {"type": "integer", "minimum": 1, "maximum": MAX_ID}}


DATE_Q = _q("date", "calendar date of taken_at, YYYY-MM-DD", {"type": "string", "format": "date"})
NO_CONTROLS = "^[^\\x00-\\x1f\\x7f-\\x9f]*$"   # what params.text_param refuses
SITE_Q = _q("site", "site name", {"type": "string", "maxLength": 120, "pattern": NO_CONTROLS})


def document() -> dict:
    """The document as served today (taken_at's pattern admits no date in the future)."""
    return _document(utcnow().date())


PUBLIC, SIGNED_IN = "public", "signed in"           # who may call: nobody signed in, anyone signed in,
TECH, SUP = "technician, supervisor", "supervisor"  # or these roles
ID = {name: _path_id(name) for name in ("motor_id", "reading_id", "site_id")}
SVG = {"description": "SVG", "content": {"image/svg+xml": {"schema": {"type": "string"}}}}
PDF = {"description": "PDF (A4)", "content": {"application/pdf": {"schema": {"type": "string", "format": "binary"}}}}
CSV = {"description": "UTF-8 CSV with a header row", "content": {"text/csv": {"schema": {"type": "string"}}}}
THIS = {"description": "OpenAPI 3 document", "content": {"application/json": {"schema": {"type": "object"}}}}
READINGS_Q = [DATE_Q, SITE_Q, _q("flag", "only readings with this flag", {"type": "string", "enum": list(FLAG_CODES)}),
              _q("technician", "username", {"type": "string", "maxLength": 64, "pattern": NO_CONTROLS}),
              _q("motor_id", "one motor", {"type": "integer", "minimum": 1, "maximum": MAX_ID}),
              _q("limit", "at most this many", {"type": "integer", "minimum": 1, "maximum": 100000})]
EXPORT_Q = [DATE_Q, _q("date_from", "first calendar date of taken_at, YYYY-MM-DD (inclusive)", {"type": "string", "format": "date"}),
            _q("date_to", "last calendar date of taken_at, YYYY-MM-DD (inclusive)", {"type": "string", "format": "date"}),
            SITE_Q, READINGS_Q[2], READINGS_Q[3]]
AUDIT_Q = [DATE_Q, _q("limit", "at most this many", {"type": "integer", "minimum": 1, "maximum": 10000})]
EXPORT_TEXT = (" Columns, in this order: " + ", ".join(EXPORT_COLUMNS) + ". Text cells starting with =, +, -, @, "
               "tab or CR get a leading apostrophe.")

# path, method, who, summary, parameters, request model, {status: (description, response model) or a response},
# error statuses (every route but this document's also answers 503: each reads or writes the database)
ROUTES: list[tuple] = [
    ("/session", "post", PUBLIC, "log in: sets the session cookie and returns the CSRF token", [], "Login",
     {"201": ("logged in", "Session")}, "400 401 413 415 429"),
    ("/session", "get", SIGNED_IN, "who is logged in (and the CSRF token again, for a reloaded page)", [], None,
     {"200": ("the session", "Session")}, "401"),
    ("/session", "delete", PUBLIC, "log out (ends the cookie session)", [CSRF], None,
     {"204": {"description": "logged out"}}, "401 403"),
    ("/motors", "get", TECH, "motors with their current nameplate revision", [SITE_Q], None,
     {"200": ("motors", "MotorList")}, "400 401"),
    ("/motors", "post", TECH, "register a motor (revision 1)", [CSRF], "MotorInput",
     {"201": ("created", "Motor")}, "400 401 403 409 413 415"),
    ("/motors/{motor_id}", "get", TECH, "a motor with every nameplate revision", [ID["motor_id"]], None,
     {"200": ("the motor", "MotorDetail")}, "400 401 404"),
    ("/motors/{motor_id}", "put", SUP, "edit the nameplate: a changed one becomes a new revision",
     [ID["motor_id"], CSRF], "MotorUpdate", {"200": ("the motor after the edit", "MotorDetail")},
     "400 401 403 404 409 413 415"),
    ("/readings", "post", TECH, "submit a reading: stored with its interpretation", [CSRF], "ReadingInput",
     {"201": ("stored", "Reading"), "200": ("a replay of a stored submission: that record", "Reading")},
     "400 401 403 404 409 413 415"),
    ("/readings", "get", TECH, "the day's log, ordered by taken_at", READINGS_Q, None,
     {"200": ("readings", "ReadingList")}, "400 401"),
    ("/retakes", "get", TECH, "retakes still asked for, any day, oldest first: a technician's own, or all for a "
     "supervisor; a retake is answered by a reading that supersedes it", [], None,
     {"200": ("readings", "ReadingList")}, "400 401"),
    ("/readings/listing", "get", TECH, "the day's log as a lean listing in pages, ordered by taken_at: a few keys "
     "per reading (the whole reading is GET /readings/{reading_id}); follow next until it is null",
     READINGS_Q[:-1] + [_q("limit", "readings per page (default 2000)", {"type": "integer", "minimum": 1,
                                                                          "maximum": 10000}),
                        _q("after", "the id of the last reading of the previous page (next gives it)",
                           {"type": "integer", "minimum": 1, "maximum": MAX_ID})], None,
     {"200": ("one page of the listing", "ReadingListing")}, "400 401"),
    ("/readings/{reading_id}", "get", TECH, "one reading with its interpretation and review", [ID["reading_id"]],
     None, {"200": ("the reading", "Reading")}, "400 401 404"),
    ("/readings/{reading_id}/torque-speed.svg", "get", TECH, "torque-speed picture: motor at rated and measured "
     "voltage, load, operating and breakdown points", [ID["reading_id"]], None,
     {"200": SVG, "304": {"description": "not modified (ETag)"}}, "400 401 404"),
    ("/readings/{reading_id}/torque-speed.json", "get", TECH, "the torque-speed picture's curves and points as "
     "numbers (rpm, N·m) for a client to draw", [ID["reading_id"]], None,
     {"200": ("curves and points", "TorqueSpeedCurve")}, "400 401 404"),
    ("/readings/{reading_id}/certificate.pdf", "get", TECH, "the reading's commissioning certificate (supervisors, "
     "and the technician who took it): nameplate, instruments, every test and the running reading with value, "
     "criterion, source and state, findings, picture, people by full name, review history, QR code of the "
     "reading's page, fingerprints; marked DRAFT until a supervisor accepts it (the sign-off)",
     [ID["reading_id"]], None, {"200": PDF}, "400 401 403 404"),
    ("/readings/{reading_id}/review", "post", SUP, "review a reading: accepted, retake or rejected",
     [ID["reading_id"], CSRF], "ReviewInput", {"201": ("the review", "ReviewCreated")}, "400 401 403 404 413 415"),
    ("/export.csv", "get", SUP, "the commissioning record as CSV, one row per reading", EXPORT_Q, None,
     {"200": CSV}, "400 401 403"),
    ("/interpret", "post", TECH, "interpret a nameplate and reading without storing anything", [CSRF],
     "InterpretInput", {"200": ("the result", "Result")}, "400 401 403 404 413 415"),
    ("/health", "get", PUBLIC, "liveness and the database's schema version", [], None,
     {"200": ("up", "Health"), "503": ("database down", "Health")}, "400"),
    ("/audit", "get", SUP, "the audit trail: who did what when, newest first", AUDIT_Q, None,
     {"200": ("entries", "AuditList")}, "400 401 403"),
    ("/openapi.json", "get", PUBLIC, "this document", [], None, {"200": THIS}, ""),
    # issue 11: the motor over time, sites and their settings, the site's view
    ("/motors/{motor_id}/history", "get", TECH, "every reading of the motor across days, oldest first, with key "
     "results, the baseline (first accepted reading), change-from-baseline findings and the next visit due",
     [ID["motor_id"]], None, {"200": ("the motor's visits", "MotorHistory")}, "400 401 404"),
    ("/sites", "get", TECH, "sites with their settings", [], None, {"200": ("sites", "SiteList")}, "400 401"),
    ("/sites/{site_id}", "get", TECH, "one site with its settings", [ID["site_id"]], None,
     {"200": ("the site", "Site")}, "400 401 404"),
    ("/sites/{site_id}/settings", "put", SUP, "set the site's default running hours and energy price (a reading's "
     "own value overrides them) and its visit interval; written as a new entry", [ID["site_id"], CSRF],
     "SiteSettingsInput", {"200": ("the site with its new settings", "Site")}, "400 401 403 404 413 415"),
    ("/sites/{site_id}/overview", "get", TECH, "the site's view: motors by last verdict, overdue visits, "
     "right-sizing candidates ranked by yearly savings", [ID["site_id"]], None,
     {"200": ("the site's view", "SiteOverview")}, "400 401 404"),
    ("/sites/{site_id}/overview.csv", "get", SUP, "the site's view as CSV, one row per motor", [ID["site_id"]], None,
     {"200": CSV}, "400 401 403 404"),
]


def _operation(path: str, who: str, summary: str, params: list, request: str | None, responses: dict,
               errors: str) -> dict:
    op: dict[str, Any] = {"summary": summary, "security": [] if who == PUBLIC else AUTH}
    if who in (TECH, SUP):
        op["description"] = f"Roles: {who}." + (EXPORT_TEXT if path == "/export.csv" else "")
    if params:
        op["parameters"] = params
    if request:
        op["requestBody"] = _body(request)
    op["responses"] = {status: _json_response(*r) if isinstance(r, tuple) else r for status, r in responses.items()}
    op["responses"].update(_errs(*errors.split()))
    if path != "/openapi.json":
        op["responses"].setdefault("503", ERRORS["503"])
    return op


@functools.lru_cache(maxsize=2)
def _document(today: date) -> dict:
    schemas = {**response_schemas(), **{name: request_schema(model, today) for name, model in REQUEST_MODELS.items()}}
    paths: dict[str, dict] = {}
    for path, method, *rest in ROUTES:
        paths.setdefault(path, {})[method] = _operation(path, *rest)
    return {
        "openapi": "3.0.3",
        "info": {"title": "slipwise", "version": ENGINE_VERSION,
                 "description": "Commissioning checks for three-phase induction motors: motors, readings with "
                                "their interpretation, supervisor review, the CSV record. Errors are "
                                "{\"error\": {\"code\", \"message\", \"field\"}}."},
        "servers": [{"url": "/api/v1"}],
        "paths": paths,
        "components": {
            "schemas": schemas,
            "securitySchemes": {
                "cookieSession": {"type": "apiKey", "in": "cookie", "name": "slipwise_session",
                                  "description": "from POST /session; writes also need X-CSRF-Token"},
                "bearerToken": {"type": "http", "scheme": "bearer",
                                "description": "from `slipwise token create NAME`"},
            },
        },
    }
