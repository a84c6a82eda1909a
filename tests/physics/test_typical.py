"""Typical motor data (slipwise.physics.typical).

Sources beside each value:
* [MG1]  NEMA MG 1 Part 12: 12.39.1 (designs A, B) and 12.39.2 (design C) minimum
         breakdown torque, 12.38.3 design D locked-rotor torque; from memory.
* [60034-12] IEC 60034-12, design N minimum breakdown torque; from memory.
* [60034-1] IEC 60034-1: breakdown torque at least 1.6 T_N, tolerance -10 %; from memory.
"""

import numpy as np
import pytest

from slipwise.physics import typical as ty


@pytest.mark.parametrize("kw, poles, design, expected", [
    (0.75, 4, "B", 300.0),     # [MG1] 12.39.1: 1 hp, 1800 rpm
    (1.1, 2, "B", 250.0),      # 1.5 hp, 3600 rpm
    (1.5, 6, "A", 240.0),      # 2 hp, 1200 rpm (A and B share the table)
    (3.7, 4, "B", 225.0),      # 5 hp, 1800 rpm
    (0.37, 8, "B", 225.0),     # 0.5 hp, 900 rpm
    (75.0, 4, "B", 200.0),     # 10 hp and up: 200 %
    (5.5, 4, "B", 215.0),      # 7.5 hp
    (2.2, 6, "C", 225.0),      # [MG1] 12.39.2: 3 hp, 1200 rpm
    (37.0, 4, "C", 190.0),     # 7.5 hp and up: 190 %
    (55.0, 4, "D", 275.0),     # [MG1] design D: locked-rotor minimum is its peak
    (3.0, 4, "N", 200.0),      # [60034-12] N, 2.5-4 kW, 4 poles
    (11.0, 8, "N", 170.0),     # 10-16 kW, 8 poles
    (200.0, 4, "N", 160.0),    # 160-250 kW
    (200.0, 4, "H", 160.0),    # H taken as N
])
def test_minimum_breakdown_torque_table_values(kw, poles, design, expected):
    assert ty.minimum_breakdown_torque_pct(kw, poles, design) == pytest.approx(expected)


def test_minimum_breakdown_between_ratings_takes_the_pessimistic_row():
    # 4 hp (2.98 kW) at 1800 rpm lies between 3 hp (250 %) and 5 hp (225 %): the lower minimum
    assert ty.minimum_breakdown_torque_pct(2.98, 4, "B") == pytest.approx(225.0)
    # design C has no 2-pole column: the IEC 60034-1 floor
    assert ty.minimum_breakdown_torque_pct(30.0, 2, "C") == pytest.approx(ty.IEC_BREAKDOWN_FLOOR_PCT)
    assert np.isnan(ty.minimum_breakdown_torque_pct(30.0, 4, "Z"))


def test_every_minimum_is_at_least_the_iec_floor():
    # [60034-1]: 160 % is the least any general-purpose motor may have
    kw = np.geomspace(0.2, 1000.0, 50)
    for design in ("A", "B", "C", "D", "N", "H"):
        for poles in (2, 4, 6, 8, 12):
            m = ty.minimum_breakdown_torque_pct(kw, poles, design)
            assert np.all(m >= 160.0), (design, poles)


def test_typical_breakdown_at_least_the_minimum_and_scalar_equals_array():
    kw = np.array([0.75, 7.5, 30.0, 200.0])
    for design in ("A", "B", "C", "D", "N", "H"):
        typ = ty.typical_breakdown_torque_pct(kw, 4, design)
        assert np.all(typ >= ty.minimum_breakdown_torque_pct(kw, 4, design)), design
        assert typ[2] == pytest.approx(ty.typical_breakdown_torque_pct(30.0, 4, design))
    # small NEMA B: the catalogue 240 % is below the 300 % minimum, so 1.15 x 300
    assert ty.typical_breakdown_torque_pct(0.75, 4, "B") == pytest.approx(345.0)


def test_breakdown_torque_low():
    # [60034-1] a guaranteed value may fall short by 10 %
    assert ty.breakdown_torque_low_pct(250.0, 11.0, 4, "N") == pytest.approx(225.0)
    # none given: the design minimum
    assert ty.breakdown_torque_low_pct(np.nan, 11.0, 4, "N") == pytest.approx(200.0)


def test_saturated_no_load_current():
    # rated flux: the rated no-load current, band of zero width
    v, lo, hi = ty.saturated_no_load_current(10.0, 1.0)
    assert v == lo == hi == pytest.approx(10.0)
    # +5 % flux: well above +5 % (the iron saturates): central 1.05^3
    v, lo, hi = ty.saturated_no_load_current(10.0, 1.05)
    assert v == pytest.approx(10.0 * 1.05 ** 3)
    assert lo >= 10.0 * 1.05 ** 2 - 1e-9 and v > 11.0
    assert lo <= v <= hi
    # below rated flux: falls at least in proportion to flux
    v, lo, hi = ty.saturated_no_load_current(10.0, 0.9)
    assert hi == pytest.approx(9.0) and lo <= v <= hi
    # no flux, bad input: zero / NaN, never negative
    v, lo, hi = ty.saturated_no_load_current([10.0, 10.0], [1e-6, -1.0])
    assert np.all(lo[:1] >= 0.0) and np.isnan(v[1])
    # rises with flux; scalar = array
    phi = np.linspace(0.5, 1.3, 41)
    arr = ty.saturated_no_load_current(10.0, phi)
    for part in arr:
        assert np.all(np.diff(part) > 0) and np.all(part >= 0.0)
    assert arr.value[-1] == pytest.approx(ty.saturated_no_load_current(10.0, 1.3).value)


def test_power_factor_and_fixed_losses():
    # catalogue practice (from memory): bigger motors have a better power factor,
    # more poles a worse one; always within the documented bounds
    kw = np.geomspace(0.12, 1000.0, 30)
    pf = ty.typical_power_factor(kw, 4)
    assert np.all(np.diff(pf) >= 0) and np.all((pf >= 0.45) & (pf <= 0.92))
    assert ty.typical_power_factor(11.0, 8) < ty.typical_power_factor(11.0, 4) < ty.typical_power_factor(11.0, 2)
    assert ty.FIXED_LOSS_SHARE_LOW < ty.FIXED_LOSS_SHARE < ty.FIXED_LOSS_SHARE_HIGH
    np.testing.assert_array_equal(ty.lookup({"A": 1.0, "B": 2.0}, ["B", "A", "Q"])[:2], [2.0, 1.0])


def test_docstring_examples_run():
    import doctest

    from slipwise.physics import efficiency, load, torque_speed
    for module in (ty, torque_speed, efficiency, load):
        result = doctest.testmod(module)
        assert result.failed == 0 and result.attempted > 0, module.__name__


def test_minimum_breakdown_missing_pole_count_is_nan_not_an_index_error():
    # a row without poles (an unparsed nameplate in a batch) gives NaN; before, NaN poles became a
    # garbage column index and the whole batch failed
    out = ty.minimum_breakdown_torque_pct([7.5, 7.5], [np.nan, 4.0], ["N", "N"])
    assert np.isnan(out[0]) and out[1] == pytest.approx(200.0)     # IEC 60034-12 design N, from memory
    assert np.isnan(ty.breakdown_torque_low_pct(np.nan, 7.5, np.nan, "N"))
