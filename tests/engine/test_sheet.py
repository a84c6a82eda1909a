"""The commissioning sheet's tests through the engine: each criterion at its published value, each boundary.

Sources beside each value. IEEE 43-2013 values are from memory (Table 3 and the PI minimums as a NETA World
summary and a tester maker's note give them: see slipwise.physics.insulation); NEC 430.32(A)(1) as commonly
quoted (from memory); ISO 10816-3 / 10816-1 zone boundaries from memory; the 2 % winding-resistance
unbalance is common practice; IEC 60947-4-1 trip multiples 1.05 / 1.20 from memory.
"""

from __future__ import annotations

import math

import pytest

from slipwise.engine import InputError, interpret_one, thresholds_from_mapping

# an IEC 22 kW 400 V motor running sound (design N, 2-pole; field_samples' LH-CHWP-01 at its 07:30 reading)
IEC_22KW = {"tag": "T-1", "rated_power_kw": 22, "rated_voltage_v": 400, "rated_current_a": 39.0,
            "rated_frequency_hz": 50, "rated_speed_rpm": 2940, "rated_power_factor": 0.88,
            "rated_efficiency_pct": 92.7, "design": "N", "driven_load": "variable_torque",
            "frequency_hz": 50.02, "speed_rpm": 2956, "current_l1_a": 32.8, "current_l2_a": 32.1,
            "current_l3_a": 32.2, "voltage_l12_v": 408, "voltage_l23_v": 406, "voltage_l31_v": 407,
            "power_kw": 19.4, "power_factor": 0.85, "minutes_running": 240, "taken_at": "2026-11-24T07:30:00+01:00"}
# a NEMA design B 100 hp 460 V motor (field_samples' CF-HLP-02 at 11:15, sound)
NEMA_100HP = {"tag": "T-2", "rated_power_hp": 100, "rated_voltage_v": 460, "rated_current_a": 114,
              "rated_frequency_hz": 60, "rated_speed_rpm": 1785, "rated_power_factor": 0.86,
              "rated_efficiency_pct": 95.4, "service_factor": 1.0, "design": "B", "driven_load": "variable_torque",
              "frequency_hz": 60.0, "speed_rpm": 1787, "current_l1_a": 98, "current_l2_a": 98, "current_l3_a": 97,
              "voltage_l12_v": 478, "voltage_l23_v": 476, "voltage_l31_v": 477, "taken_at": "2026-11-24T11:15:00-06:00"}


def run(base=IEC_22KW, **tests):
    return interpret_one({**base, **tests})


def test_bases_are_sound_without_tests():
    for base in (IEC_22KW, NEMA_100HP):
        r = run(base)
        assert r["verdict"] == "sound", r["flags"]
        assert r["insulation_state"] is None and r["vibration_zone"] is None and r["overload_setting_pct"] is None


# --------------------------------------------------------------------------- insulation, IEEE 43-2013
IR = dict(winding_temperature_c=40, winding_type="random", insulation_class="F")


@pytest.mark.parametrize("ir_mohm, state", [
    (4.99, "beyond"),     # below IEEE 43-2013 Table 3's 5 MΩ (random-wound / below 1 kV), from memory
    (5.0, "at_limit"),    # at the minimum: the tester's ±5 % band (common practice) reaches it
    (5.26, "at_limit"),   # 5.26 x 0.95 = 4.997 MΩ: the band still reaches 5 MΩ
    (5.27, "clear"),      # 5.27 x 0.95 = 5.0065 MΩ: the whole band is above
])
def test_insulation_minimum_random_wound(ir_mohm, state):
    r = run(insulation_resistance_1min_mohm=ir_mohm, **IR)
    assert r["insulation_minimum_mohm"] == 5.0            # IEEE 43-2013 Table 3
    assert r["insulation_state"] == state
    assert ("insulation_low" in r["flags"]) == (state == "beyond")
    assert ("insulation_low" in r["limit_flags"].split(";")) == (state == "at_limit")


