"""Verdicts on the band: each judged quantity's state, the flags, and one word per reading.

Every judged quantity gets a state on the scale of :mod:`slipwise.physics.verdict`
(``NOT_JUDGED``, ``CLEAR``, ``AT_LIMIT``, ``BEYOND``), judged on its band, not on
its central value:

* clear: the whole band is on the safe side of the threshold;
* at the limit: the band straddles the threshold;
* beyond: the whole band is past it.

The helpers :func:`~slipwise.physics.verdict.judge_maximum` and
:func:`~slipwise.physics.verdict.judge_minimum` judge a value with one band end;
judging *a band* passes the favourable end as the value and the unfavourable one
as the band end (overload: ``judge_maximum(load_low, load_high, limit)``, so
"beyond" means even the low end is above the limit).

Safety-side quantities are judged on their pessimistic end alone: the breakdown
margin's low end (:func:`slipwise.physics.torque_speed.breakdown_margin_band`)
below the threshold is already "beyond" (``near_breakdown``), since a motor that
may stall must not wait for its central value to say so.

A flag code in ``flags`` means its quantity is "beyond" (as before); the codes
whose quantity is "at the limit" go to ``limit_flags``. The reading's ``verdict``
is one word of :data:`VERDICT_WORDS`.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..physics import supply
from ..physics import verdict as V
from ..physics.flags import FLAG_ORDER, Thresholds

#: The verdict words, in the order of precedence a reading takes the first that applies
#: (``act`` before ``retake``: a supply or safety fact found beyond is never hidden
#: behind a request to read again).
VERDICT_WORDS = ("act", "retake", "watch", "sound")
_VERDICT_TEXT = np.array(VERDICT_WORDS, dtype=object)
#: State words of the per-quantity columns, by state code (not judged: blank).
STATE_WORDS = np.array(["", "clear", "at_limit", "beyond"], dtype=object)
#: The per-quantity state columns.
STATE_COLUMNS = ("load_state", "breakdown_state", "supply_state", "voltage_unbalance_state",
                 "current_unbalance_state", "starting_state")
#: Flags whose "beyond" asks for action (safety or supply); underloaded (energy) does not. The sheet's
#: tests (engine 1.2.0): a winding, relay, vibration or rotation beyond its criterion is put right (or
#: decided by an engineer) before the motor is signed off.
ACT_FLAGS = ("overloaded", "over_service_factor", "near_breakdown", "supply_out_of_tolerance",
             "voltage_unbalance", "current_unbalance", "starting_torque_low",
             "insulation_low", "polarization_index_low", "winding_resistance_unbalance", "overload_setting_high",
             "overload_setting_low", "vibration_high", "rotation_wrong")
#: Flags whose "beyond" asks for the readings again: an instrument out of calibration makes its
#: readings no evidence.
RETAKE_FLAGS = ("instrument_calibration_expired",)
#: Bits of the combination mask above :func:`slipwise.physics.flags.combination_mask`'s own (the flags,
#: 3 bits of outlier, drive, synchronous): one per flag code "at the limit", then "no service factor on
#: the nameplate, 1.0 assumed", then facts the sheet's words need.
LIMIT_SHIFT = len(FLAG_ORDER) + 6
SF_ASSUMED_BIT = LIMIT_SHIFT + len(FLAG_ORDER)
STAR_DELTA_BIT = SF_ASSUMED_BIT + 1       # the overload relay sits in a star-delta starter's winding circuit
NEMA_RELAY_BIT = SF_ASSUMED_BIT + 2       # the overload setting was judged by NEC 430.32 (NEMA nameplate)
TEST_VOLTAGE_BIT = SF_ASSUMED_BIT + 3     # the insulation test voltage is outside IEEE 43 Table 1
assert TEST_VOLTAGE_BIT < 63


@dataclass(frozen=True)
class States:
    """What :func:`judge` gives: flag arrays ("beyond"), the extra mask bits, result columns."""

    flags: dict
    extra_bits: np.ndarray
    columns: dict


def supply_state(zone_code, is_nema, on_drive, v_dev, f_dev, voltage_accuracy_pct):
    """State of the supply against the motor's tolerance.

    IEC 60034-1 (design N, H and unknown): zone A clear, zone B at the limit
    (allowed, with a higher temperature rise, not for long periods), outside
    zone B beyond. NEMA MG 1 (designs A-D) has one running tolerance: the
    voltage deviation's band is the voltmeter accuracy either side; clear when
    the whole band is inside the tolerance, beyond when the whole band is
    outside, at the limit when it straddles. Not judged on a drive or without
    a voltage reading.
    """
    zone_code = np.asarray(zone_code)
    iec = np.select([zone_code == 1, zone_code == 2, zone_code == 3], [V.CLEAR, V.AT_LIMIT, V.BEYOND], V.NOT_JUDGED)
    dv = np.asarray(v_dev, dtype=float)
    acc = np.asarray(voltage_accuracy_pct, dtype=float)
    near = np.sign(dv) * np.maximum(np.abs(dv) - acc, 0.0)
    far = np.sign(dv) * (np.abs(dv) + acc)
    inside_far = supply.within_nema_tolerance(far, f_dev)
    inside_near = supply.within_nema_tolerance(near, f_dev)
    nema = np.where(inside_far, V.CLEAR, np.where(inside_near, V.AT_LIMIT, V.BEYOND))
    nema = np.where(np.isnan(dv) | np.isnan(np.asarray(f_dev, dtype=float)), V.NOT_JUDGED, nema)
    return np.where(on_drive, V.NOT_JUDGED, np.where(is_nema, nema, iec)).astype(int)


def judge(th: Thresholds, *, above, at_sync, consistent, basis_low, basis_high, under_low, under_high,
          service_factor, sf_given, margin_low, unstable, zone_code, is_nema, on_drive, v_dev, f_dev,
          voltage_accuracy_pct, vu, iu, starting, starting_low, needs_breakaway, tests=None,
          test_facts=None) -> States:
    """States, flags and verdict of valid rows.

    Parameters
    ----------
    basis_low, basis_high : array
        Band of the judged load [% of rated output]; on a drive the torque
        band [% of rated torque].
    under_low, under_high : array
        The band underload is judged on (on a drive with a fan or pump, the
        torque projected to rated speed) [%].
    service_factor : array
        Nameplate service factor [-] (1.0 where not given).
    sf_given : array of bool
        The nameplate gives a service factor: ``over_service_factor`` is
        judged only then (a defaulted 1.0 would repeat ``overloaded``).
    margin_low : array
        Pessimistic end of the breakdown margin [-].
    starting, starting_low : array
        Starting margin, central and at the top of the load band [-].
    tests : dict of str -> array, optional
        The sheet's tests: state per flag code (:func:`slipwise.engine.sheet.judge_tests`).
    test_facts : dict of str -> array of bool, optional
        ``star_delta``, ``nema``, ``test_voltage_off``: facts the words of the tests need.
    Other parameters are the pipeline's arrays of the same name.
    """
    not_above = ~np.asarray(above, dtype=bool)
    over = V.judge_maximum(basis_low, basis_high, th.overloaded_pct)
    over_sf = np.where(sf_given, V.judge_maximum(basis_low, basis_high, 100.0 * np.asarray(service_factor)),
                       V.NOT_JUDGED)
    under = V.judge_minimum(under_high, under_low, th.underloaded_pct)
    breakdown = V.judge_minimum(margin_low, margin_low, th.near_breakdown_margin)
    breakdown = np.where(not_above & unstable, V.BEYOND, np.where(not_above, breakdown, V.NOT_JUDGED))
    supply_st = supply_state(zone_code, is_nema, on_drive, v_dev, f_dev, voltage_accuracy_pct)
    v_unb = V.judge_maximum(vu, vu, th.voltage_unbalance_pct)
    i_unb = V.judge_maximum(iu, iu, th.current_unbalance_pct)
    start = np.where(needs_breakaway, V.judge_minimum(starting, starting_low, th.starting_margin), V.NOT_JUDGED)
    inconsistent = not_above & ~np.asarray(consistent, dtype=bool)

    by_code = {"overloaded": over, "over_service_factor": over_sf, "near_breakdown": breakdown,
               "underloaded": under, "supply_out_of_tolerance": supply_st, "voltage_unbalance": v_unb,
               "current_unbalance": i_unb, "starting_torque_low": start}
    n = len(not_above)
    for code in FLAG_ORDER:
        if code in ACT_FLAGS + RETAKE_FLAGS and code not in by_code:
            by_code[code] = np.asarray((tests or {}).get(code, np.full(n, V.NOT_JUDGED)), dtype=int)
    flags = {code: state == V.BEYOND for code, state in by_code.items()}
    flags["speed_above_synchronous"] = np.asarray(above, dtype=bool)
    flags["readings_inconsistent"] = inconsistent
    flags = {code: flags[code] for code in FLAG_ORDER}

    extra = np.zeros(len(not_above), dtype=np.int64)
    for bit, code in enumerate(FLAG_ORDER):
        if code in by_code:
            extra |= (by_code[code] == V.AT_LIMIT).astype(np.int64) << (LIMIT_SHIFT + bit)
    sf_assumed = ~np.asarray(sf_given, dtype=bool) & (over >= V.AT_LIMIT)
    extra |= sf_assumed.astype(np.int64) << SF_ASSUMED_BIT
    facts = test_facts or {}
    for key, bit in (("star_delta", STAR_DELTA_BIT), ("nema", NEMA_RELAY_BIT), ("test_voltage_off", TEST_VOLTAGE_BIT)):
        if key in facts:
            extra |= np.asarray(facts[key], dtype=bool).astype(np.int64) << bit

    act = np.asarray(above, dtype=bool) & ~np.asarray(at_sync, dtype=bool)   # generating on a loaded shaft
    for code in ACT_FLAGS:
        act = act | flags[code]
    retake = inconsistent.copy()
    for code in RETAKE_FLAGS:
        retake = retake | flags[code]
    watch = flags["underloaded"] | np.asarray(at_sync, dtype=bool)
    for state in by_code.values():
        watch = watch | (state == V.AT_LIMIT)
    if "test_voltage_off" in facts:   # an insulation reading not comparable with IEEE 43's minimums
        watch = watch | np.asarray(facts["test_voltage_off"], dtype=bool)
    verdict = _VERDICT_TEXT[np.where(act, 0, np.where(retake, 1, np.where(watch, 2, 3)))]

    load_state = np.maximum(np.maximum(over, over_sf), under)
    columns = {"verdict": verdict}
    for name, state in zip(STATE_COLUMNS, (load_state, breakdown, supply_st, v_unb, i_unb, start)):
        columns[name] = STATE_WORDS[np.asarray(state, dtype=int)]
    return States(flags, extra, columns)


def decode_extra(mask: int) -> tuple[tuple[str, ...], bool]:
    """The flag codes "at the limit" and whether a service factor of 1.0 was assumed, from a mask."""
    m = int(mask)
    limit = tuple(code for bit, code in enumerate(FLAG_ORDER) if m >> (LIMIT_SHIFT + bit) & 1)
    return limit, bool(m >> SF_ASSUMED_BIT & 1)


def decode_test_facts(mask: int) -> dict:
    """``star_delta``, ``nema``, ``test_voltage_off`` from a mask (see :data:`STAR_DELTA_BIT`)."""
    m = int(mask)
    return {"star_delta": bool(m >> STAR_DELTA_BIT & 1), "nema": bool(m >> NEMA_RELAY_BIT & 1),
            "test_voltage_off": bool(m >> TEST_VOLTAGE_BIT & 1)}
