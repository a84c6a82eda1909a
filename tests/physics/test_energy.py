"""Input power, annual energy and cost, and replacement savings.

Sources named beside each check:

* [DOE-LOAD] US DOE Motor Challenge, "Determining Electric Motor Load and
  Efficiency" (DOE/GO-10097-517), input-power example: 467/473/469 V,
  36/38/37 A, PF 0.75 -> 22.6 kW (from memory, as in tests/physics/test_load.py).
* [EEM-25HP] "Energy-efficient motors" fundamentals page, aeusp.com
  (/fundamentals/demh.asp): a 25 hp motor at full load, 88.5 % against 91 %,
  saves 0.578 kW; at $0.06/kWh and 4,000 h/yr that is $138.95 a year. Read.
  Its formula is the DOE / Motor Challenge one,
  ``hp x 0.746 x L x (100/E_old - 100/E_new)``.
"""

from __future__ import annotations

import doctest

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from slipwise.physics import energy
from slipwise.physics.energy import (
    HOURS_PER_YEAR_MAX_H,
    affinity_power_kw,
    annual_energy,
    annual_energy_cost,
    annual_energy_kwh,
    input_power,
    input_power_from_output_kw,
    measured_input_power_kw,
    right_size_savings_kwh,
    right_size_savings_with_speed_kwh,
    savings_to_report_kwh,
)

HP_KW_AS_PUBLISHED = 0.746   # [EEM-25HP] and the DOE sheets round 1 hp to 0.746 kW


def test_doctests():
    assert doctest.testmod(energy).failed == 0


# --- input power ----------------------------------------------------------------

def test_measured_input_from_v_i_pf_doe_example():
    # [DOE-LOAD]: mean of the three readings, sqrt(3) V I PF / 1000
    v = np.mean([467.0, 473.0, 469.0])
    i = np.mean([36.0, 38.0, 37.0])
    assert measured_input_power_kw(np.nan, v, i, 0.75) == pytest.approx(22.6, abs=0.05)


def test_measured_input_power_reading_wins_over_v_i_pf():
    # a power-meter reading is used as read, V I PF ignored
    assert measured_input_power_kw(15.0, 400.0, 30.0, 0.8) == 15.0


def test_input_from_output_arithmetic_and_limits():
    assert input_power_from_output_kw(18.65, 0.91) == pytest.approx(18.65 / 0.91)
    assert input_power_from_output_kw(0.0, 0.9) == 0.0           # no load: no output, no input by this formula
    assert input_power_from_output_kw(5.0, 1.0) == 5.0            # lossless limit
    assert np.isnan(input_power_from_output_kw(5.0, 0.0))         # no efficiency: undefined
    assert np.isnan(input_power_from_output_kw(5.0, 1.2))         # efficiency above 1: impossible
    assert np.isnan(input_power_from_output_kw(-1.0, 0.9))        # negative output


def test_input_power_band_takes_pessimistic_pairs():
    r = input_power(10.0, 9.0, 11.0, 0.90, 0.88, 0.92)
    assert r.input_power_kw == pytest.approx(10.0 / 0.90)
    assert r.input_power_low_kw == pytest.approx(9.0 / 0.92)     # low output, high efficiency
    assert r.input_power_high_kw == pytest.approx(11.0 / 0.88)   # high output, low efficiency


def test_input_power_uses_measurement_where_given():
    r = input_power([10.0, 10.0], 9.0, 11.0, 0.9, 0.88, 0.92,
                    measured_input_kw=[12.0, np.nan], measured_input_accuracy_pct=2.0)
    assert r.input_power_kw.tolist() == pytest.approx([12.0, 10.0 / 0.9])
    assert r.input_power_low_kw.tolist() == pytest.approx([12.0 * 0.98, 9.0 / 0.92])
    assert r.input_power_high_kw.tolist() == pytest.approx([12.0 * 1.02, 11.0 / 0.88])


