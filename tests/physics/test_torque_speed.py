"""Torque-speed helpers the engine's per-row run calls (moved out of the engine)."""

import numpy as np
import pytest

from slipwise.physics import torque_speed as ts


def _kloss(s, sk, tk):
    # Kloss formula T = 2 Tk / (s/sk + sk/s) (standard electric-machinery texts, from memory)
    return 2.0 * tk / (s / sk + sk / s)


def test_kloss_slope_zero_at_breakdown():
    # at the breakdown slip the Kloss curve has its maximum: dT/dn = 0
    assert ts.kloss_slope_nm_per_rpm(0.2, 0.2, 250.0, 1500.0) == pytest.approx(0.0, abs=1e-12)


def test_kloss_slope_matches_the_derivative_of_the_kloss_formula():
    # numerical derivative of the Kloss formula, dn = -ns ds
    s, sk, tk, ns = 0.03, 0.15, 300.0, 1500.0
    h = 1e-7
    numeric = -(_kloss(s + h, sk, tk) - _kloss(s - h, sk, tk)) / (2 * h) / ns
    assert ts.kloss_slope_nm_per_rpm(s, sk, tk, ns) == pytest.approx(numeric, rel=1e-6)


def test_kloss_slope_sign_on_each_side():
    # stable side (s < sk): torque falls as speed rises; past breakdown (s > sk) it rises
    assert ts.kloss_slope_nm_per_rpm(0.03, 0.15, 300.0, 1500.0) < 0
    assert ts.kloss_slope_nm_per_rpm(0.5, 0.15, 300.0, 1500.0) > 0


def test_torque_from_power_and_speed():
    # T = 9549 P[kW] / n[rpm] (common practice): 11 kW at 1460 rpm -> 71.95 N m
    assert ts.torque_nm(11000.0, 1460.0) == pytest.approx(9549.3 * 11 / 1460, rel=1e-4)
    # standstill: finite (the floor), zero power gives zero torque
    assert ts.torque_nm(0.0, 0.0) == 0.0


def test_torque_from_load():
    # constant torque load at half speed: half the output, rated torque (T = P / omega)
    assert ts.torque_from_load(0.5, 0.5) == 1.0
    assert ts.torque_from_load(np.array([80.0, 100.0]), 1.0).tolist() == [80.0, 100.0]


def test_shaft_breakdown_torque():
    # 250 N m electromagnetic less 5 N m friction, over 100 N m rated: 245 %
    assert ts.shaft_breakdown_torque_pct(250.0, 5.0, 100.0) == pytest.approx(245.0)


def test_starting_margin_scales_with_voltage_squared():
    # locked-rotor torque ~ V^2 (IEC 60034-12 gives it at rated voltage): 200 % at 90 % voltage
    # is 162 %; a constant-torque load at 80 % torque with breakaway 1.0 needs 80 % -> 2.025
    assert ts.starting_margin(200.0, 360.0, 400.0, 1.0, 80.0) == pytest.approx(162.0 / 80.0)
    # the running torque is floored at 10 % (an unloaded reading still has to start its machine)
    assert ts.starting_margin(200.0, 400.0, 400.0, 1.5, 2.0) == pytest.approx(200.0 / 15.0)


def test_variable_torque_law():
    # affinity laws (fans and centrifugal pumps): T ~ n^2, so half speed needs a quarter torque
    assert ts.variable_torque(750.0, 1500.0, 100.0) == pytest.approx(25.0)
    # the same law as load_torque's variable_torque branch
    assert ts.load_torque(750.0, "variable_torque", 1500.0, 100.0, 1500.0) == pytest.approx(25.0)


def test_load_torque_slope_per_law():
    # d/dn of T0 (n/n0)^2 at n0 is 2 T0/n0; of T0 n0/n it is -T0/n0; constant torque: 0
    laws = np.array(["variable_torque", "constant_power", "constant_torque", "high_breakaway"], dtype=object)
    got = ts.load_torque_slope(laws, 1500.0, 30.0)
    assert got.tolist() == pytest.approx([0.04, -0.02, 0.0, 0.0])
