"""/api/v1/motors: the nameplates. Supervisors create and edit; everyone logged in reads."""

from __future__ import annotations

from flask import Blueprint, g, jsonify

from slipwise.store import motors as store_motors
from slipwise.store import validation
from slipwise.store.motors import REVISION_FIELDS

from .auth import requires
from .errors import ApiError
from .interpretation import check_nameplate
from .params import query, text_param
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
    with state().db.read() as conn:
        items = store_motors.list_motors(conn, site=text_param(args, "site"))
    return jsonify({"motors": items, "count": len(items)})


@bp.post("/motors")
@requires("technician")   # a technician at the motor registers it from its nameplate; edits are supervisors'
def create_motor():
    body = json_body()
    validation.unknown_fields(body, MOTOR_FIELDS)
    site = validation.text("site", body.get("site"), required=True)
    tag = validation.tag(body.get("tag"))
    fields = _fields(body)
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
    validation.unknown_fields(body, MOTOR_FIELDS | {"revision"})
    expected = body.get("revision")
    if expected is not None:
        expected = validation.identifier("revision", expected)
    fields = _fields(body)
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
