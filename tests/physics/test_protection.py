"""Overload relay setting against NEC 430.32(A)(1) and IEC practice.

NEC limits (125 % / 115 %) are from memory of the code's text. IEC 105 % is common practice; the low
judgement uses the IEC 60947-4-1 tripping limits 1.05 / 1.20 x setting (from memory).
"""

import math

import numpy as np
import pytest

from slipwise.physics import protection as prot
from slipwise.physics.verdict import AT_LIMIT, BEYOND, CLEAR, NOT_JUDGED


def test_relay_current_direct_and_star_delta():
    assert prot.relay_current_a(100, "direct") == 100
    # star-delta, relay in the winding circuit (default): phase current FLA / sqrt(3)
    assert prot.relay_current_a(100, "star_delta") == pytest.approx(100 / math.sqrt(3))
    # star-delta with the relay in the line
    assert prot.relay_current_a(100, "star_delta", relay_in_winding=False) == 100
    assert prot.relay_current_a(100, "drive") == 100
    assert prot.relay_current_a(100, "soft") == 100


@pytest.mark.parametrize("sf, rise, limit", [
    (1.15, np.nan, 125.0),    # SF 1.15: 125 %
    (1.25, np.nan, 125.0),
    (1.149, np.nan, 115.0),   # just below 1.15
    (1.0, np.nan, 115.0),
    (np.nan, np.nan, 115.0),  # nothing marked
    (np.nan, 40.0, 125.0),    # marked rise 40 °C: 125 %
    (np.nan, 41.0, 115.0),    # marked rise above 40 °C
])
def test_nec_430_32_limit(sf, rise, limit):
    # NEC 430.32(A)(1) (from memory)
    assert prot.setting_limit_pct("nema", sf, rise) == limit


def test_iec_limit():
    # IEC practice: set at rated current, up to 105 % (common practice)
    assert prot.setting_limit_pct("iec", 1.15) == 105.0


@pytest.mark.parametrize("standard, sf, setting, state", [
    ("nema", 1.15, 125.1, BEYOND),    # just above 125 %
    ("nema", 1.15, 125.0, AT_LIMIT),  # at 125 %
    ("nema", 1.15, 122.5, AT_LIMIT),  # 2.5 points below: still at the limit
    ("nema", 1.15, 122.4, CLEAR),
    ("nema", 1.0, 115.1, BEYOND),     # SF 1.0: 115 %
    ("nema", 1.0, 115.0, AT_LIMIT),
    ("nema", 1.0, 112.4, CLEAR),
    ("iec", np.nan, 105.1, BEYOND),   # IEC: 105 %
    ("iec", np.nan, 105.0, AT_LIMIT),
    ("iec", np.nan, 100.0, CLEAR),    # set at rated current
])
def test_high_state_boundaries(standard, sf, setting, state):
    out = prot.overload_setting(setting, 100, "direct", standard, sf)
    assert out["overload_setting_pct"] == pytest.approx(setting)
    assert out["overload_setting_high_state"] == state


def test_star_delta_relay_set_to_line_fla_is_high():
    # common mistake: a relay in the winding circuit set to the line FLA is at 173 % of what it sees
    out = prot.overload_setting(100, 100, "star_delta", "iec")
    assert out["overload_setting_pct"] == pytest.approx(100 * math.sqrt(3))
    assert out["overload_setting_high_state"] == BEYOND
    # set to FLA / sqrt(3): clear
    out = prot.overload_setting(57.8, 100, "star_delta", "iec")
    assert out["overload_setting_high_state"] == CLEAR
    assert out["overload_setting_low_state"] == CLEAR


@pytest.mark.parametrize("setting, state", [
    (95.3, CLEAR),       # just above 100 / 1.05 = 95.24 %: full load is below the no-trip current
    (95.2, AT_LIMIT),    # just below: full load is above 1.05 x setting, the relay may trip
    (83.4, AT_LIMIT),    # just above 100 / 1.20 = 83.33 %
    (83.3, BEYOND),      # just below: full load is above 1.20 x setting, the relay trips
])
def test_low_state_boundaries(setting, state):
    # IEC 60947-4-1 tripping limits 1.05 / 1.20 x setting (from memory); the exact thresholds
    # 100/1.05 and 100/1.20 are not tested for equality (not representable exactly in binary)
    out = prot.overload_setting(setting, 100, "direct", "nema", 1.15)
    assert out["overload_setting_min_pct"] == pytest.approx(100 / 1.05)
    assert out["overload_setting_low_state"] == state


def test_missing_inputs_not_judged():
    out = prot.overload_setting(np.nan, 100, "direct", "nema")
    assert out["overload_setting_high_state"] == NOT_JUDGED
    assert out["overload_setting_low_state"] == NOT_JUDGED
    assert prot.overload_setting(100, 100, "direct", "")["overload_setting_high_state"] == NOT_JUDGED
    assert prot.overload_setting(100, 100, "", "iec")["overload_setting_low_state"] == NOT_JUDGED


@pytest.mark.parametrize("kwargs, name", [
    (dict(starter="wye"), "starter"),
    (dict(nameplate_standard="jis"), "nameplate_standard"),
    (dict(service_factor=0.9), "service_factor"),
    (dict(overload_setting_a=0), "overload_setting_a"),
    (dict(full_load_current_a=-5), "full_load_current_a"),
    (dict(relay_in_winding=True), "relay_in_winding"),     # only meaningful with star_delta
])
def test_invalid_parameters_raise_naming_them(kwargs, name):
    args = dict(overload_setting_a=100, full_load_current_a=100, starter="direct", nameplate_standard="nema")
    args.update(kwargs)
    with pytest.raises(ValueError, match=name):
        prot.overload_setting(**args)


def test_scalar_equals_array():
    setting = [125.1, 100.0, 57.8, 83.3, 110.0]
    fla = [100.0, 100.0, 100.0, 100.0, 100.0]
    starter = ["direct", "star_delta", "star_delta", "soft", "drive"]
    std = ["nema", "iec", "iec", "nema", "nema"]
    sf = [1.15, np.nan, np.nan, 1.0, np.nan]
    rise = [np.nan, np.nan, np.nan, np.nan, 40.0]
    vec = prot.overload_setting(setting, fla, starter, std, sf, rise)
    for i in range(5):
        one = prot.overload_setting(setting[i], fla[i], starter[i], std[i], sf[i], rise[i])
        for key, value in one.items():
            np.testing.assert_array_equal(vec[key][i], value, err_msg=key)
