"""Findings: the plain-language text and safety caution that go with each flag.

The physics decides which flags a reading raises (:mod:`slipwise.physics.flags`);
this module words them. Findings are built once per distinct combination of
flags (a bit mask), not once per row, so a batch of a million readings costs a
handful of strings.
"""

from __future__ import annotations

from ..physics.flags import Thresholds, decode_combination

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
            "Supply voltage or frequency is outside the tolerance the motor is rated for (IEC 60034-1 zone A, "
            "or NEMA MG 1 +-10 % V, +-5 % f, 10 % combined).", CAUTION_ISOLATE),
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
        ``{"flag", "text", "caution"}`` per combination.
    """
    codes, findings = [], []
    for m in combinations:
        row_codes, out, drive, at_sync = decode_combination(m)
        codes.append(row_codes)
        findings.append([dict(zip(("flag", "text", "caution"), (c,) + finding_text(c, th, out, drive, at_sync)))
                         for c in row_codes])
    return codes, findings


def findings_text(findings) -> str:
    """The ``findings`` cell of a record: the finding texts, in flag order, joined by `` | ``."""
    return SEPARATOR.join(f.get("text", "") for f in findings or ())


def cautions_text(findings) -> str:
    """The ``cautions`` cell of a record: each distinct caution once, in flag order, joined by `` | ``."""
    return SEPARATOR.join(dict.fromkeys(f["caution"] for f in findings or () if f.get("caution")))