def test_insulation_corrected_to_40c_by_halving_per_10c():
    # IEEE 43-2013 6.3 approximation: halves per 10 °C rise; 120 MΩ at 20 °C is 30 MΩ at 40 °C
    r = run(insulation_resistance_1min_mohm=120, winding_temperature_c=20)
    assert r["insulation_resistance_40c_mohm"] == pytest.approx(30.0)
    r = run(insulation_resistance_1min_mohm=10, winding_temperature_c=50)   # hotter: 20 MΩ at 40 °C
    assert r["insulation_resistance_40c_mohm"] == pytest.approx(20.0)


MV_PLATE = {"tag": "T-3", "rated_power_kw": 400, "rated_voltage_v": 6600, "rated_current_a": 42.0,
            "rated_frequency_hz": 50, "rated_speed_rpm": 1488, "rated_power_factor": 0.87,
            "rated_efficiency_pct": 95.8, "design": "N", "frequency_hz": 50, "speed_rpm": 1490,
            "current_l1_a": 35, "current_l2_a": 35, "current_l3_a": 35, "voltage_l12_v": 6600,
            "voltage_l23_v": 6600, "voltage_l31_v": 6600}


@pytest.mark.parametrize("extra, minimum", [
    ({"winding_type": "form"}, 100.0),                                    # Table 3: form-wound after 1970
    ({}, 100.0),                                                          # blank: form (the stricter) assumed
    ({"winding_type": "random"}, 5.0),                                    # Table 3: random-wound
    ({"winding_type": "form", "winding_made_before_1970": "yes"}, 7.6),  # Table 3: kV + 1 = 6.6 + 1
])
def test_insulation_minimum_by_winding(extra, minimum):
    r = run(MV_PLATE, insulation_resistance_1min_mohm=150, winding_temperature_c=40, **extra)
    assert r["insulation_minimum_mohm"] == pytest.approx(minimum)


def test_form_wound_below_1kv_uses_5_mohm():
    # IEEE 43-2013 Table 3: the 100 MΩ row is for windings rated 1 kV and above (from memory)
    r = run(insulation_resistance_1min_mohm=50, winding_temperature_c=40, winding_type="form")
    assert r["insulation_minimum_mohm"] == 5.0 and r["insulation_state"] == "clear"


@pytest.mark.parametrize("cls, r10, state", [
    ("B", 199.0, "beyond"),     # PI 1.99 < 2.0 (IEEE 43-2013, classes B, F, H)
    ("B", 200.0, "at_limit"),   # PI 2.0 exactly: both readings' ±5 % reach it
    ("F", 221.0, "at_limit"),   # 2.21 x 0.95 / 1.05 = 1.9995: the pessimistic end reaches 2.0
    ("H", 222.0, "clear"),      # 2.22 x 0.95 / 1.05 = 2.0086 > 2.0
    ("A", 149.0, "beyond"),     # class A minimum 1.5 (IEEE 43-2013)
    ("A", 150.0, "at_limit"),
    ("A", 200.0, "clear"),
])
def test_polarization_index_minimum_by_class(cls, r10, state):
    r = run(insulation_resistance_1min_mohm=100, insulation_resistance_10min_mohm=r10, winding_temperature_c=30,
            insulation_class=cls)
    assert r["polarization_index"] == pytest.approx(r10 / 100)
    assert r["polarization_index_minimum"] == (1.5 if cls == "A" else 2.0)
    expected = state
    assert r["polarization_index_state"] == expected
    assert ("polarization_index_low" in r["flags"]) == (expected == "beyond")


def test_polarization_index_not_judged_above_5000_mohm():
    # IEEE 43-2013: above 5,000 MΩ the PI may not indicate the insulation's condition (from memory)
    r = run(insulation_resistance_1min_mohm=5001, insulation_resistance_10min_mohm=5001, winding_temperature_c=30)
    assert r["polarization_index"] == pytest.approx(1.0) and r["polarization_index_state"] is None
    r = run(insulation_resistance_1min_mohm=5000, insulation_resistance_10min_mohm=5000, winding_temperature_c=30)
    assert r["polarization_index_state"] == "beyond"


