"""/api/v1/readings: submit, the day's log, one reading, its picture, the supervisor's review."""

from __future__ import annotations

import hashlib
import json

from urllib.parse import urlencode

from flask import Blueprint, Response, current_app, g, request, url_for

from slipwise.contract import MAX_ID
from slipwise.contract.models import READING_NAMES, given_reading, ReadingInput, ReviewInput, parse_body, taken_at
from slipwise.services import readings as services
from slipwise.services.interpretation import torque_speed, with_stored_result
from slipwise.services.records import Submission
from slipwise.store.types import utcnow

from slipwise.engine import Thresholds
from slipwise.store.errors import ValidationError

from .auth import requires
from .errors import ApiError
from .params import date_param, flag_param, int_param, query, text_param
from .picture import picture_title, render_torque_speed_png, render_torque_speed_svg
from .render import curve_json, day_log_chunks, day_log_json, listing_json, reading_record_json, review_json
from .security import SVG_CONTENT_SECURITY_POLICY, json_body
from .state import state

bp = Blueprint("readings", __name__)

SUBMISSION_FIELDS = frozenset(ReadingInput.model_fields)   # the accepted keys (the document shows the same model)

LIST_LIMIT = 100_000
LISTING_PAGE = 2_000      # readings per page of the listing unless limit says otherwise
LISTING_LIMIT = 10_000
DAY_LOG_PIECE = 500       # readings per piece of a streamed day's log


def _json(text: str, status: int = 200) -> Response:
    return Response(text, status=status, mimetype="application/json")


def parse_submission(body: dict) -> Submission:
    p = parse_body(ReadingInput, body)
    inputs = given_reading(p)
    when, taken_date, taken_at_utc = taken_at(p["taken_at"], utcnow())
    return Submission(p["client_id"], p["motor_id"], p["supersedes"], inputs, when, taken_date, taken_at_utc)


@bp.post("/readings")
@requires("technician")
def submit():
    sub = parse_submission(json_body())
    st = state()
    reading, created = services.submit_reading(st.db, g.user, sub, st.thresholds)
    return _json(reading_record_json(reading), 201 if created else 200)


@bp.get("/readings")
@requires("technician")
def day_log():
    args = query(("date", "site", "flag", "technician", "motor_id", "limit"))
    filters = dict(date=date_param(args), site=text_param(args, "site"), flag=flag_param(args),
                   technician=text_param(args, "technician", 64),
                   motor_id=int_param(args, "motor_id", 1, MAX_ID))
    limit = int_param(args, "limit", 1, LIST_LIMIT, LIST_LIMIT)
    rows = services.day_log(state().db, limit=limit, **filters)   # read whole before the answer starts
    if len(rows) <= DAY_LOG_PIECE:
        return _json(day_log_json(rows))
    return Response(day_log_chunks(rows, DAY_LOG_PIECE), mimetype="application/json")   # streamed, no length


@bp.get("/retakes")
@requires("technician")
def retakes():
    """The readings a supervisor asked to take again that no new reading has answered yet, any day."""
    query(())
    return _json(day_log_json(services.open_retakes(state().db, g.user)))


@bp.get("/readings/listing")
@requires("technician")
def listing():
    """The day's log as a lean listing, paged: ``next`` is the relative URL of the next page, null on the last."""
    names = ("date", "site", "flag", "technician", "motor_id", "limit", "after")
    args = query(names)
    filters = dict(date=date_param(args), site=text_param(args, "site"), flag=flag_param(args),
                   technician=text_param(args, "technician", 64),
                   motor_id=int_param(args, "motor_id", 1, MAX_ID))
    limit = int_param(args, "limit", 1, LISTING_LIMIT, LISTING_PAGE)
    after = int_param(args, "after", 1, MAX_ID)
    rows, more = services.day_listing(state().db, limit=limit, after=after, **filters)
    next_url = None
    if more:
        given = {k: args[k] for k in names if args.get(k) and k != "after"}
        next_url = url_for(".listing") + "?" + urlencode({**given, "after": rows[-1]["id"]})
    return _json(listing_json(rows, next_url))


