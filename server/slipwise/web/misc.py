"""Health, the engine without storage, the audit trail, the OpenAPI document."""

from __future__ import annotations

import json

from flask import Blueprint, Response, jsonify

from slipwise.contract import ENGINE_VERSION, INPUT_FIELDS
from slipwise.services import audit as audit_services
from slipwise.services import readings as services
from slipwise.services.records import to_json
from slipwise.store import validation
from slipwise.store.types import utcnow

from .auth import requires
from .openapi import document
from .params import date_param, int_param, query
from .render import audit_entry_dict
from .security import json_body
from .state import state

bp = Blueprint("misc", __name__)


@bp.get("/health")
def health():
    query(())
    st = state()
    try:
        version = st.db.stored_version()
    except Exception:  # the database is down: say so instead of failing
        return jsonify({"status": "unavailable", "engine_version": ENGINE_VERSION}), 503
    return jsonify({"status": "ok", "engine_version": ENGINE_VERSION, "schema_version": version,
                    "database": st.db.dialect})


@bp.post("/interpret")
@requires("technician")
def interpret_without_storing():
    st = state()
    body = json_body()
    validation.unknown_fields(body, frozenset(INPUT_FIELDS) | {"motor_id"})
    reading = validation.reading(body)
    taken_at, _, _ = validation.taken_at(body.get("taken_at"), utcnow())
    if body.get("motor_id") is not None:
        motor_id = validation.identifier("motor_id", body["motor_id"])
        nameplate_keys = set(INPUT_FIELDS) - set(reading) - {"taken_at"}
        given = sorted(k for k in body if k in nameplate_keys)
        if given:
            from .errors import ApiError
            raise ApiError(400, "invalid_input", "give motor_id or the nameplate fields, not both", given[0])
        result = services.interpret_reading(st.db, reading, taken_at, motor_id=motor_id, thresholds=st.thresholds)
    else:
        # the document makes tag optional here: nothing is stored, so an untagged check is fine
        tag = "(untagged)" if validation.blank(body.get("tag")) else validation.tag(body.get("tag"))
        result = services.interpret_reading(st.db, reading, taken_at, nameplate=validation.nameplate(body), tag=tag,
                                            thresholds=st.thresholds)
    return Response(to_json(result), mimetype="application/json")


@bp.get("/audit")
@requires("supervisor")
def audit_trail():
    args = query(("date", "limit"))
    entries = [audit_entry_dict(r) for r in audit_services.audit_trail(
        state().db, date=date_param(args), limit=int_param(args, "limit", 1, 10000, 1000))]
    return jsonify({"entries": entries, "count": len(entries)})


@bp.get("/openapi.json")
def openapi():
    return Response(json.dumps(document(), indent=1), mimetype="application/json")
