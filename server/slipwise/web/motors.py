"""/api/v1/motors: the nameplates. Supervisors create and edit; everyone logged in reads."""

from __future__ import annotations

from flask import Blueprint, g, jsonify

from slipwise.contract.models import MotorInput, MotorUpdate, parse_body
from slipwise.services import motors as services
from slipwise.store.schema import REVISION_NAMEPLATE_FIELDS

from .auth import requires
from .params import query, text_param
from .render import motor_dict, motor_record_dict
from .security import json_body
from .state import state

bp = Blueprint("motors", __name__)

MOTOR_FIELDS = frozenset(MotorInput.model_fields)   # the accepted keys (the document shows the same model)



def _basis(row) -> dict | None:
    """The provisional basis of one motor row (the page caches it for offline verdicts)."""
    return services.provisional_bases([row], state().thresholds)[0]


def _fields(parsed: dict) -> dict:
    return {name: parsed[name] for name in (*REVISION_NAMEPLATE_FIELDS, "location", "description")}


@bp.get("/motors")
@requires("technician")
def list_motors():
    args = query(("site",))
    st = state()
    rows = services.list_motors(st.db, site=text_param(args, "site"))
    items = [motor_dict(r, b) for r, b in zip(rows, services.provisional_bases(rows, st.thresholds))]
    return jsonify({"motors": items, "count": len(items)})


@bp.post("/motors")
@requires("technician")   # a technician at the motor registers it from its nameplate; edits are supervisors'
def create_motor():
    body = json_body()
    parsed = parse_body(MotorInput, body)
    fields = _fields(parsed)
    st = state()
    motor = services.register_motor(st.db, g.user, parsed["site"], parsed["tag"], fields, st.thresholds)
    return jsonify(motor_dict(motor, _basis(motor))), 201


@bp.get("/motors/<id:motor_id>")
@requires("technician")
def get_motor(motor_id: int):
    query(())
    record = services.get_motor(state().db, motor_id, with_history=True)
    return jsonify(motor_record_dict(record, _basis(record.row)))


@bp.put("/motors/<id:motor_id>")
@requires("supervisor")
def revise_motor(motor_id: int):
    body = json_body()
    parsed = parse_body(MotorUpdate, body)
    fields = _fields(parsed)
    identity = {k: body[k] for k in ("site", "tag") if k in body}
    st = state()
    motor, _changed = services.revise_motor(st.db, g.user, motor_id, fields, parsed["revision"], identity,
                                            st.thresholds)
    return jsonify(motor_record_dict(motor, _basis(motor.row))), 200