@bp.get("/readings/<id:reading_id>")
@requires("technician")
def one(reading_id: int):
    query(())
    return _json(reading_record_json(services.get_reading(state().db, reading_id)))


@bp.get("/readings/<id:reading_id>/torque-speed.svg")
@requires("technician")
def picture(reading_id: int):
    query(())
    st = state()
    record, summary = services.picture_record(st.db, reading_id)
    # a stored reading never changes and its points come from its stored result, so its picture
    # depends only on the engine that draws the motor's curves
    key = reading_id
    with st.picture_lock:
        svg = st.picture_cache.get(key)
    if svg is None:
        curve = with_stored_result(torque_speed(record, st.thresholds), summary["result"], record["speed_rpm"])
        svg = render_torque_speed_svg(curve, title=picture_title(summary, summary["result"], reading_id))
        with st.picture_lock:
            st.picture_cache[key] = svg
    etag = hashlib.sha256(svg).hexdigest()[:32]
    if request.if_none_match and etag in request.if_none_match:
        resp = Response(status=304)
    else:
        resp = Response(svg, mimetype="image/svg+xml")
    resp.set_etag(etag)
    resp.headers["Cache-Control"] = "private, max-age=3600"
    resp.headers["Content-Security-Policy"] = SVG_CONTENT_SECURITY_POLICY
    return resp


@bp.get("/readings/<id:reading_id>/torque-speed.json")
@requires("technician")
def picture_points(reading_id: int):
    """The same curves and points as the SVG picture, as numbers, for the page to draw (and keep offline)."""
    query(())
    st = state()
    record, summary = services.picture_record(st.db, reading_id)
    curve = with_stored_result(torque_speed(record, st.thresholds), summary["result"], record["speed_rpm"])
    return _json(curve_json(curve, summary["result"], record["speed_rpm"]))


@bp.get("/readings/<id:reading_id>/certificate.pdf")
@requires("technician")
def certificate(reading_id: int):
    """The reading's commissioning certificate: for supervisors, and for the technician who took it."""
    query(())
    st = state()
    cert = services.certificate_record(st.db, reading_id, current_app.extensions.get("slipwise_trend"))
    if g.user["role"] != "supervisor" and cert.reading.row["technician"] != g.user["username"]:
        raise ApiError(403, "forbidden", "a certificate is for supervisors and for the technician who took the "
                                         "reading")
    from .certificate import render_certificate  # fpdf2, segno and matplotlib load on first use
    summary = {"tag": cert.nameplate["tag"], "taken_at": cert.nameplate["taken_at"],
               "engine_version": cert.nameplate["engine_version"]}
    stored = json.loads(cert.nameplate["result"])
    try:
        curve = with_stored_result(torque_speed(cert.engine_record, st.thresholds), stored,
                                   cert.engine_record["speed_rpm"])
        png = render_torque_speed_png(curve, title=picture_title(summary, stored, reading_id))
    except ValidationError:  # a reading the engine cannot draw still gets its certificate, without the picture
        png = None
    pdf = render_certificate(cert, address=f"{request.host_url}#/reading/{reading_id}", picture_png=png,
                             thresholds=st.thresholds or Thresholds())
    resp = Response(pdf, mimetype="application/pdf")
    name = f"certificate-{cert.reading.row['tag']}-reading-{reading_id}.pdf"
    resp.headers["Content-Disposition"] = f'inline; filename="{_safe_filename(name)}"'
    resp.headers["Cache-Control"] = "private, no-cache"
    return resp


def _safe_filename(name: str) -> str:
    return "".join(c if c.isalnum() or c in "-._" else "_" for c in name)


@bp.post("/readings/<id:reading_id>/review")
@requires("supervisor")
def review(reading_id: int):
    body = json_body()
    p = parse_body(ReviewInput, body)
    return _json(review_json(services.review_reading(state().db, g.user, reading_id, p["decision"], p["comment"])),
                 201)
