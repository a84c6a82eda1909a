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
