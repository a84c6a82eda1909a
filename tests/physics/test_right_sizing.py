"""Right-sizing: rating choice, replacement efficiency, savings band, speed trap.

Sources named beside each check:

* [DOE-LOAD] US DOE Motor Challenge, "Determining Electric Motor Load and
  Efficiency": motors are designed to run at 50-100 % of rated load. Read.
* [UKSI] SI 2021/745 Schedule 16 (copy of Regulation (EU) 2019/1781 Annex I,
  IEC 60034-30-1 coefficients): IE3 4-pole 50 Hz 7.5 kW 90.4 %, 11 kW 91.4 %;
  IE4 11 kW 93.3 % (as carried and tested in efficiency_class).
* [CSE-5HP] Consulting-Specifying Engineer blog on motor selection with
  MotorMaster for a 5 hp chilled-glycol pump: two motors of near-identical
  efficiency, rated 1,750 rpm and 1,760 rpm; on the same centrifugal pump the
  first runs at 95 % of full load, the faster one at 96.5 %. Read.
"""

from __future__ import annotations

import doctest

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from slipwise.physics import right_sizing
from slipwise.physics.energy import (
    affinity_power_kw,
    annual_energy_kwh,
    right_size_savings_kwh,
    right_size_savings_with_speed_kwh,
    savings_to_report_kwh,
)
from slipwise.physics.right_sizing import (
    STANDARD_RATINGS_KW,
    replacement_efficiency_pct,
    right_size_rated_kw,
    right_sizing as right_size,
    typical_rated_slip_pu,
    variable_torque_speed_rpm,
)

HP_KW = 0.7457


def test_doctests():
    assert doctest.testmod(right_sizing).failed == 0


# --- rating list and choice ----------------------------------------------------

@pytest.mark.parametrize("freq", [50.0, 60.0])
def test_rating_lists_span_the_standard(freq):
    r = STANDARD_RATINGS_KW[freq]
    assert r[0] == 0.12 and r[-1] == 1000.0                 # IEC 60034-30-1 scope
    assert np.all(np.diff(r) > 0)
    assert 11.0 in r and 0.75 in r and 400.0 in r


@pytest.mark.parametrize("load_kw, freq, expected", [
    (8.0, 50.0, 11.0),       # between 7.5 and 11: the next rating up
    (11.0, 50.0, 11.0),      # load exactly on a rating: that rating, at 100 %
    (11.5, 50.0, 15.0),
    (0.05, 50.0, 0.12),      # below the smallest rating: the smallest
    (210.0, 50.0, 250.0),    # IEC 60072-1 tail above the table's 200 kW row
    (3.0, 60.0, 3.7),        # 60 Hz list: 3 hp (2.2 kW) then 5 hp (3.7 kW)
    (380.0, 60.0, 400.0),
    (1000.0, 50.0, 1000.0),  # the largest rating in scope
])
def test_right_size_rated_kw(load_kw, freq, expected):
    assert right_size_rated_kw(load_kw, freq) == expected


def test_right_size_rated_kw_undefined_rows():
    out = right_size_rated_kw([0.0, -1.0, 1000.5, np.nan, 8.0], [50.0, 50.0, 50.0, 50.0, 25.0])
    # no load, negative load, beyond 1000 kW, unknown load, no rating list for 25 Hz
    assert np.isnan(out).all()


def test_right_size_max_load_is_checked():
    assert right_size_rated_kw(8.0, 50.0, max_load_pu=0.75) == 11.0   # 8 / 0.75 = 10.7 kW
    assert right_size_rated_kw(8.0, 50.0, max_load_pu=0.5) == 18.5    # 16 kW needed
    for bad in (0.3, 1.2):
        with pytest.raises(ValueError, match="max_load_pu"):
            right_size_rated_kw(8.0, 50.0, max_load_pu=bad)


def test_right_size_scalar_equals_array():
    p = np.array([0.3, 4.0, 37.5, 500.0])
    arr = right_size_rated_kw(p, 50.0)
    assert arr.tolist() == [float(right_size_rated_kw(x, 50.0)) for x in p]


@settings(deadline=None, max_examples=300)
@given(st.floats(0.12, 1000.0), st.sampled_from([50.0, 60.0]), st.floats(0.5, 1.0))
def test_right_size_is_the_smallest_that_carries(p, freq, max_load):
    rated = right_size_rated_kw(p, freq, max_load)
    ratings = STANDARD_RATINGS_KW[freq]
    if p / max_load > ratings[-1]:
        assert np.isnan(rated)
        return
    assert p <= max_load * rated * (1 + 1e-9)
    smaller = ratings[ratings < rated]
    assert smaller.size == 0 or p > max_load * smaller[-1]


