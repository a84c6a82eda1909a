"""A motor over time (slipwise.engine.history): baseline, change findings, visit interval.

Sources: the change criteria of slipwise.physics.trend ([IEEE43] trending; [ISO10816-1] 25 % of the zone B/C
boundary, from memory; [NEMA-MG1] current unbalance 6-10x the voltage unbalance, from memory); the
12-month interval is the common inspection interval (common practice).
"""

from __future__ import annotations

from datetime import date

import pytest

from slipwise.engine import history
from slipwise.physics.trend import TrendThresholds


def visit(**kw):
    base = {k: None for k in history.KEY_RESULTS + history.KEY_INPUTS}
    base.update(review_decision=None, superseded_by=None, load_pct=60.0, load_low_pct=55.0, load_high_pct=65.0,
                current_unbalance_pct=2.0, voltage_unbalance_pct=0.5)
    base.update(kw)
    return base


def codes(found):
    return [[c["code"] for c in f] for f in found]


def test_baseline_is_the_first_accepted_reading_not_superseded():
    vs = [visit(review_decision="retake"), visit(review_decision="accepted", superseded_by=9),
          visit(review_decision="accepted"), visit()]
    assert history.baseline_index(vs) == 2
    assert history.baseline_index([visit(), visit(review_decision="rejected")]) is None


def test_changes_against_the_baseline():
    vs = [visit(review_decision="accepted", insulation_resistance_40c_mohm=2000.0, polarization_index=4.0,
                winding_resistance_unbalance_pct=0.5, vibration_velocity_mm_s=1.0),
          # [IEEE43] 2000 -> 1200 MOhm: 40 % fall, below our 50 % mark; vibration +0.5 < 0.7
          visit(insulation_resistance_40c_mohm=1200.0, polarization_index=3.8, vibration_velocity_mm_s=1.5),
          # 2000 -> 700 MOhm (65 %), PI 4 -> 2.9 (27.5 %), [ISO10816-1] +0.9 mm/s >= 0.25 x 2.8
          visit(insulation_resistance_40c_mohm=700.0, polarization_index=2.9, winding_resistance_unbalance_pct=1.8,
                vibration_velocity_mm_s=1.9, load_pct=85.0, load_low_pct=80.0, load_high_pct=90.0),
          # sent back: not compared
          visit(review_decision="retake", insulation_resistance_40c_mohm=10.0)]
    found = history.change_findings(vs, zone_bc_mm_s=2.8)
    assert codes(found) == [[], [], ["insulation_falling", "polarization_index_falling", "winding_unbalance_rising",
                                     "vibration_rising", "load_drifting"], []]
    assert "65 %" in found[2][0]["text"] and found[2][0]["caution"]
    # overridable: a 30 % mark catches the second visit's 40 % fall
    found = history.change_findings(vs, 2.8, TrendThresholds(insulation_fall_pct=30.0))
    assert "insulation_falling" in codes(found)[1]


def test_current_unbalance_rise_the_supply_does_not_explain():
    # [NEMA-MG1] 0.5 -> 0.6 % voltage unbalance explains 1 point; 2 -> 6 % current unbalance leaves 3
    vs = [visit(review_decision="accepted"), visit(current_unbalance_pct=6.0, voltage_unbalance_pct=0.6),
          visit(current_unbalance_pct=6.0, voltage_unbalance_pct=0.9)]
    assert codes(history.change_findings(vs)) == [[], ["current_unbalance_rising"], []]


def test_no_baseline_no_changes():
    vs = [visit(insulation_resistance_40c_mohm=2000.0), visit(insulation_resistance_40c_mohm=10.0)]
    assert codes(history.change_findings(vs)) == [[], []]


@pytest.mark.parametrize("day, months, due", [
    (date(2024, 7, 10), 12, date(2025, 7, 10)),
    (date(2024, 1, 31), 1, date(2024, 2, 29)),     # leap February: the month's last day
    (date(2023, 11, 30), 3, date(2024, 2, 29)),
    (date(2024, 12, 15), 6, date(2025, 6, 15)),
])
def test_next_visit_due(day, months, due):
    assert history.next_visit_due(day, months) == due


def test_overdue():
    assert history.is_overdue(date(2024, 7, 10), 12, date(2025, 7, 11))
    assert not history.is_overdue(date(2024, 7, 10), 12, date(2025, 7, 10))   # due today: not yet overdue
    assert not history.is_overdue(None, 12, date(2030, 1, 1))                 # never visited


def test_trend_thresholds_from_mapping():
    assert history.trend_thresholds({"vibration_rise_share": "0.3"}).vibration_rise_share == 0.3
    with pytest.raises(ValueError, match="not a trend threshold"):
        history.trend_thresholds({"nonsense": 1})
    with pytest.raises(ValueError, match="insulation_fall_pct"):
        history.trend_thresholds({"insulation_fall_pct": 200})
