"""Vibration zones: ISO 10816-3 (groups 1 and 2) and ISO 10816-1 class I.

All zone boundaries are from memory (ISO 10816-3 Annex A; ISO 10816-1 Annex B class I 0.71/1.8/4.5,
which a vibration-chart page reproduces the same). The ±10 % meter band is common practice.
"""

import numpy as np
import pytest

from slipwise.physics import vibration as vib
from slipwise.physics.verdict import AT_LIMIT, BEYOND, CLEAR, NOT_JUDGED


@pytest.mark.parametrize("kw, group", [
    (15.0, "class I"),      # 15 kW: ISO 10816-3 covers machines *above* 15 kW
    (15.1, "group 2"),
    (300.0, "group 2"),     # group 2 up to 300 kW
    (300.1, "group 1"),
    (50000.0, "group 1"),   # group 1 up to 50 MW
    (50001.0, ""),          # beyond ISO 10816-3
])
def test_machine_group_by_power(kw, group):
    assert vib.machine_group(kw) == group


CASES = [  # (rated kW, foundation, A/B, B/C, C/D) from memory
    (75.0, "rigid", 1.4, 2.8, 4.5),        # ISO 10816-3 group 2 rigid
    (75.0, "flexible", 2.3, 4.5, 7.1),     # group 2 flexible
    (500.0, "rigid", 2.3, 4.5, 7.1),       # group 1 rigid
    (500.0, "flexible", 3.5, 7.1, 11.0),   # group 1 flexible
    (7.5, "rigid", 0.71, 1.8, 4.5),        # ISO 10816-1 class I
    (7.5, "flexible", 0.71, 1.8, 4.5),
]


@pytest.mark.parametrize("kw, base, ab, bc, cd", CASES)
def test_zone_boundaries(kw, base, ab, bc, cd):
    # a reading on a boundary belongs to the lower zone; just above it to the next
    eps = 0.01
    for v, zone in [(ab - eps, "A"), (ab, "A"), (ab + eps, "B"), (bc, "B"), (bc + eps, "C"),
                    (cd, "C"), (cd + eps, "D"), (0.0, "A"), (40.0, "D")]:
        assert vib.vibration(v, kw, base)["vibration_zone"] == zone, (v, zone)
    out = vib.vibration(ab, kw, base)
    assert (out["vibration_zone_ab_mm_s"], out["vibration_zone_bc_mm_s"], out["vibration_zone_cd_mm_s"]) == (ab, bc, cd)


@pytest.mark.parametrize("v, state", [
    (2.5, CLEAR),       # zone B; 2.5 x 1.1 = 2.75 below 2.8
    (2.55, AT_LIMIT),   # zone B; 2.55 x 1.1 = 2.805 reaches the B/C boundary
    (2.8, AT_LIMIT),    # on the B/C boundary (zone B)
    (2.81, BEYOND),     # zone C
    (6.0, BEYOND),      # zone D
])
def test_state_against_bc_boundary_group2_rigid(v, state):
    # ISO 10816-3 group 2 rigid B/C = 2.8 mm/s (from memory); ±10 % meter (common practice)
    assert vib.vibration(v, 75, "rigid")["vibration_state"] == state


def test_meter_accuracy_as_input():
    # exact meter: 2.79 mm/s is clear for group 2 rigid
    assert vib.vibration(2.79, 75, "rigid", meter_accuracy_pct=0)["vibration_state"] == CLEAR


def test_not_judged():
    assert vib.vibration(np.nan, 75, "rigid")["vibration_state"] == NOT_JUDGED
    assert vib.vibration(3.0, 75, "")["vibration_state"] == NOT_JUDGED           # foundation missing
    out = vib.vibration(3.0, 60000, "rigid")                                       # above 50 MW
    assert out["vibration_state"] == NOT_JUDGED and out["vibration_zone"] == ""


@pytest.mark.parametrize("kwargs, name", [
    (dict(foundation="concrete"), "foundation"),
    (dict(vibration_velocity_mm_s=-0.1), "vibration_velocity_mm_s"),
    (dict(rated_power_kw=0), "rated_power_kw"),
    (dict(meter_accuracy_pct=150), "meter_accuracy_pct"),
])
def test_invalid_parameters_raise_naming_them(kwargs, name):
    args = dict(vibration_velocity_mm_s=1.0, rated_power_kw=75, foundation="rigid")
    args.update(kwargs)
    with pytest.raises(ValueError, match=name):
        vib.vibration(**args)


def test_scalar_equals_array():
    v = [0.5, 2.55, 5.0, 12.0, np.nan, 1.0]
    kw = [7.5, 75.0, 75.0, 500.0, 500.0, 60000.0]
    base = ["rigid", "rigid", "flexible", "flexible", "rigid", "rigid"]
    vec = vib.vibration(v, kw, base)
    for i in range(len(v)):
        one = vib.vibration(v[i], kw[i], base[i])
        for key, value in one.items():
            np.testing.assert_array_equal(vec[key][i], value, err_msg=key)
