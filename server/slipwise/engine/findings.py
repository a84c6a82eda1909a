"""Findings: the plain-language text and safety caution that go with each flag.

The physics decides which flags a reading raises (:mod:`slipwise.physics.flags`);
this module words them. Findings are built once per distinct combination of
flags (a bit mask), not once per row, so a batch of a million readings costs a
handful of strings.
"""

from __future__ import annotations

from ..physics.flags import Thresholds, decode_combination
from .energy import energy_findings
from .verdicts import decode_extra, decode_test_facts

#: Separator between findings (and between cautions) in one CSV cell.
SEPARATOR = " | "

CAUTION_ISOLATE = (
    "Any inspection or correction of the motor, its terminal box or its supply must be done by a "
    "qualified person with the circuit isolated, locked off and proved dead; local electrical codes "
    "and licensed practice prevail.")
CAUTION_KEEP_RUNNING = (
    "Do not keep the motor in service in this condition without an engineering decision; any "
    "work on it is for qualified persons with the circuit isolated and locked off; local electrical "
    "codes and licensed practice prevail.")
CAUTION_MEASURE = (
    "Retake readings only with meters rated for the installation's measurement category, keeping "
    "clear of rotating parts and live terminals; local electrical codes and licensed practice prevail.")

CAUTION_INSULATION = (
    "An insulation test puts a high DC voltage on the winding: only qualified persons test, with the motor "
    "isolated, locked off and proved dead and everyone clear of its terminals and cables; discharge the winding "
    "to earth after every test for a long time (commonly four times the test's duration) before touching it. "
    "Local electrical codes and licensed practice prevail.")
CAUTION_ROTATION = (
    "Reverse the rotation by swapping any two of the three line leads, at the motor terminals or the starter, "
    "with the supply isolated, locked off and proved dead, by a qualified person; run it uncoupled first where "
    "running backwards could harm the driven machine (pumps, compressors, backstops). Local electrical codes and "
    "licensed practice prevail.")

_IR_RULE = ("IEEE 43-2013 Table 3: 100 MΩ for a form-wound winding of 1 kV and above, 5 MΩ for a random-wound "
            "winding or one below 1 kV, kV + 1 MΩ for a winding made before 1970; the reading is corrected to "
            "40 °C by halving it for every 10 °C rise, IEEE 43's approximation")
_PI_RULE = ("IEEE 43-2013: at least 1.5 for class A, 2.0 for classes B, F and H; not judged when the 1-minute "
            "reading is above 5,000 MΩ")
_VIB_RULE = ("ISO 10816-3 (now ISO 20816-3) for the machine's group and foundation, class I of ISO 10816-1 at "
             "15 kW and below; zone boundaries as recalled from the 2009 edition, check them against the edition "
             "your contract names")
_RELAY_SEEN = ("The starter is star-delta: its relay sits in the winding circuit and carries the winding current, "
               "FLA/√3 (58 % of the nameplate current), and the setting is judged against that "
               "(overload_relay_current_a); if this relay sits in the line instead, judge it against the full FLA.")
_RELAY_NEC = ("NEC 430.32(A)(1) on a NEMA nameplate: at most 125 % of the full-load current with a service factor "
              "of 1.15 or more or a marked rise of 40 °C or less, 115 % otherwise")
_RELAY_IEC = ("IEC practice on an IEC nameplate: the relay set to the rated current, at most 105 % "
              "(IEC 60947-4-1 tripping limits)")
#: The words of an insulation test voltage outside IEEE 43 Table 1 (a finding without a flag code).
TEST_VOLTAGE_TEXT = (
    "The DC test voltage is outside IEEE 43-2013 Table 1's range for the winding's rated voltage "
    "(insulation_test_voltage_min_v to insulation_test_voltage_max_v): the insulation reading is not comparable "
    "with the Table 3 minimums. Test again at a voltage in that range.")


