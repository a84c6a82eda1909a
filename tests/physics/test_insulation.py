"""Insulation resistance and polarization index against IEEE 43-2013.

Values marked "from memory" are recalled from IEEE 43-2013, not read from it; the minimum IR rows,
the 5 GΩ PI rule and the PI minimums agree with a NETA World summary of IEEE 43 (Tech Quiz #68, 2004). The test-voltage table
was read from a tester maker's application note quoting IEEE 43-2000 Table 1 (same rows as 2013).
"""

import numpy as np
import pytest

from slipwise.physics import insulation as ins
from slipwise.physics.verdict import AT_LIMIT, BEYOND, CLEAR, NOT_JUDGED


@pytest.mark.parametrize("t, k", [
    (40, 1.0),     # reference temperature: no correction
    (30, 0.5),     # 10 °C below 40: IR at 40 °C is half the reading
    (20, 0.25),    # 20 °C below: a quarter
    (50, 2.0),     # 10 °C above: double
])
def test_temperature_factor_halves_per_10_c(t, k):
    # IEEE 43-2013 6.3 approximation: IR halves for every 10 °C rise (from memory)
    assert ins.temperature_correction_factor(t) == pytest.approx(k, rel=1e-12)


def test_corrected_ir_at_40c():
    # 100 MΩ read at 20 °C -> 25 MΩ at 40 °C (IEEE 43 halving rule)
    out = ins.insulation(100, 20, "random", "F", 400)
    assert out["insulation_resistance_40c_mohm"] == pytest.approx(25.0)


@pytest.mark.parametrize("kind, volts, old, minimum", [
    ("random", 400, False, 5.0),      # random-wound after 1970: 5 MΩ
    ("form", 6600, False, 100.0),     # form-wound after 1970: 100 MΩ
    ("form", 999, False, 5.0),        # form-wound just below 1 kV: 5 MΩ
    ("form", 1000, False, 100.0),     # form-wound at 1 kV: 100 MΩ
    ("form", 6600, True, 7.6),        # made before 1970: kV + 1 = 6.6 + 1
    ("random", 400, True, 1.4),       # made before 1970: 0.4 + 1
])
def test_minimum_ir_ieee43_table3(kind, volts, old, minimum):
    # IEEE 43-2013 Table 3 recommended minimum IR at 40 °C (from memory)
    assert ins.minimum_insulation_resistance_mohm(kind, volts, old) == pytest.approx(minimum)


@pytest.mark.parametrize("ir, state", [
    (99.99, BEYOND),       # just below the 100 MΩ minimum
    (100.0, AT_LIMIT),     # at the minimum
    (100.01, AT_LIMIT),    # just above, but a -5 % tester error would put it below
    (100 / 0.95, AT_LIMIT),  # band's low end exactly at the minimum
    (105.3, CLEAR),        # whole ±5 % band above the minimum
])
def test_insulation_state_boundaries_form_wound(ir, state):
    # IEEE 43-2013 Table 3: 100 MΩ for form-wound (from memory); ±5 % tester band (common practice)
    out = ins.insulation(ir, 40, "form", "F", 6600)
    assert out["insulation_minimum_mohm"] == 100.0
    assert out["insulation_state"] == state


def test_insulation_state_uses_corrected_value():
    # 50 MΩ read at 50 °C is 100 MΩ at 40 °C: at the form-wound minimum, not below it
    out = ins.insulation(50, 50, "form", "F", 6600)
    assert out["insulation_resistance_40c_mohm"] == pytest.approx(100.0)
    assert out["insulation_state"] == AT_LIMIT
    # the same reading at 40 °C is beyond
    assert ins.insulation(50, 40, "form", "F", 6600)["insulation_state"] == BEYOND


def test_tester_accuracy_as_input():
    # an exact tester: just above the 5 MΩ minimum is clear, exactly at it stays at the limit
    assert ins.insulation(5.01, 40, "random", "B", 400, tester_accuracy_pct=0)["insulation_state"] == CLEAR
    assert ins.insulation(5.0, 40, "random", "B", 400, tester_accuracy_pct=0)["insulation_state"] == AT_LIMIT
    # a ±20 % tester keeps 6 MΩ at the limit (6 * 0.8 = 4.8 < 5)
    assert ins.insulation(6.0, 40, "random", "B", 400, tester_accuracy_pct=20)["insulation_state"] == AT_LIMIT