def test_input_power_scalar_equals_array():
    args = ([5.0, 12.0], [4.5, 11.0], [5.5, 13.0], [0.86, 0.91], [0.84, 0.89], [0.88, 0.93])
    arr = input_power(*args)
    for k in range(2):
        one = input_power(*(a[k] for a in args))
        for a, b in zip(arr, one):
            assert a[k] == pytest.approx(float(b))


# --- annual energy and cost ---------------------------------------------------------

def test_annual_energy_and_cost_arithmetic():
    assert annual_energy_kwh(10.0, 4000.0) == 40000.0
    assert annual_energy_cost(40000.0, 0.12) == pytest.approx(4800.0)
    assert annual_energy_kwh(10.0, 0.0) == 0.0                             # never run
    assert annual_energy_kwh(10.0, HOURS_PER_YEAR_MAX_H) == 87840.0        # every hour of a leap year
    assert np.isnan(annual_energy_kwh(10.0, HOURS_PER_YEAR_MAX_H + 1.0))   # more hours than a year has
    assert np.isnan(annual_energy_kwh(10.0, -1.0))
    assert np.isnan(annual_energy_cost(1.0, -0.1))


def test_annual_energy_band_carried_through():
    power = input_power(10.0, 9.0, 11.0, 0.9, 0.88, 0.92)
    r = annual_energy(power, 6000.0, 0.10)
    assert r.annual_energy_kwh == pytest.approx(6000.0 * 10.0 / 0.9)
    assert r.annual_energy_low_kwh == pytest.approx(6000.0 * 9.0 / 0.92)
    assert r.annual_energy_high_kwh == pytest.approx(6000.0 * 11.0 / 0.88)
    assert r.annual_energy_cost == pytest.approx(600.0 * 10.0 / 0.9)
    assert r.annual_energy_cost_low <= r.annual_energy_cost <= r.annual_energy_cost_high


def test_annual_energy_scalar_equals_array():
    p, h = np.array([1.0, 7.5, 90.0]), np.array([100.0, 4000.0, 8760.0])
    arr = annual_energy_kwh(p, h)
    assert arr.tolist() == [float(annual_energy_kwh(a, b)) for a, b in zip(p, h)]


# --- savings against the published worked example -----------------------------------------

def test_savings_25hp_worked_example():
    # [EEM-25HP]: 25 hp fully loaded, 88.5 % -> 91 %: 0.578 kW, $138.95 a year at $0.06, 4,000 h
    shaft_kw = 25.0 * HP_KW_AS_PUBLISHED * 1.0
    saved_kwh = right_size_savings_kwh(shaft_kw, 4000.0, 0.885, 0.91)
    # the page prints 0.578 kW, cut short: its $138.95 needs 0.5789 kW (138.95 / 0.06 / 4000)
    assert saved_kwh / 4000.0 == pytest.approx(0.5789, abs=0.00005)
    assert annual_energy_cost(saved_kwh, 0.06) == pytest.approx(138.95, abs=0.005)


def test_savings_limits():
    assert right_size_savings_kwh(10.0, 4000.0, 0.9, 0.9) == 0.0        # same efficiency: nothing saved
    assert right_size_savings_kwh(10.0, 0.0, 0.8, 0.9) == 0.0           # never run
    assert right_size_savings_kwh(10.0, 4000.0, 0.92, 0.90) < 0.0       # a worse motor costs energy
    assert np.isnan(right_size_savings_kwh(10.0, 4000.0, 0.0, 0.9))


def test_speed_savings_reduce_to_plain_savings_without_speed_change():
    # no speed change: the speed-aware formula is the plain DOE one
    plain = right_size_savings_kwh(7.0, 5000.0, 0.86, 0.91)
    assert right_size_savings_with_speed_kwh(7.0, 1460.0, 1460.0, 5000.0, 0.86, 0.91) == pytest.approx(plain)


