"""The OpenAPI 3 document of /api/v1, generated: request bodies are the contract's pydantic models' JSON
schemas (the same models the views parse with), responses are built from the declaration, and the
route table below adds what only the web layer knows (summaries, roles, statuses, examples).

``tests/service/test_openapi.py`` checks that every Flask route is here and
everything here is a Flask route.
"""

from __future__ import annotations

import functools
from datetime import date
from typing import Any

from slipwise.contract import (ENGINE_VERSION, FLAG_CODES, INTEGER_RESULT_COLUMNS, MAX_ID, NAMEPLATE_FIELDS,
                               READING_FIELDS, RESULT_COLUMNS, TAKEN_AT_HELP, TEXT_RESULT_COLUMNS)
from slipwise.contract.models import REQUEST_MODELS, choice_schema, number_schema, request_schema
from slipwise.store.types import utcnow

from .export import EXPORT_COLUMNS

REF = "#/components/schemas/"


def _ref(name: str) -> dict:
    return {"$ref": REF + name}


def _nameplate_properties() -> dict:
    """The nameplate as a stored motor shows it (responses)."""
    from slipwise.contract import NUMBER_FIELDS
    return {name: number_schema(name) if name in NUMBER_FIELDS else choice_schema(name)
            for name in NAMEPLATE_FIELDS if name != "tag"}


def _reading_properties() -> dict:
    """The reading's fields as a stored reading shows them (responses)."""
    props = {name: number_schema(name) for name in READING_FIELDS if name != "taken_at"}
    props["taken_at"] = {"type": "string", "nullable": True, "description": TAKEN_AT_HELP}
    return props


def _result_schema() -> dict:
    props: dict[str, Any] = {}
    for c in RESULT_COLUMNS:
        if c == "flags":
            props[c] = {"type": "array", "items": {"type": "string", "enum": list(FLAG_CODES)}}
        elif c == "findings":
            props[c] = {"type": "array", "items": _ref("Finding")}
        elif c in TEXT_RESULT_COLUMNS:
            props[c] = {"type": "string", "nullable": True}
        elif c in INTEGER_RESULT_COLUMNS:
            props[c] = {"type": "integer", "nullable": True}
        else:
            props[c] = {"type": "number", "nullable": True}
    return {"type": "object", "properties": props, "required": list(RESULT_COLUMNS),
            "description": "The engine's result: the contract's columns (units in the names); null where a value "
                           "does not apply or could not be estimated."}


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