def sheet_text(code: str, th: Thresholds, star_delta: bool = False, nema: bool = False) -> tuple[str, str]:
    """Finding and caution for a test of the commissioning sheet whose state is "beyond"."""
    relay_rule = _RELAY_NEC if nema else _RELAY_IEC
    seen = (" " + _RELAY_SEEN) if star_delta else ""
    texts = {
        "insulation_low": (
            "Insulation resistance at 40 °C (insulation_resistance_40c_mohm) is below the recommended minimum "
            f"(insulation_minimum_mohm; {_IR_RULE}). Do not energise: clean and dry the winding, then test "
            "again.", CAUTION_INSULATION),
        "polarization_index_low": (
            "Polarization index (10-minute over 1-minute insulation resistance) is below the minimum for the "
            f"insulation class (polarization_index_minimum; {_PI_RULE}): moisture or contamination is likely. "
            "Do not energise before the winding is cleaned, dried and tested again.", CAUTION_INSULATION),
        "winding_resistance_unbalance": (
            "Winding resistance unbalance (largest deviation of the three line-to-line readings from their mean, "
            f"over the mean) exceeds {th.winding_resistance_unbalance_pct:g} % (a common acceptance figure; common "
            "practice): look for a loose or high-resistance connection, a wrong joint at the terminals or shorted "
            "turns before energising.", CAUTION_ISOLATE),
        "overload_setting_high": (
            f"The overload relay setting is above its limit (overload_setting_max_pct; {relay_rule}): the relay "
            "would let the winding overheat before it trips. Set it down." + seen, CAUTION_ISOLATE),
        "overload_setting_low": (
            "The overload relay setting is below 83 % of the current the relay carries at full load: a thermal "
            "relay must trip within 2 h at 1.20 times its setting (IEC 60947-4-1 tripping limits), so it will trip "
            "the motor at full load. Set it to the full-load current the relay carries." + seen, CAUTION_ISOLATE),
        "vibration_high": (
            f"Vibration velocity is in zone C or D (vibration_zone; {_VIB_RULE}), above the B/C boundary "
            "(vibration_zone_bc_mm_s): not acceptable for long-term running, and zone D can damage the machine. "
            "Check alignment, balance, soft foot, looseness and the bearings before sign-off.", CAUTION_KEEP_RUNNING),
        "rotation_wrong": (
            "The shaft turns the wrong way for the driven machine: swap any two of the three line leads with the "
            "supply isolated, then check the direction again.", CAUTION_ROTATION),
        "instrument_calibration_expired": (
            "An instrument's calibration was due before the date of the reading (instruments_calibration_expired): "
            "its readings are no evidence for this record. Take them again with a calibrated instrument.", ""),
    }
    return texts[code]


def sheet_limit_text(code: str, th: Thresholds, star_delta: bool = False, nema: bool = False) -> tuple[str, str]:
    """Finding and caution for a test of the commissioning sheet "at the limit"."""
    relay_rule = _RELAY_NEC if nema else _RELAY_IEC
    seen = (" " + _RELAY_SEEN) if star_delta else ""
    texts = {
        "insulation_low": (
            "Insulation resistance at 40 °C meets the recommended minimum only within the tester's accuracy "
            f"(±5 % of reading, common practice; {_IR_RULE}): test again with the winding dry and at a steady "
            "temperature before relying on it.", CAUTION_INSULATION),
        "polarization_index_low": (
            "Polarization index meets the minimum only within the tester's accuracy (each reading ±5 %, common "
            f"practice; {_PI_RULE}): test again before relying on it.", CAUTION_INSULATION),
        "winding_resistance_unbalance": (
            f"Winding resistance unbalance is within the ohmmeter's accuracy (±0.5 % of reading, common practice) of "
            f"{th.winding_resistance_unbalance_pct:g} %: tighten the connections and measure again with four-wire "
            "leads at the motor terminals.", CAUTION_ISOLATE),
        "overload_setting_high": (
            f"The overload relay setting is at its limit or within 2.5 points below it (about one dial division, a "
            f"project judgement; {relay_rule}): check the dial reading." + seen, ""),
        "overload_setting_low": (
            "The overload relay setting is between 83 % and 95 % of the current the relay carries at full load: "
            "a thermal relay is sure not to trip only below 1.05 times its setting (IEC 60947-4-1 tripping "
            "limits), so it may trip the motor at full load." + seen, ""),
        "vibration_high": (
            f"Vibration velocity is in zone A or B but within the meter's accuracy (±10 %, common practice) of the "
            f"B/C boundary ({_VIB_RULE}): measure again and watch the trend.", ""),
    }
    return texts[code]


_INCONSISTENT_TEXT = {
    0: ("The slip-method load disagrees with the other load methods beyond their bands. "
        "Re-check the speed: tachometer on the motor shaft itself (not a belt pulley or the driven shaft), "
        "one reflective mark, and the nameplate's rated speed."),
    1: ("The current-method load disagrees with the other load methods beyond their bands. "
        "Re-check the currents: clamp around one phase conductor only (not a cable with two phases or "
        "parallel conductors), the meter range, and the nameplate current for the connected voltage "
        "(dual-voltage motors)."),
    2: ("The input-power load disagrees with the other load methods beyond their bands. "
        "Re-check the power reading: the analyser's clamp orientation and phase order, the power-factor "
        "reading, and that it measures this motor only."),
    -2: ("The load methods disagree beyond their bands. Re-check the speed (tachometer on the motor shaft, "
         "not a belt pulley), the clamp around one phase conductor only, and the nameplate's rated speed "
         "and current (a wrong nameplate entry shifts every method differently)."),
}