@pytest.mark.parametrize("rated_v, test_v, low, high, off", [
    (400, 500, 500, 500, False),       # IEEE 43-2013 Table 1: below 1000 V, 500 V
    (400, 1000, 500, 500, True),       # too high for a 400 V winding
    (6600, 5000, 2500, 5000, False),   # 5001-12 000 V: 2500 to 5000 V
    (6600, 1000, 2500, 5000, True),
])
def test_test_voltage_against_table_1(rated_v, test_v, low, high, off):
    base = IEC_22KW if rated_v == 400 else MV_PLATE
    r = run(base, insulation_resistance_1min_mohm=500, winding_temperature_c=40, insulation_test_voltage_v=test_v)
    assert (r["insulation_test_voltage_min_v"], r["insulation_test_voltage_max_v"]) == (low, high)
    assert r["insulation_test_voltage_state"] == ("at_limit" if off else "clear")
    texts = [f for f in r["findings"] if f["flag"] == "insulation_test_voltage"]
    assert bool(texts) == off
    if off:
        assert "IEEE 43-2013 Table 1" in texts[0]["text"] and r["verdict"] == "watch"


def test_insulation_finding_names_source_and_high_voltage_caution():
    r = run(insulation_resistance_1min_mohm=1.8, insulation_resistance_10min_mohm=2.2, winding_temperature_c=12)
    assert r["verdict"] == "act" and {"insulation_low", "polarization_index_low"} <= set(r["flags"])
    f = {x["flag"]: x for x in r["findings"]}
    assert "IEEE 43-2013 Table 3" in f["insulation_low"]["text"]
    for code in ("insulation_low", "polarization_index_low"):
        caution = f[code]["caution"]
        assert "discharge" in caution and "qualified persons" in caution and "codes" in caution


def test_insulation_needs_temperature_and_10min_needs_1min():
    with pytest.raises(InputError) as e:
        run(insulation_resistance_1min_mohm=100)
    assert e.value.field == "winding_temperature_c" and "insulation_resistance_1min_mohm" in e.value.message
    with pytest.raises(InputError) as e:
        run(insulation_resistance_10min_mohm=100)
    assert e.value.field == "insulation_resistance_1min_mohm"


# --------------------------------------------------------------------------- winding resistance
@pytest.mark.parametrize("r, state", [
    ((1.03, 1.00, 0.97), "beyond"),      # 3.0 % > 2 % (common practice)
    ((1.02, 1.00, 0.98), "at_limit"),    # 2.0 % exactly
    ((1.01, 1.00, 0.99), "at_limit"),    # 1.0 % + 2 x 0.5 % ohmmeter accuracy (common practice) reaches 2 %
    ((1.005, 1.00, 0.995), "clear"),     # 0.5 % + 1.0 < 2 %
])
def test_winding_unbalance(r, state):
    out = run(winding_resistance_l12_ohm=r[0], winding_resistance_l23_ohm=r[1], winding_resistance_l31_ohm=r[2])
    mean = sum(r) / 3
    assert out["winding_resistance_unbalance_pct"] == pytest.approx(100 * max(abs(x - mean) for x in r) / mean)
    assert out["winding_resistance_state"] == state
    assert ("winding_resistance_unbalance" in out["flags"]) == (state == "beyond")


def test_winding_unbalance_threshold_overridable():
    th = thresholds_from_mapping({"winding_resistance_unbalance_pct": 5})
    out = interpret_one({**IEC_22KW, "winding_resistance_l12_ohm": 1.03, "winding_resistance_l23_ohm": 1.0,
                         "winding_resistance_l31_ohm": 0.97}, th)
    assert out["winding_resistance_state"] == "clear" and out["verdict"] == "sound"
    with pytest.raises(InputError):
        thresholds_from_mapping({"winding_resistance_unbalance_pct": 50})