@pytest.mark.parametrize("freq, lowest_pct", [(50.0, 66.6), (60.0, 59.4)])
def test_right_sized_load_range(freq, lowest_pct):
    # [DOE-LOAD] 50-100 % design range: the rating steps keep the new motor above these
    p = np.geomspace(0.12, 1000.0, 20001)
    load_pct = 100.0 * p / right_size_rated_kw(p, freq)
    assert load_pct.max() <= 100.0 + 1e-9
    assert load_pct.min() >= lowest_pct


# --- replacement efficiency and savings ------------------------------------------

def test_replacement_efficiency_is_the_class_minimum():
    # [UKSI]
    assert replacement_efficiency_pct(11.0, 4, 50.0, "IE3") == 91.4
    assert replacement_efficiency_pct(11.0, 4, 50.0, "ie4") == 93.3
    for bad in ("IE2", "IE5", ""):
        with pytest.raises(ValueError, match="ie_class"):
            replacement_efficiency_pct(11.0, 4, 50.0, bad)


def test_right_sizing_underloaded_15kw():
    # a 15 kW 4-pole 50 Hz motor at 40 % load (6 kW, band 5.4-6.6) and 86 % (83-88 %), 6000 h/yr
    r = right_size(6.0, 5.4, 6.6, 0.86, 0.83, 0.88, 4, 50.0, 6000.0)
    assert r.right_size_rated_kw == 7.5
    assert r.right_size_load_pct == pytest.approx(80.0)
    assert r.right_size_efficiency_pct == 90.4                                   # [UKSI] IE3 7.5 kW 4-pole
    expected = 6.0 * 6000.0 * (1 / 0.86 - 1 / 0.904)                              # DOE savings formula
    assert r.right_size_savings_kwh == pytest.approx(expected)
    assert r.right_size_savings_low_kwh == pytest.approx(5.4 * 6000.0 * (1 / 0.88 - 1 / 0.904))
    assert r.right_size_savings_high_kwh == pytest.approx(6.6 * 6000.0 * (1 / 0.83 - 1 / 0.904))


def test_right_sizing_picks_the_rating_for_the_high_end_of_the_load_band():
    # central 7.4 kW would fit 7.5 kW, the band's 7.8 kW would not: never undersize
    r = right_size(7.4, 7.0, 7.8, 0.88, 0.86, 0.90, 4, 50.0, 4000.0)
    assert r.right_size_rated_kw == 11.0


def test_right_sizing_ie4_and_scalar_equals_array():
    arr = right_size([6.0, 30.0], [5.4, 27.0], [6.6, 33.0], [0.86, 0.9], [0.83, 0.88], [0.88, 0.92],
                     4, 50.0, [6000.0, 8000.0], ie_class="IE4")
    for k, args in enumerate([(6.0, 5.4, 6.6, 0.86, 0.83, 0.88, 4, 50.0, 6000.0),
                              (30.0, 27.0, 33.0, 0.9, 0.88, 0.92, 4, 50.0, 8000.0)]):
        one = right_size(*args, ie_class="IE4")
        for a, b in zip(arr, one):
            assert a[k] == pytest.approx(float(b))


@settings(deadline=None, max_examples=200)
@given(st.floats(0.2, 900.0), st.floats(0.0, 0.2), st.floats(0.5, 0.97), st.floats(0.0, 0.05),
       st.floats(0.0, 8784.0))
def test_right_sizing_band_orders_and_reported_savings_bounded(p, spread, eta, eta_spread, h):
    r = right_size(p, p * (1 - spread), p * (1 + spread), eta, eta - eta_spread, min(eta + eta_spread, 0.99),
                   4, 50.0, h)
    if np.isnan(r.right_size_rated_kw):
        return
    assert r.right_size_savings_low_kwh <= r.right_size_savings_kwh + 1e-9
    assert r.right_size_savings_kwh <= r.right_size_savings_high_kwh + 1e-9
    reported, _ = savings_to_report_kwh(r.right_size_savings_kwh)
    assert 0.0 <= reported <= annual_energy_kwh(p / eta, h) * (1 + 1e-12)


# --- the speed trap ----------------------------------------------------------------

