"""Energy and running cost of the operating point, and the right-sizing candidate (issue 11).

Orchestration only: every formula is in :mod:`slipwise.physics.energy` and
:mod:`slipwise.physics.right_sizing`. The pipeline calls :func:`energy_columns`
once per chunk with its arrays; this module returns the result columns and the
combination-mask bits the findings are worded from (:func:`energy_findings`).

The rule for a candidate (documented, overridable by ``Thresholds.right_size_load_pct``):

* **underloaded for its rating**: the top of the load band is below 75 % of rated
  output. US DOE, "Determining Electric Motor Load and Efficiency": motors are
  designed to run at 50-100 % of rated load, best efficiency near 75 %; the
  common aim of running a motor at 75-100 % of its rating is common practice; or
* **less efficient than a new motor**: the top of the efficiency band is below the
  IE3 minimum (IEC 60034-30-1) of the replacement;

and in either case the top of the load band is at or below rated output: an
overloaded motor's matter is the overload, and no larger motor is offered.

The replacement is the smallest standard rating that carries the top of the
load band at no more than its rating (:func:`slipwise.physics.right_sizing.right_size_rated_kw`),
bought to IE3 (the legal floor for most ratings in the EU, Regulation 2019/1781)
at its class minimum. On a fan or pump fed from the mains the new motor slips
less and turns the load faster, and the load takes power by the cube of speed
(affinity laws): the savings are reckoned with that speed rise (the speed trap),
and a finding says so when the rise eats them. On a drive the speed is the
drive's, so no speed rise is reckoned.
"""

from __future__ import annotations

import numpy as np

from ..physics import energy, right_sizing
from ..physics.flags import Thresholds
from .verdicts import TEST_VOLTAGE_BIT

#: Mask bits above the verdicts' own (findings are built once per distinct mask).
RIGHT_SIZE_BIT = TEST_VOLTAGE_BIT + 1          # a right-sizing candidate with savings (above the sheet's facts)
SPEED_RISE_BIT = TEST_VOLTAGE_BIT + 2          # its savings reckoned with a fan/pump speed rise
SPEED_TRAP_BIT = TEST_VOLTAGE_BIT + 3          # candidate whose savings the speed rise ate
assert SPEED_TRAP_BIT < 63
#: The class a replacement is sized to.
REPLACEMENT_CLASS = "IE3"


def energy_columns(th: Thresholds, *, rated_kw, poles, rated_frequency_hz, load_pu, load_low_pu, load_high_pu,
                   efficiency_pu, efficiency_low_pu, efficiency_high_pu, measured_input_kw, measured_input_accuracy_pct,
                   speed_rpm, sync_speed_rpm, on_drive, variable_torque, hours_h, price_per_kwh, consistent=True):
    """Energy result columns and the extra mask bits for valid rows.

    Parameters
    ----------
    rated_kw : array
        Present motor's rated output [kW].
    load_pu, load_low_pu, load_high_pu : array
        Fused load and its band [pu of rated output].
    efficiency_pu, efficiency_low_pu, efficiency_high_pu : array
        Efficiency at that load and its band [pu].
    measured_input_kw, measured_input_accuracy_pct : array
        Electrical input as read (power meter, else V I PF) [kW] and its
        accuracy [% of reading]; NaN where not read.
    speed_rpm, sync_speed_rpm : array
        Measured and synchronous speed [rpm].
    on_drive, variable_torque : array of bool
    hours_h, price_per_kwh : array
        Running hours a year [h] and energy price [currency/kWh]; NaN where
        neither the reading nor the site gives one.
    consistent : array of bool, optional
        The load methods agree: a reading to be taken again proposes no
        replacement.

    Returns
    -------
    columns : dict of str -> array
        ``input_power_kw`` (and band), ``annual_energy_kwh``,
        ``annual_energy_cost``, ``right_size_rated_kw``,
        ``right_size_efficiency_pct``, ``right_size_savings_kwh``.
    bits : array of int64
        :data:`RIGHT_SIZE_BIT`, :data:`SPEED_RISE_BIT`, :data:`SPEED_TRAP_BIT`.
    """
    out_kw, out_lo, out_hi = (np.asarray(x, dtype=float) * rated_kw for x in (load_pu, load_low_pu, load_high_pu))
    power = energy.input_power(out_kw, out_lo, out_hi, efficiency_pu, efficiency_low_pu, efficiency_high_pu,
                               measured_input_kw, measured_input_accuracy_pct)
    year = energy.annual_energy(power, hours_h, price_per_kwh)

    sized = right_sizing.right_sizing(out_kw, out_lo, out_hi, efficiency_pu, efficiency_low_pu, efficiency_high_pu,
                                      poles, rated_frequency_hz, hours_h, ie_class=REPLACEMENT_CLASS)
    eta_new_pu = np.asarray(sized.right_size_efficiency_pct, dtype=float) / 100.0
    # the speed trap: a fan or pump on the mains turns faster behind a motor that slips less
    trap_rows = np.asarray(variable_torque, dtype=bool) & ~np.asarray(on_drive, dtype=bool)
    new_slip = right_sizing.typical_rated_slip_pu(eta_new_pu)
    new_speed = right_sizing.variable_torque_speed_rpm(out_kw, speed_rpm, sync_speed_rpm,
                                                       sized.right_size_rated_kw, new_slip)
    with_speed = energy.right_size_savings_with_speed_kwh(out_kw, speed_rpm, new_speed, hours_h,
                                                          efficiency_pu, eta_new_pu)
    signed = np.where(trap_rows, with_speed, sized.right_size_savings_kwh)
    reported, eaten = energy.savings_to_report_kwh(signed)
    reported = energy.savings_within_use_kwh(reported, year.annual_energy_kwh)

    underloaded = np.asarray(load_high_pu, dtype=float) * 100.0 < th.right_size_load_pct
    inefficient = np.asarray(efficiency_high_pu, dtype=float) < eta_new_pu
    # an overloaded motor's matter is its overload, not its energy: never a candidate (no larger motor is offered)
    within_rating = np.asarray(load_high_pu, dtype=float) <= 1.0
    candidate = (underloaded | inefficient) & within_rating & np.asarray(consistent, dtype=bool) \
        & np.isfinite(sized.right_size_rated_kw)
    rated_new = np.where(candidate, sized.right_size_rated_kw, np.nan)
    columns = {
        "input_power_kw": power.input_power_kw, "input_power_low_kw": power.input_power_low_kw,
        "input_power_high_kw": power.input_power_high_kw,
        "annual_energy_kwh": year.annual_energy_kwh, "annual_energy_cost": year.annual_energy_cost,
        "right_size_rated_kw": rated_new,
        "right_size_efficiency_pct": np.where(candidate, sized.right_size_efficiency_pct, np.nan),
        "right_size_savings_kwh": np.where(candidate, reported, np.nan),
    }
    # a finding where there is something to say: savings (or no hours to reckon them with), or eaten savings
    saves = candidate & ~np.asarray(eaten, dtype=bool) & ~(np.asarray(reported) == 0.0)
    bits = (saves.astype(np.int64) << RIGHT_SIZE_BIT) \
        | ((saves & trap_rows).astype(np.int64) << SPEED_RISE_BIT) \
        | ((candidate & trap_rows & np.asarray(eaten, dtype=bool)).astype(np.int64) << SPEED_TRAP_BIT)
    return columns, bits