@pytest.mark.parametrize("material, k", [("copper", 234.5), ("aluminium", 225.0)])   # IEEE 118 / IEC 60034-1
def test_winding_mean_referred_to_25c(material, k):
    out = run(winding_resistance_l12_ohm=0.1, winding_resistance_l23_ohm=0.1, winding_resistance_l31_ohm=0.1,
              winding_temperature_c=75, winding_material=material)
    assert out["winding_resistance_25c_ohm"] == pytest.approx(0.1 * (k + 25) / (k + 75))


def test_two_winding_resistances_are_not_judged():
    out = run(winding_resistance_l12_ohm=1.0, winding_resistance_l23_ohm=1.2)
    assert out["winding_resistance_unbalance_pct"] is None and out["winding_resistance_state"] is None


# --------------------------------------------------------------------------- overload relay
@pytest.mark.parametrize("base, sf, pct, state", [
    (NEMA_100HP, 1.15, 125.0, "at_limit"),   # NEC 430.32(A)(1): at most 125 % with SF >= 1.15
    (NEMA_100HP, 1.15, 126.0, "beyond"),
    (NEMA_100HP, 1.15, 122.0, "clear"),      # below the 2.5-point dial band (project judgement)
    (NEMA_100HP, 1.0, 115.0, "at_limit"),    # NEC 430.32(A)(1): 115 % for all other motors
    (NEMA_100HP, 1.0, 116.0, "beyond"),
    (IEC_22KW, None, 105.0, "at_limit"),     # IEC practice: the rated current, up to 105 % (common practice)
    (IEC_22KW, None, 106.0, "beyond"),
    (IEC_22KW, None, 100.0, "clear"),
    (IEC_22KW, None, 90.0, "at_limit"),      # below FLA / 1.05 = 95.2 %: may trip (IEC 60947-4-1, from memory)
    (IEC_22KW, None, 83.0, "beyond"),        # below FLA / 1.20 = 83.3 %: trips at full load
])
def test_overload_setting(base, sf, pct, state):
    plate = dict(base) if sf is None else {**base, "service_factor": sf}
    fla = plate["rated_current_a"]
    out = run(plate, overload_setting_a=round(fla * pct / 100, 4), starter="direct")
    assert out["overload_setting_pct"] == pytest.approx(pct, abs=1e-3)
    assert out["overload_setting_state"] == state
    high, low = "overload_setting_high" in out["flags"], "overload_setting_low" in out["flags"]
    assert (high or low) == (state == "beyond")
    if state != "clear":
        text = [f for f in out["findings"] if f["flag"].startswith("overload_setting")][0]["text"]
        if pct > 100:   # the high limit: its source by the nameplate's standard
            assert ("NEC 430.32(A)(1)" if base is NEMA_100HP else "IEC practice") in text
        else:
            assert "IEC 60947-4-1" in text


def test_star_delta_relay_sees_fla_over_root3():
    # a wye-delta starter's relay in the winding circuit carries FLA/√3 (delta phase current)
    out = run(NEMA_100HP, overload_setting_a=114, starter="star_delta")
    assert out["overload_relay_current_a"] == pytest.approx(114 / math.sqrt(3))
    assert out["overload_setting_pct"] == pytest.approx(100 * math.sqrt(3))
    f = [x for x in out["findings"] if x["flag"] == "overload_setting_high"][0]
    assert "star-delta" in f["text"] and "FLA/√3" in f["text"] and "NEC 430.32(A)(1)" in f["text"]
    ok = run(NEMA_100HP, overload_setting_a=66, starter="star_delta")
    assert ok["overload_setting_state"] == "clear"


def test_overload_needs_starter():
    with pytest.raises(InputError) as e:
        run(overload_setting_a=39)
    assert e.value.field == "starter"