def test_typical_rated_slip_from_efficiency():
    s = typical_rated_slip_pu(0.914)                  # IE3 11 kW 4-pole 50 Hz [UKSI]
    # from memory: catalogue IE3 11 kW 4-pole motors are rated about 1460-1475 rpm
    assert 1460.0 <= 1500.0 * (1 - s) <= 1480.0
    assert typical_rated_slip_pu(0.999999) < 1e-6    # lossless limit: no slip
    assert np.isnan(typical_rated_slip_pu(1.0)) and np.isnan(typical_rated_slip_pu(0.0))
    for bad in (0.0, 1.0):
        with pytest.raises(ValueError, match="rotor_loss_share"):
            typical_rated_slip_pu(0.9, rotor_loss_share=bad)


def _speed_on_linear_line(load_pu, rated_slip):
    # operating slip of a motor on its linear torque line at a given output: s(1-s) = L s_N (1-s_N)
    k = load_pu * rated_slip * (1 - rated_slip)
    return (1 - np.sqrt(1 - 4 * k)) / 2


def test_speed_trap_5hp_pump_worked_example():
    # [CSE-5HP]: 1750 rpm motor at 95 % on the pump; a 1760 rpm motor on the same pump: 96.5 %
    ns, p_rated = 1800.0, 5 * HP_KW
    n_old = ns * (1 - _speed_on_linear_line(0.95, 50 / 1800))
    n_new = variable_torque_speed_rpm(0.95 * p_rated, n_old, ns, p_rated, 40 / 1800)
    load_new_pct = 100 * affinity_power_kw(0.95 * p_rated, n_new / n_old) / p_rated
    assert load_new_pct == pytest.approx(96.5, abs=0.1)


def test_speed_trap_limits():
    ns = 1500.0
    # the same motor again: the same operating point
    s0 = _speed_on_linear_line(0.7, 0.03)
    assert variable_torque_speed_rpm(0.7 * 11, ns * (1 - s0), ns, 11.0, 0.03) == pytest.approx(ns * (1 - s0))
    # no load: synchronous speed
    assert variable_torque_speed_rpm(0.0, 1490.0, ns, 11.0, 0.02) == ns
    # out of range rows
    assert np.isnan(variable_torque_speed_rpm(5.0, 1510.0, ns, 11.0, 0.02))   # above synchronous
    assert np.isnan(variable_torque_speed_rpm(5.0, 1470.0, ns, 11.0, 0.0))    # no rated slip
    assert np.isnan(variable_torque_speed_rpm(5.0, 1470.0, ns, 0.0, 0.02))    # no rating


def test_speed_trap_scalar_equals_array():
    p, n, s = np.array([2.0, 6.0, 9.0]), np.array([1485.0, 1470.0, 1455.0]), np.array([0.015, 0.02, 0.03])
    arr = variable_torque_speed_rpm(p, n, 1500.0, 11.0, s)
    assert arr.tolist() == pytest.approx([float(variable_torque_speed_rpm(a, b, 1500.0, 11.0, c))
                                          for a, b, c in zip(p, n, s)])


def test_downsized_low_slip_motor_savings_eaten():
    # an old 4-pole 7.5 kW running a fan at 4.5 kW and 1455 rpm, 87 %; an IE3 5.5 kW (89.6 %) that slips
    # 1.5 %: the fan turns faster and takes more than the efficiency gain saves
    n_new = variable_torque_speed_rpm(4.5, 1455.0, 1500.0, 5.5, 0.015)
    assert n_new > 1455.0
    plain = right_size_savings_kwh(4.5, 6000.0, 0.87, 0.896)
    with_speed = right_size_savings_with_speed_kwh(4.5, 1455.0, n_new, 6000.0, 0.87, 0.896)
    assert plain > 0.0 > with_speed
    assert savings_to_report_kwh(with_speed)[0] == 0.0


@settings(deadline=None, max_examples=200)
@given(st.floats(0.1, 50.0), st.floats(0.005, 0.06), st.floats(0.005, 0.06), st.floats(0.05, 1.0))
def test_speed_falls_with_new_slip_and_stays_below_synchronous(p_rated, s1, s2, load):
    ns = 1500.0
    n_old = ns * (1 - _speed_on_linear_line(load, 0.03))
    lo_slip, hi_slip = sorted((s1, s2))
    fast = variable_torque_speed_rpm(load * p_rated, n_old, ns, p_rated, lo_slip)
    slow = variable_torque_speed_rpm(load * p_rated, n_old, ns, p_rated, hi_slip)
    assert slow <= fast + 1e-9
    assert fast < ns