#: The finding code of a right-sizing candidate (a note: it does not change the verdict, and is not a flag).
RIGHT_SIZE_FINDING = "right_size_candidate"

_RIGHT_SIZE_TEXT = (
    "A smaller or more efficient motor would carry this load in its efficient range: right_size_rated_kw is the "
    "smallest standard rating that carries the top of the load band at no more than its rating, "
    "right_size_efficiency_pct its IE3 minimum (IEC 60034-30-1), right_size_savings_kwh the energy it would "
    "save a year at the running hours given (blank without them). The rule: a motor running below {pct:g} % of "
    "its rating (US DOE: designed for 50-100 %, best near 75 %; the aim of 75-100 % is common practice), or "
    "less efficient than a new IE3 motor, is a candidate. Check the duty was normal when read and that a "
    "peak or starting duty does not need the present rating.")
_SPEED_RISE_TEXT = (
    " On this fan or pump the new motor slips less and turns the load faster, and the load takes power by the "
    "cube of speed: the savings shown allow for that rise.")
_SPEED_TRAP_TEXT = (
    "A new IE3 motor would slip less and turn this fan or pump faster; the load takes power by the cube of "
    "speed, and the extra power eats the efficiency gain: no savings are reckoned (right_size_savings_kwh 0) "
    "unless the speed is brought back (impeller trim, pulley or a drive).")
_REPLACEMENT_CAUTION = (
    "A motor is changed by qualified persons with the circuit isolated, locked off and proved dead; size its "
    "protection and cables for the new nameplate; local electrical codes and licensed practice prevail.")


def energy_findings(mask: int, th: Thresholds) -> list[dict]:
    """The notes of one combination mask: right-sizing candidate and speed trap (``state`` "note")."""
    m = int(mask)
    out = []
    if m >> RIGHT_SIZE_BIT & 1:
        text = _RIGHT_SIZE_TEXT.format(pct=th.right_size_load_pct)
        if m >> SPEED_RISE_BIT & 1:
            text += _SPEED_RISE_TEXT
        out.append({"flag": RIGHT_SIZE_FINDING, "text": text, "caution": _REPLACEMENT_CAUTION, "state": "note"})
    if m >> SPEED_TRAP_BIT & 1:
        out.append({"flag": RIGHT_SIZE_FINDING, "text": _SPEED_TRAP_TEXT, "caution": "", "state": "note"})
    return out
