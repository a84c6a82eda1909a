"""Winding resistance balance and temperature correction.

Temperature constants 234.5 (copper) and 225 (aluminium): IEEE 118 / IEC 60034-1 8.6.2.3 (from memory).
The 2 % unbalance limit is common practice (no citable motor standard found).
"""

import numpy as np
import pytest

from slipwise.physics import winding as w
from slipwise.physics.verdict import AT_LIMIT, BEYOND, CLEAR, NOT_JUDGED


def test_copper_correction_to_25c():
    # IEEE 118: R_ref = R_T (234.5 + T_ref) / (234.5 + T) for copper
    assert w.resistance_at_temperature_ohm(1.0, 20, 25) == pytest.approx(259.5 / 254.5, rel=1e-12)


def test_aluminium_correction_to_25c():
    # IEEE 118: k = 225 for aluminium
    assert w.resistance_at_temperature_ohm(1.0, 20, 25, "aluminium") == pytest.approx(250 / 245, rel=1e-12)


def test_copper_25_to_75c_is_about_19_pct():
    # copper from 25 °C to 75 °C: 309.5 / 259.5 = 1.1927 (IEEE 112 specified-temperature correction)
    assert w.resistance_at_temperature_ohm(1.0, 25, 75) == pytest.approx(1.19268, abs=1e-5)


def test_no_correction_at_reference_temperature():
    # measured at the reference temperature: unchanged
    assert w.resistance_at_temperature_ohm(2.345, 25, 25, "aluminium") == pytest.approx(2.345, rel=1e-15)


def test_unbalance_max_deviation_definition():
    # 1.00, 1.02, 0.99 Ω: mean 1.00333, largest deviation 0.01667 -> 1.661 % (max-deviation definition)
    out = w.winding_resistance(1.00, 1.02, 0.99)
    assert out["winding_resistance_unbalance_pct"] == pytest.approx(100 * (1.02 - 3.01 / 3) / (3.01 / 3))


def test_balanced_winding_is_clear():
    # balanced: zero unbalance
    out = w.winding_resistance(0.5, 0.5, 0.5, 25)
    assert out["winding_resistance_unbalance_pct"] == 0.0
    assert out["winding_resistance_ref_ohm"] == pytest.approx(0.5)
    assert out["winding_resistance_unbalance_state"] == CLEAR


@pytest.mark.parametrize("r, state", [
    ((101.9, 100.0, 98.1), CLEAR),      # 1.9 %: just below 2 %
    ((102.0, 100.0, 98.0), AT_LIMIT),   # 2.0 %: at the limit
    ((102.1, 100.0, 97.9), BEYOND),     # 2.1 %: just above
])
def test_unbalance_state_exact_meter(r, state):
    # 2 % acceptance figure (common practice), exact meter
    out = w.winding_resistance(*r, meter_accuracy_pct=0)
    assert out["winding_resistance_unbalance_limit_pct"] == 2.0
    assert out["winding_resistance_unbalance_state"] == state


@pytest.mark.parametrize("r, state", [
    ((100.99, 100.0, 99.01), CLEAR),    # 0.99 % + 2 x 0.5 = 1.99 < 2
    ((101.0, 100.0, 99.0), AT_LIMIT),   # 1.0 % + 2 x 0.5 = 2.0: band reaches the limit
    ((101.9, 100.0, 98.1), AT_LIMIT),   # 1.9 %: below the limit but within the band
])
def test_unbalance_state_with_meter_band(r, state):
    # ±0.5 % ohmmeter (common practice): the band adds 2 x 0.5 percentage points
    assert w.winding_resistance(*r)["winding_resistance_unbalance_state"] == state


def test_limit_is_overridable():
    # a site that accepts 5 %: 2 % is then clear
    out = w.winding_resistance(102.0, 100.0, 98.0, unbalance_limit_pct=5, meter_accuracy_pct=0)
    assert out["winding_resistance_unbalance_state"] == CLEAR
    assert out["winding_resistance_unbalance_limit_pct"] == 5.0


def test_reference_mean_corrected():
    # mean 1.0 Ω copper at 45 °C -> at 25 °C: 259.5 / 279.5
    out = w.winding_resistance(0.99, 1.0, 1.01, 45)
    assert out["winding_resistance_ref_ohm"] == pytest.approx(259.5 / 279.5)


def test_missing_temperature_keeps_unbalance():
    # the unbalance needs no temperature; the corrected mean does
    out = w.winding_resistance(1.0, 1.0, 1.1)
    assert np.isnan(out["winding_resistance_ref_ohm"])
    assert out["winding_resistance_unbalance_state"] == BEYOND


def test_missing_reading_not_judged():
    out = w.winding_resistance(1.0, np.nan, 1.0, 20)
    assert out["winding_resistance_unbalance_state"] == NOT_JUDGED


@pytest.mark.parametrize("kwargs, name", [
    (dict(material="brass"), "material"),
    (dict(winding_resistance_l12_ohm=0.0), "winding_resistance_l12_ohm"),
    (dict(unbalance_limit_pct=0), "unbalance_limit_pct"),
    (dict(meter_accuracy_pct=-1), "meter_accuracy_pct"),
    (dict(winding_temperature_c=-300), "winding_temperature_c"),
])
def test_invalid_parameters_raise_naming_them(kwargs, name):
    args = dict(winding_resistance_l12_ohm=1.0, winding_resistance_l23_ohm=1.0, winding_resistance_l31_ohm=1.0,
                winding_temperature_c=20)
    args.update(kwargs)
    with pytest.raises(ValueError, match=name):
        w.winding_resistance(**args)


def test_scalar_equals_array():
    r12 = [1.0, 102.0, 0.5, 2.0]
    r23 = [1.02, 100.0, 0.5, 2.1]
    r31 = [0.99, 98.0, 0.5, 1.9]
    temp = [20.0, 25.0, np.nan, 60.0]
    mat = ["copper", "aluminium", "copper", "aluminium"]
    vec = w.winding_resistance(r12, r23, r31, temp, mat)
    for i in range(4):
        one = w.winding_resistance(r12[i], r23[i], r31[i], temp[i], mat[i])
        for key, value in one.items():
            np.testing.assert_array_equal(vec[key][i], value, err_msg=key)