# --------------------------------------------------------------------------- vibration, ISO 10816-3 / -1
@pytest.mark.parametrize("kw, foundation, v, zone, state", [
    (22, "rigid", 1.4, "A", "clear"),        # group 2 rigid A/B 1.4 (from memory); the boundary is zone A's top
    (22, "rigid", 2.8, "B", "at_limit"),     # B/C 2.8: the meter's ±10 % (common practice) reaches it
    (22, "rigid", 2.55, "B", "at_limit"),    # 2.55 x 1.1 = 2.805: the band reaches 2.8
    (22, "rigid", 2.54, "B", "clear"),       # 2.54 x 1.1 = 2.794: the whole band is below 2.8
    (22, "rigid", 2.81, "C", "beyond"),
    (22, "rigid", 4.5, "C", "beyond"),       # C/D 4.5
    (22, "rigid", 4.51, "D", "beyond"),
    (22, "flexible", 4.5, "B", "at_limit"),  # group 2 flexible B/C 4.5
    (11, "rigid", 1.8, "B", "at_limit"),     # 15 kW and below: ISO 10816-1 class I, B/C 1.8
    (11, "rigid", 1.81, "C", "beyond"),
    (400, "rigid", 4.5, "B", "at_limit"),    # group 1 (above 300 kW) rigid B/C 4.5
    (400, "flexible", 7.1, "B", "at_limit"), # group 1 flexible B/C 7.1
])
def test_vibration_zones(kw, foundation, v, zone, state):
    base = MV_PLATE if kw == 400 else IEC_22KW if kw == 22 else {
        **IEC_22KW, "rated_power_kw": 11, "rated_current_a": 21.0, "rated_efficiency_pct": 91.0,
        "current_l1_a": 17.5, "current_l2_a": 17.4, "current_l3_a": 17.3, "power_kw": 10.3}
    out = run(base, vibration_velocity_mm_s=v, foundation=foundation)
    assert out["vibration_zone"] == zone
    assert out["vibration_state"] == state
    assert ("vibration_high" in out["flags"]) == (zone in ("C", "D"))


def test_vibration_finding_marks_boundaries_recalled():
    out = run(vibration_velocity_mm_s=3.4)
    f = [x for x in out["findings"] if x["flag"] == "vibration_high"][0]
    assert "ISO 10816-3" in f["text"] and "recalled" in f["text"] and out["verdict"] == "act"


# --------------------------------------------------------------------------- rotation, instruments, verdict
def test_rotation_wrong_and_its_remedy():
    out = run(rotation_correct="no")
    assert out["rotation_state"] == "beyond" and "rotation_wrong" in out["flags"] and out["verdict"] == "act"
    f = [x for x in out["findings"] if x["flag"] == "rotation_wrong"][0]
    assert "swap" in f["text"] and "isolated" in f["text"] and "isolated" in f["caution"]
    assert run(rotation_correct="yes")["rotation_state"] == "clear"


@pytest.mark.parametrize("due, state", [("2026-11-23", "beyond"), ("2026-11-24", "clear"), ("2027-01-01", "clear")])
def test_instrument_calibration_due_before_reading_date(due, state):
    out = run(instruments=f"Vibration meter; VB-1; {due}\nClamp meter; CM-7; 2030-01-01")
    assert out["instruments_state"] == state
    if state == "beyond":
        assert out["verdict"] == "retake" and "instrument_calibration_expired" in out["flags"]
        assert out["instruments_calibration_expired"] == f"Vibration meter (VB-1, due {due})"
    else:
        assert out["verdict"] == "sound" and out["instruments_calibration_expired"] is None


def test_act_wins_over_retake_and_limit_states_give_watch():
    out = run(rotation_correct="no", instruments="Meter; M-1; 2020-01-01")
    assert out["verdict"] == "act"
    out = run(winding_resistance_l12_ohm=1.02, winding_resistance_l23_ohm=1.0, winding_resistance_l31_ohm=0.98)
    assert out["verdict"] == "watch" and out["limit_flags"] == "winding_resistance_unbalance"


def test_notes_are_carried_not_judged():
    out = run(notes="Guard refitted after the test.")
    assert out["verdict"] == "sound" and out["flags"] == []