def finding_text(code: str, th: Thresholds, outlier: int = -2, on_drive: bool = False,
                 at_synchronous: bool = False) -> tuple[str, str]:
    """Plain-language finding and its caution for one flag."""
    basis = "torque" if on_drive else "load"
    above = ("Shaft speed equals synchronous speed within the tachometer's resolution: the motor runs "
             "uncoupled or unloaded, so slip is too small to measure. No load estimate is given."
             if at_synchronous else
             "Shaft speed is above synchronous speed: the motor is generating (driven by its load) or the "
             "tachometer was misread. No load estimate is given.")
    under = (f"Torque projected to rated speed by the fan/pump law is below {th.underloaded_pct:g} % of rated "
             "torque: the motor is oversized for this duty even at full speed." if on_drive else
             f"Estimated load is below {th.underloaded_pct:g} % of rated: the motor is oversized for this "
             "duty; efficiency and power factor are poor.")
    texts = {
        "speed_above_synchronous": (above, CAUTION_MEASURE),
        "overloaded": (
            f"Estimated {basis} is above {th.overloaded_pct:g} % of rated: the winding runs hotter than "
            "its rating; find the cause (process, mechanical drag, wrong impeller or pulley) before "
            "sign-off.", CAUTION_KEEP_RUNNING),
        "over_service_factor": (
            f"Estimated {basis} exceeds the service factor: beyond what the nameplate allows even for "
            "short periods.", CAUTION_KEEP_RUNNING),
        "near_breakdown": (
            f"Breakdown torque is less than {th.near_breakdown_margin:g} times the operating torque (or the "
            "point is already past breakdown, on the unstable side): a voltage dip or load surge may stall "
            "the motor.", CAUTION_KEEP_RUNNING),
        "underloaded": (under + " Check the process was at its normal duty when read.", ""),
        "supply_out_of_tolerance": (
            "Supply voltage or frequency is outside the tolerance the motor is rated for (outside IEC 60034-1 "
            "zone B, or outside NEMA MG 1 +-10 % V, +-5 % f, 10 % combined even allowing for the voltmeter's "
            "accuracy).", CAUTION_ISOLATE),
        "voltage_unbalance": (
            f"Voltage unbalance exceeds {th.voltage_unbalance_pct:g} % (NEMA definition): derate the motor by "
            "the derating factor shown; operation above 5 % is not recommended. Look for a high-resistance "
            "joint, a blown capacitor stage or unevenly loaded single-phase circuits.", CAUTION_ISOLATE),
        "current_unbalance": (
            f"Current unbalance exceeds {th.current_unbalance_pct:g} %: look at the supply unbalance first, "
            "then for a poor connection or a winding fault.", CAUTION_ISOLATE),
        "starting_torque_low": (
            f"Locked-rotor torque at the measured voltage is less than {th.starting_margin:g} times the "
            "breakaway torque this load needs: the motor may fail to start, or start too slowly, after a stop "
            "under load or on a weak supply.", CAUTION_KEEP_RUNNING),
        "readings_inconsistent": (_INCONSISTENT_TEXT.get(outlier, _INCONSISTENT_TEXT[-2]) +
                                  " Take the readings again.", CAUTION_MEASURE),
    }
    if code not in texts:
        return sheet_text(code, th)
    return texts[code]


#: Service factor assumed where the nameplate gives none, said in the overload finding.
SF_ASSUMED_TEXT = (" The nameplate gives no service factor: 1.0 was assumed, so no load above rated output "
                   "is allowed even for short periods.")


