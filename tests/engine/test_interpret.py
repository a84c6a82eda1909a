import math

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings, strategies as st

from slipwise import contract as C
from slipwise.engine import (InputError, Thresholds, interpret_columns, interpret_one, interpret_records,
                           thresholds_from_mapping)
from slipwise.physics.units import HORSEPOWER_W

# an IEC 11 kW 4-pole pump motor; P = sqrt(3) 400 V 21.5 A 0.81 0.914 = 11.0 kW
PUMP = dict(tag="P-101", rated_power_kw=11, rated_voltage_v=400, rated_current_a=21.5, rated_frequency_hz=50,
            rated_speed_rpm=1460, rated_power_factor=0.81, rated_efficiency_pct=91.4, driven_load="variable_torque")
READING = dict(frequency_hz=50.0, speed_rpm=1472, current_l1_a=16.4, current_l2_a=16.8, current_l3_a=16.2,
               voltage_l12_v=402, voltage_l23_v=398, voltage_l31_v=405)


def rec(**changes):
    return {**PUMP, **READING, **changes}


def test_result_has_every_contract_column():
    r = interpret_one(rec())
    assert set(C.RESULT_COLUMNS) <= set(r)
    assert r["error"] is None and r["engine_version"] == C.ENGINE_VERSION


def test_speed_results():
    r = interpret_one(rec())
    assert r["poles"] == 4
    assert r["sync_speed_rpm"] == pytest.approx(1500.0)
    assert r["slip_pct"] == pytest.approx(100 * 28 / 1500)
    assert r["slip_rpm"] == pytest.approx(28.0)


def test_slip_method_value():
    # slip method with voltage compensation: (s / s_r) (V / V_r)^2 (n / n_r)
    r = interpret_one(rec())
    v = (402 + 398 + 405) / 3
    expected = (28 / 40) * (v / 400) ** 2 * (1472 / 1460)
    assert r["load_slip_pct"] == pytest.approx(100 * expected)


def test_methods_agree_and_fused_band_holds_them():
    r = interpret_one(rec(power_kw=8.6))
    for key in ("load_slip_pct", "load_current_pct", "load_power_pct"):
        assert r[key] is not None
    assert r["load_low_pct"] <= r["load_pct"] <= r["load_high_pct"]
    assert "readings_inconsistent" not in r["flags"]
    assert r["output_kw"] == pytest.approx(r["load_pct"] / 100 * 11)


def test_efficiency_band_and_class():
    r = interpret_one(rec(power_kw=8.6))
    assert r["efficiency_low_pct"] <= r["efficiency_pct"] <= r["efficiency_high_pct"]
    # IEC 60034-30-1: 4-pole 50 Hz 11 kW IE3 limit 91.4 % -> IE3
    assert r["efficiency_class"] == "IE3"
    # at about 70 % load a motor's efficiency is near its rated value (DOE fact sheet, part-load curves)
    assert abs(r["efficiency_pct"] - 91.4) < 2.0


def test_supply_results():
    r = interpret_one(rec())
    # NEMA: mean 401.67, max deviation 3.67 -> 0.913 %
    assert r["voltage_unbalance_pct"] == pytest.approx(100 * 3.6667 / 401.6667, rel=1e-3)
    assert r["derating_factor"] == 1.0
    assert r["supply_zone"] == "A"
    assert r["frequency_deviation_pct"] == 0.0


def test_breakdown_margin_scales_with_voltage_squared():
    # mains: breakdown torque ~ V^2 (common practice); margin = breakdown / operating torque
    hi = interpret_one(rec())
    lo = interpret_one(rec(voltage_l12_v=362, voltage_l23_v=358, voltage_l31_v=365, speed_rpm=1468))
    ratio = lo["breakdown_torque_now_pct"] / hi["breakdown_torque_now_pct"]
    # (friction and windage torque is subtracted from both, so not exactly V^2)
    assert ratio == pytest.approx(((362 + 358 + 365) / (402 + 398 + 405)) ** 2, rel=2e-3)
    assert hi["breakdown_margin"] == pytest.approx(hi["breakdown_torque_now_pct"] / hi["torque_pct"])


