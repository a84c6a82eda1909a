"""A motor over time and a site's view (issue 11): read the store, hand the visits to the engine's history.

``motor_history`` gives every reading of a motor across days, oldest first,
with its key results, the baseline, the change-from-baseline findings and when
the next visit is due. ``site_overview`` gives, per site, each motor's last
visit and verdict, the overdue visits and the right-sizing candidates ranked
by yearly savings.
"""

from __future__ import annotations

import json
from dataclasses import dataclass, field
from datetime import date, datetime, timezone
from typing import Any, Mapping

import numpy as np
from sqlalchemy import RowMapping

from slipwise.engine import history as engine_history
from slipwise.physics.trend import TrendThresholds
from slipwise.physics.vibration import vibration as vibration_zone
from slipwise.store import motors as store_motors
from slipwise.store import readings as store_readings
from slipwise.store import sites as store_sites
from slipwise.store.database import Database
from slipwise.store.errors import NotFoundError
from slipwise.store.types import utcnow

from .sites import settings_of


@dataclass(frozen=True)
class MotorHistory:
    """A motor (its current revision row), its site's settings and its visits, oldest first."""

    motor: RowMapping
    settings: dict
    visits: list[dict]
    baseline_id: int | None
    last_visit: date | None
    next_visit_due: date | None
    overdue: bool


@dataclass(frozen=True)
class SiteOverview:
    site: RowMapping
    settings: dict
    motors: list[dict] = field(default_factory=list)


def _visit(row: Mapping[str, Any]) -> dict:
    result = json.loads(row["result"])
    inputs = json.loads(row["inputs"])
    v = {"id": row["id"], "taken_at": row["taken_at"], "taken_date": row["taken_at"][:10],
         "engine_version": row["engine_version"], "technician": row["technician"],
         "review_decision": row["decision"], "supersedes": row["supersedes_id"], "superseded_by": row["superseded_by"]}
    v.update({k: result.get(k) for k in engine_history.KEY_RESULTS})
    v.update({k: inputs.get(k) for k in engine_history.KEY_INPUTS})
    v["right_size_rated_kw"] = result.get("right_size_rated_kw")
    return v


def _zone_bc_mm_s(rated_kw: Any, visits: list[dict], foundation: str = "rigid") -> float:
    """The B/C boundary of the motor's vibration class [mm/s]: rigid foundation unless told (the smaller
    boundary, so a rise is reported sooner)."""
    try:
        kw = float(rated_kw)
    except (TypeError, ValueError):
        return np.nan
    if not kw > 0:
        return np.nan
    return float(vibration_zone(1.0, kw, foundation)["vibration_zone_bc_mm_s"])


def _rated_kw(motor: Mapping[str, Any]) -> Any:
    if motor.get("rated_power_kw") is not None:
        return motor["rated_power_kw"]
    from slipwise.physics.units import HORSEPOWER_W, KILOWATT_W
    return None if motor.get("rated_power_hp") is None else motor["rated_power_hp"] * HORSEPOWER_W / KILOWATT_W


def _history(motor: Mapping[str, Any], rows, settings: dict, today: date, th: TrendThresholds) -> MotorHistory:
    visits = [_visit(r) for r in rows]
    findings = engine_history.change_findings(visits, _zone_bc_mm_s(_rated_kw(motor), visits), th)
    for v, f in zip(visits, findings):
        v["changes"] = f
    b = engine_history.baseline_index(visits)
    for i, v in enumerate(visits):
        v["baseline"] = i == b
    last = date.fromisoformat(visits[-1]["taken_date"]) if visits else None
    months = settings["visit_interval_months"]
    return MotorHistory(motor, settings, visits, None if b is None else visits[b]["id"], last,
                        engine_history.next_visit_due(last, months), engine_history.is_overdue(last, months, today))


def motor_history(db: Database, motor_id: int, today: date | None = None,
                  th: TrendThresholds | None = None) -> MotorHistory:
    """Every reading of a motor, oldest first, with the baseline, change findings and the next visit due."""
    with db.read() as conn:
        motor = store_motors.motor_row(conn, motor_id)
        if motor is None:
            raise NotFoundError(f"no motor with id {motor_id}", "motor_id")
        rows = store_readings.reading_rows(conn, motor_id=motor_id)
        settings = settings_of(store_sites.settings_of_motor(conn, motor_id))
    return _history(motor, rows, settings, today or utcnow().date(), th or TrendThresholds())


def site_overview(db: Database, site_id: int, today: date | None = None,
                  th: TrendThresholds | None = None) -> SiteOverview:
    """Each motor of a site with its last visit, last verdict, overdue state, changes and right-sizing."""
    today = today or utcnow().date()
    with db.read() as conn:
        site = store_sites.site_row(conn, site_id)
        if site is None:
            raise NotFoundError(f"no site with id {site_id}", "site_id")
        motors = store_motors.motor_rows(conn, site=site["name"])
        rows = store_readings.reading_rows(conn, site=site["name"])
    settings = settings_of(site)
    by_motor: dict[int, list] = {}
    for r in rows:
        by_motor.setdefault(r["motor_id"], []).append(r)
    out = []
    for m in motors:
        h = _history(m, by_motor.get(m["id"], []), settings, today, th or TrendThresholds())
        # the last visit that stands (not superseded, not sent back) speaks for the motor
        standing = [v for v in h.visits if v["superseded_by"] is None
                    and v["review_decision"] not in engine_history.SENT_BACK]
        last = standing[-1] if standing else None
        out.append({"motor": m, "history": h, "last": last})
    return SiteOverview(site, settings, out)


def _instant(taken_at: str) -> datetime:
    """``taken_at`` as an aware instant (UTC where the technician's clock gave no offset)."""
    when = datetime.fromisoformat(taken_at)
    return when if when.tzinfo is not None else when.replace(tzinfo=timezone.utc)


def history_until(conn, reading: Mapping[str, Any], nameplate: Mapping[str, Any], as_of: Any = None,
                  th: TrendThresholds | None = None) -> MotorHistory:
    """A motor's visits as a reading's certificate sees them: evidence of its time, not of today.

    Only readings taken at or before ``reading`` and received at or before it belong (the reading itself
    included), so visits stored later never change its certificate. ``as_of`` (the sign-off's time; None for
    a draft: now) fixes what the reviews and corrections were then: each visit's decision is its latest review
    at or before ``as_of``, and a correction counts only if it is itself one of the visits kept. The vibration
    class is read from the nameplate revision the reading used (``nameplate``), not the motor's current one.
    """
    when, received = _instant(reading["taken_at"]), reading["received_at"]
    rows = [r for r in store_readings.reading_rows(conn, motor_id=reading["motor_id"])
            if r["id"] == reading["id"] or (_instant(r["taken_at"]) <= when and r["received_at"] <= received)]
    kept = {r["id"] for r in rows}
    visits = []
    for r in rows:
        v = dict(r)
        if v["superseded_by"] not in kept:
            v["superseded_by"] = None
        if as_of is not None:
            decided = [x["decision"] for x in store_readings.review_rows(conn, r["id"]) if x["reviewed_at"] <= as_of]
            v["decision"] = decided[-1] if decided else None
        visits.append(v)
    settings = settings_of(store_sites.settings_of_motor(conn, reading["motor_id"]))
    return _history(nameplate, visits, settings, when.date(), th or TrendThresholds())
