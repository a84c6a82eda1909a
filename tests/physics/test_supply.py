import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from slipwise.physics import supply


def test_nema_unbalance_worked_example():
    # NEMA MG 1 14.35 worked example (from memory): 460, 467, 450 V -> average 459 V,
    # maximum deviation 9 V, unbalance 100 * 9 / 459 = 1.96 %
    assert supply.max_deviation_unbalance_pct(460, 467, 450) == pytest.approx(1.96, abs=0.005)


def test_doe_input_power_example_unbalance():
    # US DOE fact sheet input-power example readings: 467, 473, 469 V (mean 469.7 V)
    assert supply.max_deviation_unbalance_pct(467, 473, 469) == pytest.approx(100 * 3.333 / 469.667, rel=1e-3)


def test_balanced_supply_is_zero():
    # balanced: no unbalance by either definition
    assert supply.max_deviation_unbalance_pct(400, 400, 400) == 0.0
    assert supply.voltage_unbalance_factor_pct(400, 400, 400) == pytest.approx(0.0, abs=1e-6)


def _vuf_symmetrical_components(a, b, c):
    """|V2|/|V1| from a triangle of line-to-line phasors that sum to zero (numpy reference)."""
    # place U12 on the real axis; U23 and U31 close the triangle (law of cosines)
    ang_b = np.arccos((a ** 2 + b ** 2 - c ** 2) / (2 * a * b))
    u12 = a + 0j
    u23 = b * np.exp(-1j * (np.pi - ang_b))
    u31 = -(u12 + u23)
    assert abs(abs(u31) - c) < 1e-9 * c
    alpha = np.exp(2j * np.pi / 3)
    v1 = (u12 + alpha * u23 + alpha ** 2 * u31) / 3
    v2 = (u12 + alpha ** 2 * u23 + alpha * u31) / 3
    return 100 * min(abs(v1), abs(v2)) / max(abs(v1), abs(v2))


@pytest.mark.parametrize("v", [(460, 467, 450), (400, 392, 410), (415, 415, 380), (480, 470, 455)])
def test_iec_vuf_matches_symmetrical_components(v):
    # IEC 61000-4-30 magnitude formula against symmetrical components computed with numpy
    assert supply.voltage_unbalance_factor_pct(*v) == pytest.approx(_vuf_symmetrical_components(*v), rel=1e-9)


def test_vuf_impossible_triangle_is_nan():
    # 100 + 100 < 300: these three magnitudes cannot be line-to-line voltages
    assert np.isnan(supply.voltage_unbalance_factor_pct(100, 100, 300))


def test_nema_derating_curve():
    # NEMA MG 1 Figure 14-1 read at whole percents (a graph: tolerance 0.01, from memory)
    for u, factor in [(0, 1.0), (1, 1.0), (2, 0.95), (3, 0.88), (4, 0.82), (5, 0.75)]:
        assert supply.nema_derating_factor(u) == pytest.approx(factor, abs=0.01)
    assert supply.nema_derating_factor(0.5) == 1.0       # no derating up to 1 %


@given(st.floats(0, 60))
def test_derating_in_unit_interval(u):
    d = supply.nema_derating_factor(u)
    assert 0 < d <= 1


@given(st.floats(50, 20000), st.floats(0.7, 1.3), st.floats(0.7, 1.3))
@settings(max_examples=200)
def test_unbalance_non_negative(v, kb, kc):
    assert supply.max_deviation_unbalance_pct(v, v * kb, v * kc) >= 0
    vuf = supply.voltage_unbalance_factor_pct(v, v * kb, v * kc)
    assert np.isnan(vuf) or vuf >= 0


@pytest.mark.parametrize("dv, df, zone", [
    (0, 0, "A"), (5, 0, "A"), (-5, 0, "A"), (3, -2, "A"), (-3, 2, "A"),
    (4, -2, "B"),     # high V at low f: outside the cut corner of zone A
    (-4, 2, "B"),
    (10, 0, "B"), (-10, 0, "B"), (0, -5, "B"), (0, 3, "B"),
    (11, 0, "outside"), (0, 4, "outside"), (0, -6, "outside"), (8, -5, "outside"),
])
def test_iec_zones(dv, df, zone):
    # IEC 60034-1 voltage/frequency zones for motors (figure; from memory of its corners)
    assert supply.iec_zone(dv, df) == zone


def test_nema_tolerance():
    # NEMA MG 1 12.44: +-10 % V, +-5 % f, combined 10 %
    assert supply.within_nema_tolerance(10, 0)
    assert supply.within_nema_tolerance(0, -5)
    assert not supply.within_nema_tolerance(7, 4)    # 11 % combined
    assert not supply.within_nema_tolerance(-11, 0)


def test_array_equals_scalar():
    a = np.array([460.0, 400.0, 480.0])
    b = np.array([467.0, 392.0, 470.0])
    c = np.array([450.0, 410.0, 455.0])
    for fn in (supply.max_deviation_unbalance_pct, supply.voltage_unbalance_factor_pct):
        arr = fn(a, b, c)
        assert arr.tolist() == [float(fn(x, y, z)) for x, y, z in zip(a, b, c)]


def test_drive_voltage_constant_v_per_f_then_rated():
    # V/f drive: 400 V at 50 Hz -> 200 V at 25 Hz; field weakening above rated frequency keeps 400 V
    assert supply.drive_voltage_v(400.0, np.array([25.0, 50.0, 60.0]), 50.0).tolist() == [200.0, 400.0, 400.0]


def test_flux_ratio():
    # (V/f)/(Vr/fr): 360 V at 50 Hz on a 400 V 50 Hz motor -> 0.9; 200 V at 25 Hz -> rated flux
    assert supply.flux_ratio(360.0, 50.0, 400.0, 50.0) == pytest.approx(0.9)
    assert supply.flux_ratio(200.0, 25.0, 400.0, 50.0) == pytest.approx(1.0)


def test_zone_labels_match_the_codes():
    assert supply.ZONE_LABELS[supply.DRIVE_ZONE_CODE] == "drive"
    assert supply.iec_zone(0.0, 0.0) == "A"