def limit_text(code: str, th: Thresholds, on_drive: bool = False) -> tuple[str, str]:
    """Plain-language finding and caution for a quantity "at the limit" (its band straddles the threshold)."""
    basis = "torque" if on_drive else "load"
    texts = {
        "overloaded": (
            f"The {basis} band straddles rated output ({th.overloaded_pct:g} %): the motor may be running at or "
            "just above its rating; the readings cannot tell which. Keep an eye on it: a kW reading with a power "
            "analyser narrows the band.", ""),
        "over_service_factor": (
            f"The {basis} band reaches the nameplate's service factor: the motor may be using its service-factor "
            "margin, which is meant for short periods.", ""),
        "near_breakdown": (
            f"The pessimistic breakdown margin is exactly {th.near_breakdown_margin:g}: a deep voltage dip or "
            "load surge could bring the motor close to stalling.", ""),
        "underloaded": (
            f"The {basis} band straddles the underload threshold ({th.underloaded_pct:g} %): the motor may be "
            "oversized for this duty; check the process was at its normal duty when read.", ""),
        "supply_out_of_tolerance": (
            "Supply voltage or frequency is at the edge of the motor's tolerance: in IEC 60034-1 zone B (the "
            "motor may run there but gets hotter than rated; not for long periods), or within the voltmeter's "
            "accuracy of the NEMA MG 1 limits. Ask for the supply to be brought back to rated.", CAUTION_ISOLATE),
        "voltage_unbalance": (
            f"Voltage unbalance is exactly {th.voltage_unbalance_pct:g} % (NEMA definition), where derating "
            "starts.", ""),
        "current_unbalance": (
            f"Current unbalance is exactly {th.current_unbalance_pct:g} %: look at the supply unbalance and the "
            "connections at the next stop.", CAUTION_ISOLATE),
        "starting_torque_low": (
            f"Locked-rotor torque at the measured voltage is {th.starting_margin:g} times the breakaway torque "
            "at the central load but less at the top of the load band: a restart under full load on a weak "
            "supply may be slow.", ""),
    }
    return texts[code]


#: The flag codes of the commissioning sheet's tests (engine 1.2.0), worded by :func:`sheet_text`.
SHEET_CODES = ("insulation_low", "polarization_index_low", "winding_resistance_unbalance", "overload_setting_high",
               "overload_setting_low", "vibration_high", "rotation_wrong", "instrument_calibration_expired")


def describe(combinations, th: Thresholds):
    """Flag codes and findings for each distinct combination mask.

    Parameters
    ----------
    combinations : sequence of int
        Distinct values of :func:`slipwise.physics.flags.combination_mask`.
    th : Thresholds

    Returns
    -------
    codes : list of tuple of str
        Per combination.
    findings : list of list of dict
        ``{"flag", "text", "caution", "state"}`` per combination: first the
        flags ("beyond"), then the codes "at the limit" (see
        :func:`limit_codes`), each with its ``state``, then the notes of
        :func:`slipwise.engine.energy.energy_findings` (state "note").
    """
    codes, findings = [], []
    for m in combinations:
        row_codes, out, drive, at_sync = decode_combination(m)
        limits, sf_assumed = decode_extra(m)
        facts = decode_test_facts(m)
        relay = {"star_delta": facts["star_delta"], "nema": facts["nema"]}
        codes.append(row_codes)
        row = []
        for c in row_codes:
            if c in SHEET_CODES:
                text, caution = sheet_text(c, th, **relay)
            else:
                text, caution = finding_text(c, th, out, drive, at_sync)
            if c == "overloaded" and sf_assumed:
                text += SF_ASSUMED_TEXT
            row.append({"flag": c, "text": text, "caution": caution, "state": "beyond"})
        for c in limits:
            if c in SHEET_CODES:
                text, caution = sheet_limit_text(c, th, **relay)
            else:
                text, caution = limit_text(c, th, drive)
            if c == "overloaded" and sf_assumed:
                text += SF_ASSUMED_TEXT
            row.append({"flag": c, "text": text, "caution": caution, "state": "at_limit"})
        if facts["test_voltage_off"]:
            row.append({"flag": "insulation_test_voltage", "text": TEST_VOLTAGE_TEXT, "caution": CAUTION_INSULATION,
                        "state": "at_limit"})
        row += energy_findings(m, th)   # issue 11: right-sizing notes
        findings.append(row)
    return codes, findings


def limit_codes(combinations) -> list:
    """The flag codes "at the limit" of each distinct combination mask (tuples of str)."""
    return [decode_extra(m)[0] for m in combinations]


def findings_text(findings) -> str:
    """The ``findings`` cell of a record: the finding texts, in flag order, joined by `` | ``."""
    return SEPARATOR.join(f.get("text", "") for f in findings or ())


def cautions_text(findings) -> str:
    """The ``cautions`` cell of a record: each distinct caution once, in flag order, joined by `` | ``."""
    return SEPARATOR.join(dict.fromkeys(f["caution"] for f in findings or () if f.get("caution")))