def test_hp_nameplate():
    nema = dict(tag="F-7", rated_power_hp=25, rated_voltage_v=460, rated_current_a=29.0, rated_frequency_hz=60,
                rated_speed_rpm=1770, rated_power_factor=0.84, rated_efficiency_pct=93.6,
                frequency_hz=60, speed_rpm=1782, current_l1_a=22, voltage_l12_v=468)
    r = interpret_one(nema)
    assert r["poles"] == 4 and r["sync_speed_rpm"] == 1800
    assert r["output_kw"] == pytest.approx(r["load_pct"] / 100 * 25 * HORSEPOWER_W / 1000)
    assert r["voltage_unbalance_pct"] is None        # one voltage read: no unbalance


def test_idle_motor_is_not_sixty_percent():
    # uncoupled motor: current = magnetising current; the plain current ratio would say ~40 %
    r = interpret_one(rec(speed_rpm=1498, current_l1_a=8.2, current_l2_a=8.2, current_l3_a=8.2,
                          minutes_running=90))
    assert r["load_current_pct"] < 15
    assert "underloaded" in r["flags"]


def test_speed_above_synchronous_has_no_load():
    r = interpret_one(rec(speed_rpm=1503))
    assert r["flags"] == ["speed_above_synchronous"]
    assert r["load_pct"] is None and r["load_slip_pct"] is None and r["breakdown_margin"] is None
    assert "generating" in r["findings"][0]["text"]
    at = interpret_one(rec(speed_rpm=1500.5))
    assert "uncoupled" in at["findings"][0]["text"]


def test_overload_and_service_factor():
    r = interpret_one(rec(speed_rpm=1452, current_l1_a=25.5, current_l2_a=25.5, current_l3_a=25.5,
                          minutes_running=120))
    assert r["load_pct"] > 100
    # issue 9: no service factor on the nameplate -> 1.0 assumed and said in the overload finding;
    # over_service_factor is judged only on a given service factor (never two flags for one fact)
    assert "overloaded" in r["flags"] and "over_service_factor" not in r["flags"]
    text = next(f for f in r["findings"] if f["flag"] == "overloaded")["text"]
    assert "1.0 was assumed" in text
    sf = interpret_one(rec(service_factor=1.15, speed_rpm=1456, current_l1_a=23.8, current_l2_a=23.8,
                           current_l3_a=23.8, minutes_running=120))
    assert 100 < sf["load_pct"] < 115
    assert "overloaded" in sf["flags"] and "over_service_factor" not in sf["flags"]
    caution = next(f for f in r["findings"] if f["flag"] == "overloaded")["caution"]
    assert "qualified" in caution and "local electrical codes" in caution


def test_unbalance_flags():
    r = interpret_one(rec(voltage_l12_v=410, voltage_l23_v=392, voltage_l31_v=400,
                          current_l1_a=17.5, current_l2_a=14.0, current_l3_a=15.0))
    assert {"voltage_unbalance", "current_unbalance"} <= set(r["flags"])
    assert r["derating_factor"] < 1.0


def test_supply_out_of_tolerance():
    # 51.5 Hz and 412 V: zone B by IEC 60034-1
    r = interpret_one(rec(frequency_hz=51.5, speed_rpm=1517, voltage_l12_v=412, voltage_l23_v=412,
                          voltage_l31_v=412))
    assert r["supply_zone"] == "B"
    # issue 9: zone B is "at the limit" (IEC 60034-1 allows it, hotter, not for long); the flag means beyond
    assert r["supply_state"] == "at_limit" and "supply_out_of_tolerance" in r["limit_flags"].split(";")
    assert "supply_out_of_tolerance" not in r["flags"] and r["verdict"] == "watch"
    # 53 Hz is outside zone B (frequency above +3 %): beyond
    out = interpret_one(rec(frequency_hz=53.0, speed_rpm=1560, voltage_l12_v=412, voltage_l23_v=412,
                            voltage_l31_v=412))
    assert out["supply_zone"] == "outside" and "supply_out_of_tolerance" in out["flags"]
    assert out["supply_state"] == "beyond" and out["verdict"] == "act"


