"""A motor over time (issue 11): its visits, the baseline, the change findings, when the next visit is due.

Pure: visits in (plain dicts, oldest first), findings out; the services read the
store and the web layer renders. The numbers are judged by
:mod:`slipwise.physics.trend`; this module picks what to compare and words it.

* **Baseline**: the first visit accepted at review (signed off) and not
  superseded by a correction.
* **Compared**: every later visit that is not superseded and not sent back
  (retake or rejected) is compared with the baseline; a visit before the
  baseline, or of a motor without one, has no change findings.
* **Overdue**: the last visit (any reading, in time order) is older than the
  site's interval (12 months where never set, common practice).
"""

from __future__ import annotations

import calendar
from datetime import date
from typing import Any, Iterable, Mapping, Sequence

import numpy as np

from ..physics import trend
from ..physics.trend import TrendThresholds

#: The key results shown per visit (result columns; null where a visit's engine did not give one).
KEY_RESULTS = ("load_pct", "load_low_pct", "load_high_pct", "load_state", "current_unbalance_pct",
               "voltage_unbalance_pct", "efficiency_pct", "breakdown_margin", "breakdown_margin_low",
               "insulation_resistance_40c_mohm", "polarization_index", "winding_resistance_unbalance_pct",
               "vibration_zone", "verdict", "input_power_kw", "annual_energy_kwh", "right_size_savings_kwh")
#: Reading inputs kept with a visit for the trend (null when absent).
KEY_INPUTS = ("vibration_velocity_mm_s",)
#: Reviews after which a visit is not compared (sent back).
SENT_BACK = ("retake", "rejected")

CHANGE_TEXT = {
    "insulation_falling": (
        "Insulation resistance at 40 °C has fallen by {value:.0f} % since the baseline (mark {mark:g} %): "
        "IEEE 43 reads insulation as a trend; find the cause (moisture, dirt, damage) before it reaches the minimum."),
    "polarization_index_falling": (
        "Polarization index has fallen by {value:.0f} % since the baseline (mark {mark:g} %): the insulation may be "
        "taking up moisture or dirt."),
    "winding_unbalance_rising": (
        "Winding resistance unbalance has risen by {value:.2f} points since the baseline (mark {mark:g}): look for a "
        "loose or high-resistance connection, or shorted turns."),
    "vibration_rising": (
        "Vibration has risen by {value:.2f} mm/s since the baseline, at least a quarter of the zone B/C boundary "
        "(ISO 10816-1 change criterion, from memory), even if still in zone A or B: look for unbalance, "
        "misalignment, looseness or a bearing."),
    "load_drifting": (
        "Load has moved by {value:.0f} points of rating since the baseline (mark {mark:g}, beyond both bands): "
        "the duty has changed; check the process, the driven machine and the sizing."),
    "current_unbalance_rising": (
        "Current unbalance has risen {value:.1f} points more than the change in voltage unbalance explains "
        "(NEMA MG 1 rule of thumb: current unbalance is 6-10 times the voltage unbalance, from memory): look "
        "for a poor connection or a winding fault."),
}
CHANGE_CAUTION = ("Tests and inspection of the winding are done by qualified persons with the circuit isolated, "
                  "locked off and proved dead; discharge the winding after an insulation test; local electrical "
                  "codes and licensed practice prevail.")


def _num(value) -> float:
    try:
        return float(value) if value is not None else np.nan
    except (TypeError, ValueError):
        return np.nan


def baseline_index(visits: Sequence[Mapping[str, Any]]) -> int | None:
    """Index of the baseline visit: the first accepted one that no correction supersedes."""
    for i, v in enumerate(visits):
        if v.get("review_decision") == "accepted" and v.get("superseded_by") is None:
            return i
    return None


def _compared(v: Mapping[str, Any]) -> bool:
    return v.get("superseded_by") is None and v.get("review_decision") not in SENT_BACK


