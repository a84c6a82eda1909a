"""Torque-speed functions (slipwise.physics.torque_speed).

Sources: Kloss formula and the stability criterion dT_motor/dn < dT_load/dn as in any
machinery text (e.g. Chapman, Electric Machinery Fundamentals; Fitzgerald & Kingsley).
"""

import numpy as np
import pytest

from slipwise.physics import torque_speed as ts


def test_kloss_limits():
    # breakdown point: s = s_k gives T_k
    assert ts.kloss_torque(0.2, 0.2, 250.0) == pytest.approx(250.0)
    # synchronous speed: no torque
    assert ts.kloss_torque(0.0, 0.2, 250.0) == 0.0
    # small slip: linear, T ~ 2 T_k s / s_k
    assert ts.kloss_torque(1e-4, 0.2, 250.0) == pytest.approx(2 * 250.0 * 1e-4 / 0.2, rel=1e-6)
    # symmetric in s/s_k and s_k/s
    assert ts.kloss_torque(0.1, 0.2, 1.0) == pytest.approx(ts.kloss_torque(0.4, 0.2, 1.0))
    # scalar = array
    np.testing.assert_allclose(ts.kloss_torque([0.05, 0.2], 0.2, 250.0),
                               [ts.kloss_torque(0.05, 0.2, 250.0), 250.0])


def test_load_torque_laws_pass_through_the_operating_point():
    for law in ts.LOAD_LAWS:
        assert ts.load_torque(1450.0, law, 1450.0, 70.0, 1500.0, 120.0) == pytest.approx(70.0)
    # fan law: half speed, a quarter torque
    assert ts.load_torque(725.0, "variable_torque", 1450.0, 70.0, 1500.0) == pytest.approx(17.5)
    # constant power capped at 3x near standstill
    assert ts.load_torque(0.0, "constant_power", 1450.0, 70.0, 1500.0) == pytest.approx(210.0)
    # high breakaway at standstill
    assert ts.load_torque(0.0, "high_breakaway", 1450.0, 70.0, 1500.0, 120.0) == pytest.approx(120.0)


def test_load_torque_slope():
    assert ts.load_torque_slope("variable_torque", 1450.0, 70.0) == pytest.approx(2 * 70.0 / 1450.0)
    assert ts.load_torque_slope("constant_torque", 1450.0, 70.0) == 0.0
    assert ts.load_torque_slope("constant_power", 1450.0, 70.0) == pytest.approx(-70.0 / 1450.0)


def test_stability_criterion():
    # normal operating side: motor torque falls as speed rises (negative slope), a
    # constant-torque load: stable
    assert bool(ts.is_stable(-5.0, 0.0))
    # past breakdown: motor torque rises with speed, constant torque load: unstable
    assert not bool(ts.is_stable(+5.0, 0.0))
    # a fan whose torque rises faster than the motor's: stable even past breakdown
    assert bool(ts.is_stable(0.01, 0.1))
    # equal slopes: neutral, not stable
    assert not bool(ts.is_stable(0.0, 0.0))
    np.testing.assert_array_equal(ts.is_stable([-5.0, 5.0], [0.0, 0.0]), [True, False])


def test_breakdown_margin():
    assert ts.breakdown_margin(250.0, 100.0) == pytest.approx(2.5)     # rated point
    assert np.isnan(ts.breakdown_margin(250.0, 0.0))                   # no load


def test_breakdown_margin_band():
    # central: breakdown now / torque; low: scaled to the lowest credible breakdown torque
    # (IEC 60034-12 N minimum 160 % against a fitted 240 %) and the highest torque
    central, low = ts.breakdown_margin_band(240.0 * 0.95 ** 2, 240.0, 160.0, 100.0, 110.0)
    assert central == pytest.approx(240.0 * 0.9025 / 100.0)
    assert low == pytest.approx(160.0 * 0.9025 / 110.0)
    assert low < central
    # low end never above the central one, even if "low" breakdown is given above typical
    c2, l2 = ts.breakdown_margin_band(240.0, 240.0, 300.0, 100.0, 100.0)
    assert l2 <= c2
    # scalar = array
    arr = ts.breakdown_margin_band([240.0, 200.0], 240.0, 160.0, [100.0, 50.0], [110.0, 60.0])
    one = ts.breakdown_margin_band(200.0, 240.0, 160.0, 50.0, 60.0)
    assert arr[0][1] == pytest.approx(one[0]) and arr[1][1] == pytest.approx(one[1])


def test_kloss_slope_zero_at_breakdown():
    # at the breakdown slip the Kloss curve has its maximum: dT/dn = 0
    assert ts.kloss_slope_nm_per_rpm(0.2, 0.2, 250.0, 1500.0) == pytest.approx(0.0, abs=1e-12)


def test_kloss_slope_matches_the_derivative_of_the_kloss_formula():
    # numerical derivative of the Kloss formula, dn = -ns ds
    s, sk, tk, ns = 0.03, 0.15, 300.0, 1500.0
    h = 1e-7
    numeric = -(ts.kloss_torque(s + h, sk, tk) - ts.kloss_torque(s - h, sk, tk)) / (2 * h) / ns
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