def test_pulley_speed_is_inconsistent_and_blames_the_speed():
    # tachometer on a 0.75 ratio belt pulley: 1104 rpm read for a motor turning ~1472
    r = interpret_one(rec(speed_rpm=1104, power_kw=8.6))
    assert "readings_inconsistent" in r["flags"]
    text = next(f for f in r["findings"] if f["flag"] == "readings_inconsistent")["text"]
    assert "tachometer" in text


def test_drive_fan_at_part_speed_is_not_underloaded():
    fan = dict(PUMP, supply="drive", driven_load="variable_torque")
    # 35 Hz: fan law torque (35/50)^2 = 49 % of full-speed torque
    r = interpret_one({**fan, "frequency_hz": 35, "speed_rpm": 1037, "current_l1_a": 12.0})
    assert r["supply_zone"] == "drive" and r["frequency_deviation_pct"] is None
    assert r["sync_speed_rpm"] == pytest.approx(1050)
    assert "underloaded" not in r["flags"]
    assert "supply_out_of_tolerance" not in r["flags"]


def test_validation_names_field_and_range():
    with pytest.raises(InputError) as exc:
        interpret_one(rec(rated_voltage_v=99999))
    assert exc.value.field == "rated_voltage_v"
    assert "100 to 15000 V" in exc.value.message
    with pytest.raises(InputError) as exc:
        interpret_one(rec(speed_rpm="fast"))
    assert exc.value.field == "speed_rpm" and "not a number" in exc.value.message
    with pytest.raises(InputError) as exc:
        interpret_one({k: v for k, v in rec().items() if k != "rated_current_a"})
    assert exc.value.field == "rated_current_a" and "required" in exc.value.message
    with pytest.raises(InputError) as exc:
        interpret_one(rec(design="Z"))
    assert exc.value.field == "design" and "A, B, C, D, N, H" in exc.value.message
    with pytest.raises(InputError) as exc:
        interpret_one(rec(rated_current_a=60))          # power balance broken
    assert exc.value.field == "rated_current_a"
    with pytest.raises(InputError) as exc:
        # 6.2 % rated slip cannot go with 95 % efficiency: rotor copper loss alone is s/(1-s) of output
        interpret_one(rec(rated_speed_rpm=1407, rated_efficiency_pct=95.0, rated_power_factor=None))
    assert exc.value.field == "rated_speed_rpm" and "at most" in exc.value.message
    with pytest.raises(InputError) as exc:
        interpret_one(rec(tag="bad\x07tag"))
    assert exc.value.field == "tag"
    with pytest.raises(InputError) as exc:
        interpret_one(rec(speed_rpm=float("nan")))
    assert exc.value.field == "speed_rpm"
    with pytest.raises(InputError) as exc:
        interpret_one(rec(current_l1_a=None, current_l2_a=None, current_l3_a=None))
    assert exc.value.field == "current_l1_a"


def test_batch_keeps_bad_rows_apart():
    rows = interpret_records([rec(), rec(speed_rpm=-3), rec(tag="")])
    assert rows[0]["error"] is None and rows[0]["load_pct"] is not None
    assert rows[1]["error_field"] == "speed_rpm" and rows[1]["load_pct"] is None
    assert rows[2]["error_field"] == "tag"


def test_thresholds_override():
    r = interpret_one(rec(), Thresholds(underloaded_pct=80))
    assert "underloaded" in r["flags"]
    with pytest.raises(InputError):
        thresholds_from_mapping({"underloaded_pct": 500})
    with pytest.raises(InputError):
        thresholds_from_mapping({"no_such": 1})