@functools.lru_cache(maxsize=2)
def _document(today: date) -> dict:
    requests = {name: request_schema(model, today) for name, model in REQUEST_MODELS.items()}
    nameplate = _nameplate_properties()
    motor_props = {"id": {"type": "integer"}, "site": {"type": "string"}, "tag": {"type": "string"},
                   "location": {"type": "string"}, "description": {"type": "string"},
                   **{k: {**v, "nullable": True} for k, v in nameplate.items()},
                   "revision": {"type": "integer"}, "revision_id": {"type": "integer"},
                   "updated_at": {"type": "string", "format": "date-time"},
                   "updated_by": {"type": "string", "nullable": True}}
    for v in motor_props.values():
        v.pop("default", None)
    revision_props = {k: v for k, v in motor_props.items() if k not in ("id", "site", "tag", "updated_at",
                                                                        "updated_by")}
    revision_props.update(created_at={"type": "string", "format": "date-time"},
                          created_by={"type": "string", "nullable": True})
    review = {"type": "object", "nullable": True, "properties": {
        "decision": {"type": "string", "enum": ["accepted", "retake", "rejected"]},
        "comment": {"type": "string"}, "reviewer": {"type": "string"},
        "reviewed_at": {"type": "string", "format": "date-time"}}}
    reading = {"type": "object", "properties": {
        "id": {"type": "integer"}, "client_id": {"type": "string", "format": "uuid"},
        "motor_id": {"type": "integer"}, "motor_revision": {"type": "integer"},
        "motor_revision_id": {"type": "integer"}, "site": {"type": "string"}, "tag": {"type": "string"},
        "technician": {"type": "string"}, "technician_name": {"type": "string"},
        "taken_at": {"type": "string"}, "received_at": {"type": "string", "format": "date-time"},
        "engine_version": {"type": "string"}, "supersedes": {"type": "integer", "nullable": True},
        "superseded_by": {"type": "integer", "nullable": True}, "review": _ref("Review"),
        "reviews": {"type": "array", "items": _ref("Review"),
                    "description": "every review, oldest first (GET /readings/{id} only)"},
        "inputs": {"type": "object", "properties": _reading_properties(),
                   "description": "the reading fields as interpreted"},
        "result": _ref("Result")},
        "required": ["id", "client_id", "motor_id", "motor_revision", "technician", "taken_at", "received_at",
                     "engine_version", "inputs", "result"]}
    schemas = {
        "Error": {"type": "object", "required": ["error"], "properties": {"error": {
            "type": "object", "required": ["code", "message", "field"], "properties": {
                "code": {"type": "string", "description": "machine-readable, e.g. invalid_input, not_found"},
                "message": {"type": "string", "description": "for people: names the field and allowed range"},
                "field": {"type": "string", "nullable": True}}}}},
        "Login": requests["Login"],
        "User": {"type": "object", "properties": {
            "id": {"type": "integer"}, "username": {"type": "string"}, "full_name": {"type": "string"},
            "role": {"type": "string", "enum": ["technician", "supervisor"]}, "active": {"type": "boolean"},
            "created_at": {"type": "string", "format": "date-time"}}},
        "Session": {"type": "object", "required": ["user", "csrf_token"], "properties": {
            "user": _ref("User"), "csrf_token": {"type": "string", "nullable": True,
                                                 "description": "send as X-CSRF-Token on writes"},
            "expires_at": {"type": "string", "format": "date-time"},
            "thresholds": {"type": "object", "description": "flag thresholds in force (see slipwise.engine.Thresholds)",
                           "additionalProperties": {"type": "number"}}}},
        "MotorInput": requests["MotorInput"],
        "MotorUpdate": requests["MotorUpdate"],
        "Motor": {"type": "object", "properties": motor_props},
        "MotorDetail": {"type": "object", "properties": {
            **motor_props, "revisions": {"type": "array", "items": {"type": "object", "properties": revision_props}}}},
        "MotorList": {"type": "object", "properties": {"count": {"type": "integer"},
                                                        "motors": {"type": "array", "items": _ref("Motor")}}},
        "ReadingInput": requests["ReadingInput"],
        "Reading": reading,
        "ReadingList": {"type": "object", "properties": {"count": {"type": "integer"},
                                                          "readings": {"type": "array", "items": _ref("Reading")}}},
        "Review": review,
        "ReviewInput": requests["ReviewInput"],
        "ReviewCreated": {"type": "object", "properties": {
            "id": {"type": "integer"}, "reading_id": {"type": "integer"},
            "decision": {"type": "string"}, "comment": {"type": "string"}, "reviewer": {"type": "string"},
            "reviewed_at": {"type": "string", "format": "date-time"}, "reading": _ref("Reading")}},
        "Finding": {"type": "object", "properties": {"flag": {"type": "string", "nullable": True},
                                                     "text": {"type": "string"},
                                                     "caution": {"type": "string", "nullable": True},
                                                     "state": {"type": "string", "enum": ["beyond", "at_limit"],
                                                               "description": "beyond: the code is in flags; "
                                                                              "at_limit: in limit_flags"}}},
        "Result": _result_schema(),
        "InterpretInput": requests["InterpretInput"],
        "Health": {"type": "object", "properties": {
            "status": {"type": "string", "enum": ["ok", "unavailable"]}, "engine_version": {"type": "string"},
            "schema_version": {"type": "integer"}, "database": {"type": "string", "enum": ["sqlite", "postgresql"]}}},
        "AuditList": {"type": "object", "properties": {"count": {"type": "integer"}, "entries": {
            "type": "array", "items": {"type": "object", "properties": {
                "id": {"type": "integer"}, "at": {"type": "string", "format": "date-time"},
                "actor": {"type": "string"}, "action": {"type": "string"}, "object_type": {"type": "string"},
                "object_id": {"type": "integer", "nullable": True}, "detail": {"type": "object"}}}}}},
    }
    tech, sup = "Roles: technician, supervisor.", "Roles: supervisor."
    paths = {
        "/session": {
            "post": {"summary": "log in: sets the session cookie and returns the CSRF token", "security": [],
                     "requestBody": _body("Login"),
                     "responses": {"201": _json_response("logged in", "Session"), **_errs("400", "401", "413", "415", "429")}},
            "get": {"summary": "who is logged in (and the CSRF token again, for a reloaded page)", "security": AUTH,
                    "responses": {"200": _json_response("the session", "Session"), **_errs("401")}},
            "delete": {"summary": "log out (ends the cookie session)", "security": [], "parameters": [CSRF],
                       "responses": {"204": {"description": "logged out"}, **_errs("401", "403")}},
        },
        "/motors": {
            "get": {"summary": "motors with their current nameplate revision", "description": tech, "security": AUTH,
                    "parameters": [SITE_Q],
                    "responses": {"200": _json_response("motors", "MotorList"), **_errs("400", "401")}},
            "post": {"summary": "register a motor (revision 1)", "description": tech, "security": AUTH,
                     "parameters": [CSRF], "requestBody": _body("MotorInput"),
                     "responses": {"201": _json_response("created", "Motor"),
                                   **_errs("400", "401", "403", "409", "413", "415")}},
        },
        "/motors/{motor_id}": {
            "get": {"summary": "a motor with every nameplate revision", "description": tech, "security": AUTH,
                    "parameters": [_path_id("motor_id")],
                    "responses": {"200": _json_response("the motor", "MotorDetail"), **_errs("400", "401", "404")}},
            "put": {"summary": "edit the nameplate: a changed one becomes a new revision", "description": sup,
                    "security": AUTH, "parameters": [_path_id("motor_id"), CSRF], "requestBody": _body("MotorUpdate"),
                    "responses": {"200": _json_response("the motor after the edit", "MotorDetail"),
                                  **_errs("400", "401", "403", "404", "409", "413", "415")}},
        },
        "/readings": {
            "post": {"summary": "submit a reading: stored with its interpretation", "description": tech,
                     "security": AUTH, "parameters": [CSRF], "requestBody": _body("ReadingInput"),
                     "responses": {"201": _json_response("stored", "Reading"),
                                   "200": _json_response("a replay of a stored submission: that record", "Reading"),
                                   **_errs("400", "401", "403", "404", "409", "413", "415")}},
            "get": {"summary": "the day's log, ordered by taken_at", "description": tech, "security": AUTH,
                    "parameters": [DATE_Q, SITE_Q,
                                   _q("flag", "only readings with this flag", {"type": "string", "enum": list(FLAG_CODES)}),
                                   _q("technician", "username", {"type": "string", "maxLength": 64, "pattern": NO_CONTROLS}),
                                   _q("motor_id", "one motor", {"type": "integer", "minimum": 1, "maximum": MAX_ID}),
                                   _q("limit", "at most this many", {"type": "integer", "minimum": 1, "maximum": 100000})],
                    "responses": {"200": _json_response("readings", "ReadingList"), **_errs("400", "401")}},
        },
        "/readings/{reading_id}": {
            "get": {"summary": "one reading with its interpretation and review", "description": tech,
                    "security": AUTH, "parameters": [_path_id("reading_id")],
                    "responses": {"200": _json_response("the reading", "Reading"), **_errs("400", "401", "404")}},
        },
        "/readings/{reading_id}/torque-speed.svg": {
            "get": {"summary": "torque-speed picture: motor at rated and measured voltage, load, operating and "
                               "breakdown points", "description": tech, "security": AUTH,
                    "parameters": [_path_id("reading_id")],
                    "responses": {"200": {"description": "SVG", "content": {"image/svg+xml": {"schema": {"type": "string"}}}},
                                  "304": {"description": "not modified (ETag)"}, **_errs("400", "401", "404")}},
        },
        "/readings/{reading_id}/review": {
            "post": {"summary": "review a reading: accepted, retake or rejected", "description": sup,
                     "security": AUTH, "parameters": [_path_id("reading_id"), CSRF], "requestBody": _body("ReviewInput"),
                     "responses": {"201": _json_response("the review", "ReviewCreated"),
                                   **_errs("400", "401", "403", "404", "413", "415")}},
        },
        "/export.csv": {
            "get": {"summary": "the commissioning record as CSV, one row per reading", "description":
                    sup + " Columns, in this order: " + ", ".join(EXPORT_COLUMNS) + ". Text cells starting with "
                    "=, +, -, @, tab or CR get a leading apostrophe.", "security": AUTH, "parameters": [DATE_Q, SITE_Q],
                    "responses": {"200": {"description": "UTF-8 CSV with a header row",
                                          "content": {"text/csv": {"schema": {"type": "string"}}}},
                                  **_errs("400", "401", "403")}},
        },
        "/interpret": {
            "post": {"summary": "interpret a nameplate and reading without storing anything", "description": tech,
                     "security": AUTH, "parameters": [CSRF], "requestBody": _body("InterpretInput"),
                     "responses": {"200": _json_response("the result", "Result"),
                                   **_errs("400", "401", "403", "404", "413", "415")}},
        },
        "/health": {
            "get": {"summary": "liveness and the database's schema version", "security": [],
                    "responses": {"200": _json_response("up", "Health"), "503": _json_response("database down", "Health"),
                                  **_errs("400")}},
        },
        "/audit": {
            "get": {"summary": "the audit trail: who did what when, newest first", "description": sup,
                    "security": AUTH, "parameters": [DATE_Q, _q("limit", "at most this many",
                                                                 {"type": "integer", "minimum": 1, "maximum": 10000})],
                    "responses": {"200": _json_response("entries", "AuditList"), **_errs("400", "401", "403")}},
        },
        "/openapi.json": {
            "get": {"summary": "this document", "security": [],
                    "responses": {"200": {"description": "OpenAPI 3 document",
                                          "content": {"application/json": {"schema": {"type": "object"}}}}}},
        },
    }
    for path, ops in paths.items():
        if path != "/openapi.json":  # every other route reads or writes the database
            for op in ops.values():
                op["responses"].setdefault("503", ERRORS["503"])
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