def change_findings(visits: Sequence[Mapping[str, Any]], zone_bc_mm_s: float = np.nan,
                    th: TrendThresholds | None = None) -> list[list[dict]]:
    """Change-from-baseline findings per visit (``[]`` where none, or not compared).

    Parameters
    ----------
    visits : sequence of mapping
        Oldest first; each with ``review_decision``, ``superseded_by``, the
        :data:`KEY_RESULTS` and :data:`KEY_INPUTS` (None where absent).
    zone_bc_mm_s : float
        Zone B/C boundary of the motor's vibration class [mm/s]; NaN: no
        vibration trend.
    th : TrendThresholds, optional
    """
    th = th or TrendThresholds()
    out: list[list[dict]] = [[] for _ in visits]
    b = baseline_index(visits)
    if b is None:
        return out
    later = [i for i in range(b + 1, len(visits)) if _compared(visits[i])]
    if not later:
        return out
    base = visits[b]
    col = {k: np.array([_num(visits[i].get(k)) for i in later]) for k in KEY_RESULTS + KEY_INPUTS
           if k not in ("load_state", "vibration_zone", "verdict")}
    bv = {k: _num(base.get(k)) for k in col}
    half = lambda lo, hi: (hi - lo) / 2.0  # noqa: E731
    judged = {
        "insulation_falling": (trend.insulation_falling(bv["insulation_resistance_40c_mohm"],
                                                        col["insulation_resistance_40c_mohm"], th),
                               trend.fall_pct(bv["insulation_resistance_40c_mohm"], col["insulation_resistance_40c_mohm"]),
                               th.insulation_fall_pct),
        "polarization_index_falling": (trend.polarization_index_falling(bv["polarization_index"],
                                                                        col["polarization_index"], th),
                                       trend.fall_pct(bv["polarization_index"], col["polarization_index"]),
                                       th.polarization_index_fall_pct),
        "winding_unbalance_rising": (trend.winding_unbalance_rising(bv["winding_resistance_unbalance_pct"],
                                                                    col["winding_resistance_unbalance_pct"], th),
                                     col["winding_resistance_unbalance_pct"] - bv["winding_resistance_unbalance_pct"],
                                     th.winding_unbalance_rise_pct),
        "vibration_rising": (trend.vibration_rising(bv["vibration_velocity_mm_s"], col["vibration_velocity_mm_s"],
                                                    zone_bc_mm_s, th),
                             col["vibration_velocity_mm_s"] - bv["vibration_velocity_mm_s"],
                             th.vibration_rise_share),
        "load_drifting": (trend.load_drifting(bv["load_pct"], col["load_pct"],
                                              half(bv["load_low_pct"], bv["load_high_pct"]),
                                              half(col["load_low_pct"], col["load_high_pct"]), th),
                          np.abs(col["load_pct"] - bv["load_pct"]), th.load_drift_pct),
        "current_unbalance_rising": (trend.current_unbalance_rising(
            bv["current_unbalance_pct"], col["current_unbalance_pct"], bv["voltage_unbalance_pct"],
            col["voltage_unbalance_pct"], th),
            trend.unexplained_current_unbalance_pct(bv["current_unbalance_pct"], col["current_unbalance_pct"],
                                                    bv["voltage_unbalance_pct"], col["voltage_unbalance_pct"], th),
            th.current_unbalance_margin_pct),
    }
    for code, (hit, value, mark) in judged.items():
        hit, value = np.atleast_1d(hit), np.atleast_1d(value)
        for k, i in enumerate(later):
            if hit[k]:
                out[i].append({"code": code, "text": CHANGE_TEXT[code].format(value=float(value[k]), mark=mark),
                               "caution": CHANGE_CAUTION if code != "load_drifting" else ""})
    return out


def add_months(day: date, months: int) -> date:
    """The same day ``months`` calendar months later (the month's last day where it has fewer days)."""
    m = day.month - 1 + int(months)
    year, month = day.year + m // 12, m % 12 + 1
    return date(year, month, min(day.day, calendar.monthrange(year, month)[1]))


def next_visit_due(last_visit: date | None, interval_months: int) -> date | None:
    """When the next visit is due: the last visit plus the interval; None without a visit."""
    return None if last_visit is None else add_months(last_visit, interval_months)


def is_overdue(last_visit: date | None, interval_months: int, today: date) -> bool:
    """True when a visited motor's next visit is due before ``today`` (a motor never visited is not overdue:
    it is still to be commissioned)."""
    due = next_visit_due(last_visit, interval_months)
    return due is not None and due < today


def trend_thresholds(values: Mapping[str, Any] | Iterable | None) -> TrendThresholds:
    """:class:`TrendThresholds` with overrides; ValueError naming the first bad one."""
    if not values:
        return TrendThresholds()
    known = set(TrendThresholds.names())
    clean = {}
    for key, value in dict(values).items():
        if key not in known:
            raise ValueError(f"{key} is not a trend threshold; known: {', '.join(sorted(known))}")
        clean[key] = float(value)
    th = TrendThresholds(**clean)
    bad = th.validate()
    if bad:
        raise ValueError(bad[0][1])
    return th
