"""/api/v1/motors: the nameplates. Supervisors create and edit; everyone logged in reads."""

from __future__ import annotations

from flask import Blueprint, g, jsonify

from slipwise.services import motors as services
from slipwise.store import validation
from slipwise.store.motors import REVISION_FIELDS

from .auth import requires
from .params import query, text_param
from .render import motor_dict, motor_record_dict
from .security import json_body
from .state import state

bp = Blueprint("motors", __name__)

MOTOR_FIELDS = frozenset({"site", "tag", *REVISION_FIELDS})


def _fields(body: dict) -> dict:
    fields = validation.nameplate(body)
    fields["location"] = validation.text("location", body.get("location"))
    fields["description"] = validation.text("description", body.get("description"))
    return fields


@bp.get("/motors")
@requires("technician")
def list_motors():
    args = query(("site",))
    items = [motor_dict(r) for r in services.list_motors(state().db, site=text_param(args, "site"))]
    return jsonify({"motors": items, "count": len(items)})


@bp.post("/motors")
@requires("technician")   # a technician at the motor registers it from its nameplate; edits are supervisors'
def create_motor():
    body = json_body()
    validation.unknown_fields(body, MOTOR_FIELDS)
    site = validation.text("site", body.get("site"), required=True)
    tag = validation.tag(body.get("tag"))
    fields = _fields(body)
    st = state()
    return jsonify(motor_dict(services.register_motor(st.db, g.user, site, tag, fields, st.thresholds))), 201


@bp.get("/motors/<id:motor_id>")
@requires("technician")
def get_motor(motor_id: int):
    query(())
    return jsonify(motor_record_dict(services.get_motor(state().db, motor_id, with_history=True)))


@bp.put("/motors/<id:motor_id>")
@requires("supervisor")
def revise_motor(motor_id: int):
    body = json_body()
    validation.unknown_fields(body, MOTOR_FIELDS | {"revision"})
    expected = body.get("revision")
    if expected is not None:
        expected = validation.identifier("revision", expected)
    fields = _fields(body)
    identity = {k: body[k] for k in ("site", "tag") if k in body}
    st = state()
    motor, _changed = services.revise_motor(st.db, g.user, motor_id, fields, expected, identity, st.thresholds)
    return jsonify(motor_record_dict(motor)), 200
