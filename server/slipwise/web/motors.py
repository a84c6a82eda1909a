"""/api/v1/motors: the nameplates. Supervisors create and edit; everyone logged in reads."""

from __future__ import annotations

from flask import Blueprint, g, jsonify

from slipwise.store import motors as store_motors
from slipwise.contract.models import MotorInput, MotorUpdate, parse_body
from slipwise.store.schema import REVISION_NAMEPLATE_FIELDS

from .auth import requires
from .errors import ApiError
from .interpretation import check_nameplate
from .params import query, text_param
from .security import json_body
from .state import state

bp = Blueprint("motors", __name__)

MOTOR_FIELDS = frozenset(MotorInput.model_fields)   # the accepted keys (the document shows the same model)



def _fields(parsed: dict) -> dict:
    return {name: parsed[name] for name in (*REVISION_NAMEPLATE_FIELDS, "location", "description")}


@bp.get("/motors")
@requires("technician")
def list_motors():
    args = query(("site",))
    with state().db.read() as conn:
        items = store_motors.list_motors(conn, site=text_param(args, "site"))
    return jsonify({"motors": items, "count": len(items)})


@bp.post("/motors")
@requires("technician")   # a technician at the motor registers it from its nameplate; edits are supervisors'
def create_motor():
    body = json_body()
    parsed = parse_body(MotorInput, body)
    site, tag = parsed["site"], parsed["tag"]
    fields = _fields(parsed)
    check_nameplate(tag, fields)
    with state().db.write() as conn:
        motor = store_motors.create_motor(conn, g.user, site, tag, fields)
    return jsonify(motor), 201


@bp.get("/motors/<id:motor_id>")
@requires("technician")
def get_motor(motor_id: int):
    query(())
    with state().db.read() as conn:
        return jsonify(store_motors.get_motor(conn, motor_id, with_history=True))


@bp.put("/motors/<id:motor_id>")
@requires("supervisor")
def revise_motor(motor_id: int):
    body = json_body()
    parsed = parse_body(MotorUpdate, body)
    expected = parsed["revision"]
    fields = _fields(parsed)
    db = state().db
    with db.read() as conn:
        current = store_motors.get_motor(conn, motor_id)
    for name in ("site", "tag"):
        if name in body and body[name] != current[name]:
            raise ApiError(400, "invalid_input", f"{name} cannot change (it is {current[name]!r}); "
                                                 "register a new motor instead", name)
    check_nameplate(current["tag"], fields)
    with db.write() as conn:
        motor, changed = store_motors.revise_motor(conn, g.user, motor_id, fields, expected)
        motor = store_motors.get_motor(conn, motor_id, with_history=True)
    return jsonify(motor), 200
