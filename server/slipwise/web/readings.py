"""/api/v1/readings: submit, the day's log, one reading, its picture, the supervisor's review."""

from __future__ import annotations

import hashlib
import json

from flask import Blueprint, Response, g, request

from slipwise.contract import READING_FIELDS
from slipwise.store import readings as store_readings
from slipwise.store import validation
from slipwise.store.readings import Submission
from slipwise.store.types import utcnow

from .auth import requires
from .interpretation import interpret, torque_speed, with_stored_result
from .params import date_param, flag_param, int_param, query, text_param
from .picture import picture_title, render_torque_speed_svg
from .security import SVG_CONTENT_SECURITY_POLICY, json_body
from .state import state

bp = Blueprint("readings", __name__)

SUBMISSION_FIELDS = frozenset({"client_id", "motor_id", "supersedes", *READING_FIELDS})
LIST_LIMIT = 100_000


def _json(text: str, status: int = 200) -> Response:
    return Response(text, status=status, mimetype="application/json")


def parse_submission(body: dict) -> Submission:
    validation.unknown_fields(body, SUBMISSION_FIELDS)
    client_id = validation.client_id(body.get("client_id"))
    motor_id = validation.identifier("motor_id", body.get("motor_id"))
    supersedes = validation.identifier("supersedes", body.get("supersedes"), required=False)
    inputs = validation.reading(body)
    taken_at, taken_date, taken_at_utc = validation.taken_at(body.get("taken_at"), utcnow())
    return Submission(client_id, motor_id, supersedes, inputs, taken_at, taken_date, taken_at_utc)


@bp.post("/readings")
@requires("technician")
def submit():
    sub = parse_submission(json_body())
    reading, created = store_readings.submit(state().db, g.user, sub, interpret)
    return _json(json.dumps(reading, ensure_ascii=False), 201 if created else 200)


@bp.get("/readings")
@requires("technician")
def day_log():
    args = query(("date", "site", "flag", "technician", "motor_id", "limit"))
    filters = dict(date=date_param(args), site=text_param(args, "site"), flag=flag_param(args),
                   technician=text_param(args, "technician", 64),
                   motor_id=int_param(args, "motor_id", 1, validation.MAX_ID))
    limit = int_param(args, "limit", 1, LIST_LIMIT, LIST_LIMIT)
    with state().db.read() as conn:
        items, count = store_readings.list_readings_json(conn, limit=limit, **filters)
    return _json('{"count":' + str(count) + ',"readings":' + items + "}")


@bp.get("/readings/<id:reading_id>")
@requires("technician")
def one(reading_id: int):
    query(())
    with state().db.read() as conn:
        return _json(store_readings.get_reading_json(conn, reading_id))


@bp.get("/readings/<id:reading_id>/torque-speed.svg")
@requires("technician")
def picture(reading_id: int):
    query(())
    st = state()
    with st.db.read() as conn:
        record, summary = store_readings.record_for_picture(conn, reading_id)
    # a stored reading never changes and its points come from its stored result, so its picture
    # depends only on the engine that draws the motor's curves
    key = reading_id
    with st.picture_lock:
        svg = st.picture_cache.get(key)
        if svg is not None:
            st.picture_cache.move_to_end(key)
    if svg is None:
        with st.db.read() as conn:
            stored = store_readings.get_reading(conn, reading_id)
        curve = with_stored_result(torque_speed(record), stored["result"], record["speed_rpm"])
        svg = render_torque_speed_svg(curve, title=picture_title(summary, stored["result"], reading_id))
        with st.picture_lock:
            st.picture_cache[key] = svg
            while len(st.picture_cache) > st.picture_cache_size:
                st.picture_cache.popitem(last=False)
    etag = hashlib.sha256(svg).hexdigest()[:32]
    if request.if_none_match and etag in request.if_none_match:
        resp = Response(status=304)
    else:
        resp = Response(svg, mimetype="image/svg+xml")
    resp.set_etag(etag)
    resp.headers["Cache-Control"] = "private, max-age=3600"
    resp.headers["Content-Security-Policy"] = SVG_CONTENT_SECURITY_POLICY
    return resp


@bp.post("/readings/<id:reading_id>/review")
@requires("supervisor")
def review(reading_id: int):
    body = json_body()
    validation.unknown_fields(body, frozenset({"decision", "comment"}))
    decision = body.get("decision")
    if not isinstance(decision, str):
        decision = ""
    comment = validation.text("comment", body.get("comment"), limit=2000)
    result = store_readings.add_review(state().db, g.user, reading_id, decision, comment)
    return _json(json.dumps(result, ensure_ascii=False), 201)
