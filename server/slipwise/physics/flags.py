"""Flags, their thresholds, and the plain-language findings that go with them.

Findings are built once per distinct combination of flags (a bit mask), not
once per row, so a batch of a million readings costs a handful of strings.
"""

from __future__ import annotations

from dataclasses import dataclass, fields

import numpy as np

FLAG_ORDER = (
    "speed_above_synchronous", "overloaded", "over_service_factor", "near_breakdown", "underloaded",
    "supply_out_of_tolerance", "voltage_unbalance", "current_unbalance", "readings_inconsistent",
    "starting_torque_low",
)


@dataclass(frozen=True)
class Thresholds:
    """Flag thresholds. Every one can be overridden.

    Attributes
    ----------
    underloaded_pct : float
        Load below which a motor is flagged underloaded [% of rated]; 40 %
        is common practice (efficiency and power factor fall off below it;
        US DOE motor fact sheets use the same figure).
    overloaded_pct : float
        Load above which a motor is flagged overloaded [% of rated]: rated
        output (IEC 60034-1 / NEMA MG 1 duty S1).
    near_breakdown_margin : float
        Breakdown torque over operating torque below which the point is
        flagged near breakdown [-]; 1.5 is common practice (a 15-20 % voltage
        dip cuts breakdown torque by 28-36 %).
    voltage_unbalance_pct : float
        NEMA voltage unbalance above which the supply is flagged [%]: NEMA
        MG 1 derating starts at 1 %.
    current_unbalance_pct : float
        Current unbalance above which it is flagged [%]; 10 % is common
        practice (current unbalance runs 6-10 times the voltage unbalance).
    inconsistency_factor : float
        Multiplier on the combined bands of two load methods before their
        disagreement is flagged [-].
    starting_margin : float
        Locked-rotor torque over the breakaway torque the load needs, below
        which a load that needs breakaway torque is flagged [-]; 1.3 is
        common practice (it covers a 10 % voltage dip at start, 0.9^2 = 0.81).
    """

    underloaded_pct: float = 40.0
    overloaded_pct: float = 100.0
    near_breakdown_margin: float = 1.5
    voltage_unbalance_pct: float = 1.0
    current_unbalance_pct: float = 10.0
    inconsistency_factor: float = 1.0
    starting_margin: float = 1.3

    #: allowed ranges for overrides
    RANGES = {
        "underloaded_pct": (0.0, 100.0), "overloaded_pct": (50.0, 200.0),
        "near_breakdown_margin": (1.0, 5.0), "voltage_unbalance_pct": (0.1, 10.0),
        "current_unbalance_pct": (1.0, 50.0), "inconsistency_factor": (0.25, 5.0),
        "starting_margin": (1.0, 3.0),
    }

    @classmethod
    def names(cls) -> tuple[str, ...]:
        return tuple(f.name for f in fields(cls))

    def validate(self) -> list[tuple[str, str]]:
        """``(field, message)`` for each value outside its allowed range."""
        bad = []
        for name in self.names():
            value = getattr(self, name)
            lo, hi = self.RANGES[name]
            if not (isinstance(value, (int, float)) and np.isfinite(value) and lo <= value <= hi):
                bad.append((name, f"{name} must be a number from {lo:g} to {hi:g}"))
        if self.underloaded_pct >= self.overloaded_pct:
            bad.append(("underloaded_pct", "underloaded_pct must be below overloaded_pct"))
        return bad


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


def combination_mask(flag_arrays: dict, outlier, on_drive, at_synchronous=None) -> np.ndarray:
    """One integer per row encoding its flags, the disagreeing method and the supply.

    Parameters
    ----------
    flag_arrays : dict of str -> array of bool
        One boolean array per code of :data:`FLAG_ORDER`.
    outlier : array of int
        Method index that disagrees (see :func:`load.fuse`), -1 none, -2 ambiguous.
    on_drive : array of bool
    at_synchronous : array of bool, optional
        Speed equal to synchronous within the tachometer's resolution.
    """
    n = len(next(iter(flag_arrays.values())))
    mask = np.zeros(n, dtype=np.int64)
    for bit, code in enumerate(FLAG_ORDER):
        mask |= np.asarray(flag_arrays[code], dtype=bool).astype(np.int64) << bit
    mask |= (np.asarray(outlier, dtype=np.int64) + 2) << len(FLAG_ORDER)
    mask |= np.asarray(on_drive, dtype=bool).astype(np.int64) << (len(FLAG_ORDER) + 3)
    if at_synchronous is not None:
        mask |= np.asarray(at_synchronous, dtype=bool).astype(np.int64) << (len(FLAG_ORDER) + 4)
    return mask


def describe(combinations, th: Thresholds):
    """Flag codes and findings for each distinct combination mask.

    Parameters
    ----------
    combinations : sequence of int
        Distinct values of :func:`combination_mask`.
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
        m = int(m)
        row_codes = tuple(code for bit, code in enumerate(FLAG_ORDER) if m >> bit & 1)
        out = ((m >> len(FLAG_ORDER)) & 0b111) - 2
        drive = bool(m >> (len(FLAG_ORDER) + 3) & 1)
        at_sync = bool(m >> (len(FLAG_ORDER) + 4) & 1)
        codes.append(row_codes)
        findings.append([dict(zip(("flag", "text", "caution"), (c,) + finding_text(c, th, out, drive, at_sync)))
                         for c in row_codes])
    return codes, findings
