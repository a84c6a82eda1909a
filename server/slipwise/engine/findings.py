"""Findings: the plain-language text and safety caution that go with each flag.

The physics decides which flags a reading raises (:mod:`slipwise.physics.flags`);
this module words them. Findings are built once per distinct combination of
flags (a bit mask), not once per row, so a batch of a million readings costs a
handful of strings.
"""

from __future__ import annotations

from ..physics.flags import Thresholds, decode_combination
from .energy import energy_findings
from .verdicts import decode_extra

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
        codes.append(row_codes)
        row = []
        for c in row_codes:
            text, caution = finding_text(c, th, out, drive, at_sync)
            if c == "overloaded" and sf_assumed:
                text += SF_ASSUMED_TEXT
            row.append({"flag": c, "text": text, "caution": caution, "state": "beyond"})
        for c in limits:
            text, caution = limit_text(c, th, drive)
            if c == "overloaded" and sf_assumed:
                text += SF_ASSUMED_TEXT
            row.append({"flag": c, "text": text, "caution": caution, "state": "at_limit"})
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
