"""Change from a baseline (slipwise.physics.trend).

Sources named beside each check:

* [IEEE43] IEEE Std 43-2013, insulation resistance read as a trend of values corrected to 40 deg C; no
  numeric fall is prescribed: the 50 % mark is ours (documented in TrendThresholds). From memory.
* [ISO10816-1] ISO 10816-1:1995 clause 5.3, criterion II: a change of 25 % of the zone B/C boundary is
  significant. From memory. Zone B/C boundaries from slipwise.physics.vibration (ISO 10816-3, from memory).
* [NEMA-MG1] NEMA MG 1 rule of thumb: current unbalance about 6-10x the voltage unbalance. From memory.
"""

from __future__ import annotations

import doctest

import numpy as np
import pytest

from slipwise.physics import trend
from slipwise.physics.trend import TrendThresholds
from slipwise.physics.vibration import ZONE_BOUNDARIES_MM_S


def test_doctests():
    assert doctest.testmod(trend).failed == 0


def test_insulation_fall_at_the_mark():
    # [IEEE43] trend; our mark: a halving
    assert trend.insulation_falling(2000.0, 1000.0)          # exactly half: at the mark, reported
    assert not trend.insulation_falling(2000.0, 1001.0)      # just above half
    assert not trend.insulation_falling(2000.0, 2500.0)      # risen (dried out): no finding
    assert not trend.insulation_falling(np.nan, 100.0)       # no baseline measurement
    assert not trend.insulation_falling(0.0, 100.0)          # a zero baseline cannot fall


def test_polarization_index_fall():
    assert trend.polarization_index_falling(4.0, 3.2)        # 20 % fall: at the mark
    assert not trend.polarization_index_falling(4.0, 3.3)


def test_winding_unbalance_rise():
    assert trend.winding_unbalance_rising(0.4, 1.4)          # +1 point
    assert not trend.winding_unbalance_rising(0.4, 1.3)


def test_vibration_rise_is_a_quarter_of_the_bc_boundary():
    bc = ZONE_BOUNDARIES_MM_S[("group 2", "rigid")][1]       # 2.8 mm/s [ISO10816-3, from memory]
    assert bc == 2.8
    # [ISO10816-1]: 25 % of 2.8 = 0.7 mm/s, even while still in zone A/B
    assert trend.vibration_rising(1.0, 1.7, bc)
    assert not trend.vibration_rising(1.0, 1.69, bc)
    th = TrendThresholds(vibration_rise_share=0.5)           # overridable
    assert not trend.vibration_rising(1.0, 1.7, bc, th)


def test_load_drift_needs_the_mark_and_more_than_the_bands():
    assert trend.load_drifting(60.0, 80.0, 5.0, 5.0)         # 20 points > 15 and > 10 of bands
    assert not trend.load_drifting(60.0, 70.0, 2.0, 2.0)     # below the mark
    assert not trend.load_drifting(60.0, 80.0, 12.0, 12.0)   # within the bands
    assert trend.load_drifting(80.0, 60.0, np.nan, np.nan)   # a fall drifts too; unknown bands count as 0


def test_current_unbalance_explained_by_the_supply_is_not_reported():
    # [NEMA-MG1]: voltage unbalance up 0.5 point explains up to 5 points of current unbalance
    assert not trend.current_unbalance_rising(2.0, 7.0, 0.5, 1.0)
    assert trend.current_unbalance_rising(2.0, 9.0, 0.5, 1.0)            # 2 points beyond
    assert trend.unexplained_current_unbalance_pct(2.0, 9.0, 0.5, 1.0) == pytest.approx(2.0)
    # a voltage unbalance that fell explains nothing (no credit for the fall)
    assert trend.unexplained_current_unbalance_pct(2.0, 5.0, 1.0, 0.5) == pytest.approx(3.0)


def test_scalar_equals_array():
    base, now = np.array([2000.0, 2000.0, 500.0]), np.array([900.0, 1500.0, 100.0])
    arr = trend.insulation_falling(base, now)
    assert list(arr) == [bool(trend.insulation_falling(b, n)) for b, n in zip(base, now)] == [True, False, True]


def test_thresholds_validate():
    assert TrendThresholds().validate() == []
    bad = TrendThresholds(insulation_fall_pct=120.0).validate()
    assert bad and bad[0][0] == "insulation_fall_pct"