@pytest.mark.parametrize("ir10, cls, state", [
    (199.9, "F", BEYOND),       # PI 1.999 just below 2.0
    (200.0, "F", AT_LIMIT),     # PI 2.0 at the minimum
    (221.0, "F", AT_LIMIT),     # PI 2.21: worst-case band 2.21 * 0.95 / 1.05 = 1.9995 reaches 2.0
    (222.0, "F", CLEAR),        # PI 2.22: band low end 2.0086 above 2.0
    (200.0, "B", AT_LIMIT),     # class B: same 2.0 minimum
    (200.0, "H", AT_LIMIT),     # class H: same 2.0 minimum
    (149.9, "A", BEYOND),       # class A: minimum 1.5
    (150.0, "A", AT_LIMIT),
    (170.0, "A", CLEAR),        # 1.7 * 0.95 / 1.05 = 1.538 > 1.5
])
def test_polarization_index_boundaries(ir10, cls, state):
    # IEEE 43 minimum PI: class A 1.5, classes B, F, H 2.0 (from memory; a tester manual quoting
    # IEEE 43-2000 lists the same)
    out = ins.insulation(100, 40, "random", cls, 400, ir_10min_mohm=ir10)
    assert out["polarization_index"] == pytest.approx(ir10 / 100)
    assert out["polarization_index_state"] == state


def test_pi_not_judged_above_5000_mohm():
    # IEEE 43: above 5,000 MΩ the PI may not indicate the condition (from memory)
    assert ins.insulation(5000, 40, "random", "F", 400, ir_10min_mohm=5500)["polarization_index_state"] == BEYOND
    assert ins.insulation(5000.1, 40, "random", "F", 400, ir_10min_mohm=5500)["polarization_index_state"] == NOT_JUDGED


def test_pi_missing_10_minute_reading_is_not_judged():
    out = ins.insulation(100, 40, "random", "F", 400)
    assert np.isnan(out["polarization_index"])
    assert out["polarization_index_state"] == NOT_JUDGED


@pytest.mark.parametrize("volts, low, high", [
    (400, 500, 500), (999, 500, 500),             # below 1000 V
    (1000, 500, 1000), (2500, 500, 1000),          # 1000-2500 V
    (2501, 1000, 2500), (5000, 1000, 2500),        # 2501-5000 V
    (5001, 2500, 5000), (12000, 2500, 5000),       # 5001-12 000 V
    (12001, 5000, 10000), (13800, 5000, 10000),    # above 12 000 V
])
def test_recommended_test_voltage_table1(volts, low, high):
    # IEEE 43 Table 1 (read from a quotation of the 2000 edition; 2013 unchanged from memory)
    lo, hi = ins.recommended_test_voltage_v(volts)
    assert (lo, hi) == (low, high)


def test_test_voltage_state():
    assert ins.judge_test_voltage(2500, 6600) == CLEAR       # 5001-12 000 V winding: 2500-5000 V
    assert ins.judge_test_voltage(5000, 6600) == CLEAR       # top of the range
    assert ins.judge_test_voltage(1000, 6600) == AT_LIMIT    # below the recommended range
    assert ins.judge_test_voltage(1000, 400) == AT_LIMIT     # above 500 V for a 400 V winding
    assert ins.judge_test_voltage(np.nan, 400) == NOT_JUDGED


def test_missing_inputs_are_not_judged():
    assert ins.insulation(np.nan, 40, "form", "F", 6600)["insulation_state"] == NOT_JUDGED
    assert ins.insulation(100, np.nan, "form", "F", 6600)["insulation_state"] == NOT_JUDGED
    assert ins.insulation(100, 40, "", "F", 6600)["insulation_state"] == NOT_JUDGED
    assert ins.insulation(100, 40, "random", "", 400, ir_10min_mohm=300)["polarization_index_state"] == NOT_JUDGED


@pytest.mark.parametrize("kwargs, name", [
    (dict(winding_type="wound"), "winding_type"),
    (dict(insulation_class="C"), "insulation_class"),
    (dict(ir_1min_mohm=-1), "ir_1min_mohm"),
    (dict(rated_voltage_v=0), "rated_voltage_v"),
    (dict(tester_accuracy_pct=100), "tester_accuracy_pct"),
])
def test_invalid_parameters_raise_naming_them(kwargs, name):
    args = dict(ir_1min_mohm=100, winding_temperature_c=40, winding_type="form", insulation_class="F",
                rated_voltage_v=6600)
    args.update(kwargs)
    with pytest.raises(ValueError, match=name):
        ins.insulation(**args)


def test_scalar_equals_array():
    ir = [3.0, 99.99, 100.0, 120.0, 6000.0]
    temp = [20.0, 40.0, 40.0, 35.0, 40.0]
    kind = ["random", "form", "form", "form", "random"]
    cls = ["A", "F", "B", "H", "F"]
    volts = [400.0, 6600.0, 6600.0, 11000.0, 690.0]
    ir10 = [5.0, 250.0, 190.0, np.nan, 9000.0]
    vec = ins.insulation(ir, temp, kind, cls, volts, ir_10min_mohm=ir10)
    for i in range(len(ir)):
        one = ins.insulation(ir[i], temp[i], kind[i], cls[i], volts[i], ir_10min_mohm=ir10[i])
        for key, value in one.items():
            np.testing.assert_array_equal(vec[key][i], value, err_msg=key)
