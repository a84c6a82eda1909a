"""Issue 11: a motor over time, and a site's view for the supervisor.

* ``GET /motors/{id}/history``: every reading of the motor, oldest first, with key results, the baseline and
  the change-from-baseline findings; when the next visit is due.
* ``GET /sites``, ``GET /sites/{id}``: sites with their settings; ``PUT /sites/{id}/settings`` (supervisor):
  default running hours and energy price, visit interval.
* ``GET /sites/{id}/overview``: motors by last verdict, overdue visits, right-sizing candidates by savings;
  ``GET /sites/{id}/overview.csv``: the same motors as CSV.

Views parse and render; the work is in ``slipwise.services.history`` and ``slipwise.services.sites``.
"""

from __future__ import annotations

import csv
import io
from typing import Any, Mapping

from flask import Blueprint, Response, current_app, g, jsonify

from slipwise.contract.models import SiteSettingsInput, parse_body
from slipwise.engine.records import neutralise
from slipwise.services import history as services
from slipwise.services import sites as site_services

from .auth import requires
from .params import query
from .security import json_body
from .state import state

bp = Blueprint("history", __name__)

#: Order of the last verdicts in the site's view: what needs someone first.
VERDICT_ORDER = ("act", "retake", "watch", "sound", "never_read")


def _trend():
    return current_app.extensions.get("slipwise_trend")


def _day(d) -> str | None:
    return None if d is None else d.isoformat()


def site_dict(row: Mapping[str, Any]) -> dict:
    s = site_services.settings_of(row)
    return {"id": row["id"], "name": row["name"],
            "settings": {**s, "set_at": None if row.get("set_at") is None else row["set_at"].isoformat(),
                         "set_by": row.get("set_by")}}


def visit_dict(v: Mapping[str, Any]) -> dict:
    return {"reading_id": v["id"], "taken_at": v["taken_at"], "taken_date": v["taken_date"],
            "engine_version": v["engine_version"], "technician": v["technician"], "review": v["review_decision"],
            "supersedes": v["supersedes"], "superseded_by": v["superseded_by"], "baseline": v["baseline"],
            **{k: v.get(k) for k in ("load_pct", "load_low_pct", "load_high_pct", "load_state",
                                     "current_unbalance_pct", "voltage_unbalance_pct", "efficiency_pct",
                                     "breakdown_margin", "breakdown_margin_low", "insulation_resistance_40c_mohm",
                                     "polarization_index", "winding_resistance_unbalance_pct", "vibration_zone",
                                     "vibration_velocity_mm_s", "verdict", "input_power_kw", "annual_energy_kwh",
                                     "right_size_rated_kw", "right_size_savings_kwh")},
            "changes": v["changes"]}


def history_dict(h: services.MotorHistory) -> dict:
    m = h.motor
    return {"motor_id": m["id"], "site": m["site"], "tag": m["tag"], "location": m["location"],
            "description": m["description"], "visit_interval_months": h.settings["visit_interval_months"],
            "baseline_reading_id": h.baseline_id, "last_visit": _day(h.last_visit),
            "next_visit_due": _day(h.next_visit_due), "overdue": h.overdue, "count": len(h.visits),
            "visits": [visit_dict(v) for v in h.visits]}


def site_motor_dict(entry: Mapping[str, Any]) -> dict:
    m, h, last = entry["motor"], entry["history"], entry["last"] or {}
    return {"motor_id": m["id"], "tag": m["tag"], "location": m["location"], "description": m["description"],
            "last_visit": _day(h.last_visit), "next_visit_due": _day(h.next_visit_due), "overdue": h.overdue,
            "last_reading_id": last.get("id"), "verdict": last.get("verdict"), "review": last.get("review_decision"),
            "changes": [c["code"] for c in last.get("changes", [])],
            **{k: last.get(k) for k in ("input_power_kw", "annual_energy_kwh", "right_size_rated_kw",
                                        "right_size_savings_kwh")}}


def overview_dict(o: services.SiteOverview) -> dict:
    motors = [site_motor_dict(e) for e in o.motors]
    rank = {w: i for i, w in enumerate(VERDICT_ORDER)}
    by_verdict = {w: 0 for w in VERDICT_ORDER}
    for m in motors:
        word = m["verdict"] or "never_read"
        by_verdict[word] = by_verdict.get(word, 0) + 1
    motors.sort(key=lambda m: (rank.get(m["verdict"] or "never_read", len(rank)), m["tag"]))
    overdue = sorted((m for m in motors if m["overdue"]), key=lambda m: (m["last_visit"] or "", m["tag"]))
    # a candidate with savings (or without hours to reckon them); one whose savings are 0 has nothing to offer
    candidates = sorted((m for m in motors if m["right_size_rated_kw"] is not None
                         and (m["right_size_savings_kwh"] is None or m["right_size_savings_kwh"] > 0)),
                        key=lambda m: (-(m["right_size_savings_kwh"] or 0.0), m["tag"]))
    return {"site": site_dict(o.site), "by_verdict": by_verdict, "overdue": overdue, "right_sizing": candidates,
            "motors": motors}


@bp.get("/motors/<id:motor_id>/history")
@requires("technician")
def motor_history(motor_id: int):
    query(())
    return jsonify(history_dict(services.motor_history(state().db, motor_id, th=_trend())))


@bp.get("/sites")
@requires("technician")
def list_sites():
    query(())
    items = [site_dict(r) for r in site_services.list_sites(state().db)]
    return jsonify({"count": len(items), "sites": items})


@bp.get("/sites/<id:site_id>")
@requires("technician")
def get_site(site_id: int):
    query(())
    return jsonify(site_dict(site_services.get_site(state().db, site_id)))


@bp.put("/sites/<id:site_id>/settings")
@requires("supervisor")
def set_site_settings(site_id: int):
    parsed = parse_body(SiteSettingsInput, json_body())
    return jsonify(site_dict(site_services.set_site_settings(state().db, g.user, site_id, parsed)))


@bp.get("/sites/<id:site_id>/overview")
@requires("technician")
def site_overview(site_id: int):
    query(())
    return jsonify(overview_dict(services.site_overview(state().db, site_id, th=_trend())))


#: Columns of the site's CSV (one row per motor, in the overview's order).
OVERVIEW_CSV_COLUMNS = ("site", "tag", "location", "description", "last_visit", "next_visit_due", "overdue",
                        "last_reading_id", "verdict", "review", "changes", "input_power_kw", "annual_energy_kwh",
                        "right_size_rated_kw", "right_size_savings_kwh")


@bp.get("/sites/<id:site_id>/overview.csv")
@requires("supervisor")
def site_overview_csv(site_id: int):
    query(())
    data = overview_dict(services.site_overview(state().db, site_id, th=_trend()))
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\r\n")
    w.writerow(OVERVIEW_CSV_COLUMNS)
    for m in data["motors"]:
        cells = {**m, "site": data["site"]["name"], "changes": ";".join(m["changes"]),
                 "overdue": "yes" if m["overdue"] else "no"}
        w.writerow([neutralise("" if cells.get(c) is None else _cell(c, cells[c])) for c in OVERVIEW_CSV_COLUMNS])
    name = "site-%d-overview.csv" % site_id
    return Response(buf.getvalue(), mimetype="text/csv",
                    headers={"Content-Disposition": f'attachment; filename="{name}"'})


def _cell(column: str, value: Any) -> Any:
    if isinstance(value, float):
        from slipwise.engine.records import number_cell
        return number_cell(column, value)
    return value