def test_speed_rise_can_eat_the_savings():
    # +2 % speed = +6.1 % shaft power on a fan: more than a 2-point efficiency gain saves
    signed = right_size_savings_with_speed_kwh(10.0, 1450.0, 1479.0, 4000.0, 0.89, 0.91)
    assert signed < 0.0
    reported, eaten = savings_to_report_kwh(signed)
    assert reported == 0.0 and bool(eaten)


def test_savings_to_report_keeps_nan_unflagged():
    reported, eaten = savings_to_report_kwh([np.nan, 5.0, -1.0])
    assert np.isnan(reported[0]) and reported[1:].tolist() == [5.0, 0.0]
    assert eaten.tolist() == [False, False, True]


def test_affinity_cube_law():
    # affinity laws: power with the cube of speed (common practice, pump and fan handbooks)
    assert affinity_power_kw(10.0, 1.1) == pytest.approx(13.31)
    assert affinity_power_kw(10.0, 1.0) == 10.0       # same speed
    assert affinity_power_kw(10.0, 0.0) == 0.0        # stopped
    assert np.isnan(affinity_power_kw(10.0, -0.5))
    assert affinity_power_kw(10.0, [0.9, 1.1]).tolist() == pytest.approx(
        [float(affinity_power_kw(10.0, 0.9)), float(affinity_power_kw(10.0, 1.1))])


# --- properties ------------------------------------------------------------------------

power_kw = st.floats(0.0, 2000.0)
hours_h = st.floats(0.0, HOURS_PER_YEAR_MAX_H)
eff_pu = st.floats(0.30, 0.99)


@settings(deadline=None, max_examples=200)
@given(power_kw, hours_h, eff_pu, eff_pu)
def test_reported_savings_never_negative_never_above_annual_use(p, h, eta_old, eta_new):
    reported, _ = savings_to_report_kwh(right_size_savings_kwh(p, h, eta_old, eta_new))
    whole_year = annual_energy_kwh(input_power_from_output_kw(p, eta_old), h)
    assert reported >= 0.0
    assert reported <= whole_year * (1 + 1e-12)


@settings(deadline=None, max_examples=200)
@given(power_kw, hours_h, eff_pu, eff_pu, st.floats(0.9, 1.1))
def test_speed_savings_never_above_annual_use(p, h, eta_old, eta_new, ratio):
    signed = right_size_savings_with_speed_kwh(p, 1450.0, 1450.0 * ratio, h, eta_old, eta_new)
    reported, _ = savings_to_report_kwh(signed)
    assert 0.0 <= reported <= annual_energy_kwh(p / eta_old, h) * (1 + 1e-12)


@settings(deadline=None, max_examples=200)
@given(power_kw, st.floats(0.0, HOURS_PER_YEAR_MAX_H / 4), st.integers(1, 4))
def test_energy_linear_in_hours(p, h, k):
    assert annual_energy_kwh(p, k * h) == pytest.approx(k * annual_energy_kwh(p, h), rel=1e-12, abs=1e-9)


@settings(deadline=None, max_examples=200)
@given(st.floats(0.01, 2000.0), st.floats(0.5, 1.5), st.floats(0.5, 1.5))
def test_cube_law_monotonic(p, r1, r2):
    lo, hi = sorted((r1, r2))
    assert affinity_power_kw(p, lo) <= affinity_power_kw(p, hi)


@settings(deadline=None, max_examples=200)
@given(st.floats(0.0, 2000.0), st.floats(0.0, 0.3), eff_pu, st.floats(0.0, 0.05))
def test_input_power_band_contains_central(p, spread, eta, eta_spread):
    r = input_power(p, p * (1 - spread), p * (1 + spread), eta, eta - eta_spread, min(eta + eta_spread, 1.0))
    assert r.input_power_low_kw <= r.input_power_kw * (1 + 1e-12) + 1e-12
    assert r.input_power_kw <= r.input_power_high_kw * (1 + 1e-12) + 1e-12