def test_array_equals_scalar():
    records = [rec(), rec(speed_rpm=1450, minutes_running=5), rec(supply="drive", frequency_hz=40, speed_rpm=1180),
               rec(power_kw=9.1, power_factor=0.8)]
    cols = {k: np.array([r.get(k) for r in records], dtype=object) for k in set().union(*records)}
    out = interpret_columns(cols)
    for i, r in enumerate(records):
        one = interpret_one(r)
        for key in C.RESULT_COLUMNS:
            a, b = out[key][i], one[key]
            if key in C.TEXT_RESULT_COLUMNS:
                assert (a or None) == (b or None) or key == "flags" or key == "findings", key
            elif b is None:
                assert np.isnan(a), key
            else:
                assert a == pytest.approx(b, rel=1e-12), key


numbers = st.one_of(st.floats(allow_nan=True, allow_infinity=True), st.integers(-10**6, 10**6),
                    st.text(max_size=6), st.none())


@given(st.dictionaries(st.sampled_from(C.INPUT_FIELDS), numbers, max_size=len(C.INPUT_FIELDS)))
@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
def test_garbage_only_ever_gives_input_error(record):
    try:
        r = interpret_one(record)
    except InputError as exc:
        assert exc.field and exc.message
        return
    for key, value in r.items():
        assert not (isinstance(value, float) and math.isnan(value)), key


@st.composite
def valid_records(draw):
    kw = draw(st.floats(0.75, 400))
    hz = draw(st.sampled_from([50.0, 60.0]))
    poles = draw(st.sampled_from([2, 4, 6, 8]))
    ns = 120 * hz / poles
    s_r = draw(st.floats(0.006, 0.05))
    v_r = 400.0 if hz == 50 else 460.0
    pf = draw(st.floats(0.7, 0.9))
    # rotor copper loss s/(1-s) of output must leave room for the other losses (the engine refuses less)
    eta = draw(st.floats(0.75, min(0.96, 1.0 / (1.0 + s_r / (1.0 - s_r) / 0.9) - 0.01)))
    i_r = kw * 1000 / (np.sqrt(3) * v_r * pf * eta)
    load = draw(st.floats(0.05, 1.3))
    f = hz * draw(st.floats(0.98, 1.02))
    return dict(tag="T", rated_power_kw=kw, rated_voltage_v=v_r, rated_current_a=i_r, rated_frequency_hz=hz,
                rated_speed_rpm=ns * (1 - s_r), rated_power_factor=pf, rated_efficiency_pct=100 * eta,
                driven_load=draw(st.sampled_from(C.DRIVEN_LOADS)),
                frequency_hz=f, speed_rpm=120 * f / poles * (1 - s_r * load),
                current_l1_a=i_r * np.sqrt(0.35 ** 2 + (1 - 0.35 ** 2) * load ** 2),
                voltage_l12_v=v_r * draw(st.floats(0.9, 1.1)))


@given(valid_records())
@settings(max_examples=200, deadline=None)
def test_valid_input_gives_finite_results(record):
    r = interpret_one(record)
    for key in ("sync_speed_rpm", "slip_pct", "load_pct", "load_low_pct", "load_high_pct", "load_slip_pct",
                "load_current_pct", "output_kw", "torque_pct", "efficiency_pct", "breakdown_margin",
                "voltage_deviation_pct", "frequency_deviation_pct", "breakdown_torque_now_pct"):
        assert r[key] is not None and math.isfinite(r[key]), key
        if key.startswith("load") or key in ("output_kw", "efficiency_pct"):
            assert r[key] >= 0, key
    assert r["load_low_pct"] <= r["load_pct"] <= r["load_high_pct"]
    # first law: never more out than in, also at the top of the band
    assert 0 <= r["efficiency_low_pct"] <= r["efficiency_pct"] <= r["efficiency_high_pct"] < 100
