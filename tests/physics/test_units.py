"""Unit constants from their definitions (slipwise.physics.units)."""

import math

import pytest

from slipwise.physics import units as u


def test_horsepower_from_its_definition():
    # mechanical horsepower: 550 ft lbf/s; ft = 0.3048 m and lb = 0.45359237 kg exactly
    # (1959 international yard and pound agreement), g_n = 9.80665 m/s^2 exactly (CGPM 1901)
    assert u.FOOT_M == 0.3048
    assert u.POUND_FORCE_N == pytest.approx(4.4482216152605, rel=1e-13)
    assert u.HORSEPOWER_W == pytest.approx(745.69987158227, rel=1e-12)
    # not the metric horsepower (735.49875 W) nor a kilowatt
    assert abs(u.HORSEPOWER_W - 735.49875) > 10 and abs(u.HORSEPOWER_W - 1000.0) > 100


def test_kilowatt_rpm_minute_sqrt3():
    assert u.KILOWATT_W == 1000.0
    # 60 rpm = 1 rev/s = 2 pi rad/s
    assert 60.0 * u.RPM_TO_RAD_S == pytest.approx(2.0 * math.pi)
    assert u.MINUTE_S == 60.0
    # line-to-line over line-to-neutral of a balanced three-phase set: |1 - e^{-j 2pi/3}|
    assert u.SQRT3 == pytest.approx(abs(1 - complex(math.cos(2 * math.pi / 3), -math.sin(2 * math.pi / 3))))
