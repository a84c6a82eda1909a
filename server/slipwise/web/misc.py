"""Health, the engine without storage, the audit trail, the OpenAPI document."""

from __future__ import annotations

import json

from flask import Blueprint, Response, jsonify

from slipwise.contract import ENGINE_VERSION
from slipwise.contract.models import READING_NAMES, given_reading, InterpretInput, parse_body, taken_at
from slipwise.services import audit as audit_services
from slipwise.services import readings as services
from slipwise.services.records import to_json
from slipwise.store.schema import REVISION_NAMEPLATE_FIELDS
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
    p = parse_body(InterpretInput, body)   # motor_id or a nameplate, not both (a blank field is no field)
    reading = given_reading(p)
    when, _, _ = taken_at(p["taken_at"], utcnow())
    if p["motor_id"] is not None:
        result = services.interpret_reading(st.db, reading, when, motor_id=p["motor_id"], thresholds=st.thresholds)
    else:
        # the document makes tag optional here: nothing is stored, so an untagged check is fine
        nameplate = {name: p[name] for name in REVISION_NAMEPLATE_FIELDS}
        result = services.interpret_reading(st.db, reading, when, nameplate=nameplate, tag=p["tag"] or "(untagged)",
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
