"""The commissioning sheet's tests: their fields parsed, then judged by the physics (no formula here).

Insulation resistance and polarization index (:mod:`slipwise.physics.insulation`, IEEE 43-2013),
winding resistance balance (:mod:`slipwise.physics.winding`), overload relay setting
(:mod:`slipwise.physics.protection`, NEC 430.32(A)(1) / IEC practice), vibration zone
(:mod:`slipwise.physics.vibration`, ISO 10816-3 / 10816-1), direction of rotation
(:mod:`slipwise.physics.rotation`) and the instruments' calibration dates. Every test is optional:
a test not taken is not judged (its state blank). Each gives result columns, a state on the verdict
scale (:mod:`slipwise.physics.verdict`) and, through its state, a flag code ("beyond") or a limit
code ("at the limit"); the words are in :mod:`.findings`.
"""

from __future__ import annotations

import datetime as _dt
from typing import Any, Mapping

import numpy as np
import pandas as pd

from .. import contract as C
from ..contract.cells import instrument_list
from ..physics import insulation, protection, rotation, vibration, winding
from ..physics import verdict as V
from ..physics.flags import Thresholds
from .inputs import Parsed, RowErrors, choice_column, column, filled, number_columns

#: The state column of each test, and the flag code its state "beyond" raises.
TEST_STATES = {
    "insulation_state": "insulation_low",
    "polarization_index_state": "polarization_index_low",
    "winding_resistance_state": "winding_resistance_unbalance",
    "vibration_state": "vibration_high",
    "rotation_state": "rotation_wrong",
    "instruments_state": "instrument_calibration_expired",
}
_STATE_WORDS = np.array(["", "clear", "at_limit", "beyond"], dtype=object)


def parse_tests(cols: Mapping[str, Any], n: int, errors: RowErrors) -> Parsed:
    """The sheet's fields per row: numbers (NaN blank), choices (declared code, default applied), text."""
    t = Parsed()
    number_columns(C.READING_TEST_NUMBERS, cols, n, errors, t)
    for spec in C.READING_CHOICES:
        raw = column(cols, spec.name, n)
        if raw is None and spec.default:
            t[spec.name] = filled(n, spec.default)   # an absent column: its default on every row
            continue
        values = choice_column(raw, n, spec, errors)
        t[spec.name] = np.where(values == "", spec.default or "", values).astype(object) if spec.default else values
    for name in C.READING_TEXTS:
        raw = column(cols, name, n)
        if raw is None:
            t[name] = filled(n, "")
        else:
            values, messages = C.parse_column(name, raw)
            errors.add(messages != "", name, lambda i, m=messages: m[i])
            t[name] = values
    # a value that cannot be judged without another: refused naming the missing field
    for spec in C.READING_TEST_NUMBERS:
        if spec.needs and np.isnan(t[spec.name]).all():
            continue          # no value, nothing needed (the common batch without this test)
        for other in spec.needs:
            missing = _blank(t[other])
            errors.add(~np.isnan(t[spec.name]) & missing, other,
                       lambda i, s=spec, o=other: f"{o} is required with {s.name} "
                                                  f"({C.NUMBER_FIELDS[o].range_text() if o in C.NUMBER_FIELDS else C.CHOICE_FIELDS[o].range_text()})")
    return t


def _blank(values) -> np.ndarray:
    arr = np.asarray(values)
    if arr.dtype.kind == "f":
        return np.isnan(arr)
    return arr == ""


def reading_dates(taken_at, n: int) -> np.ndarray:
    """The reading's calendar date per row (``datetime.date``): the date written in ``taken_at``; today
    (the date of receipt) where it is blank or not an ISO date."""
    today = _dt.date.today()
    if taken_at is None:
        return filled(n, today)
    codes, uniques = C.distinct_values(taken_at)
    out = []
    for v in uniques:
        try:
            out.append(_dt.date.fromisoformat(str(v).strip()[:10]))
        except ValueError:
            out.append(today)
    return np.array(out + [today], dtype=object)[codes]


def _instruments(text: np.ndarray, dates: np.ndarray):
    """(names of instruments whose calibration was due before the reading's date, state) per row."""
    # decided once per distinct (date, text) pair, coded from the two columns' own codes
    day_codes, days = C.distinct_values(dates)
    text_codes, texts = C.distinct_values(text)
    if (day_codes < 0).any() or (text_codes < 0).any():      # a missing value: keyed by its text
        codes, uniques = C.distinct_values([f"{d.isoformat()}\n{x}" for x, d in zip(text, dates)])
        pairs = [key.partition("\n")[::2] for key in uniques]
    else:
        codes, uniques = C.distinct_values(day_codes.astype(np.int64) * len(texts) + text_codes)
        pairs = [(days[k // len(texts)].isoformat(), str(texts[k % len(texts)])) for k in uniques]
    names, states = [], []
    for day, value in pairs:
        items = instrument_list(value)
        late = [f"{name} ({serial}, due {due})" for name, serial, due in items if due < day]
        names.append("; ".join(late))
        states.append(V.NOT_JUDGED if not items else V.BEYOND if late else V.CLEAR)
    return np.array(names, dtype=object)[codes], np.array(states, dtype=int)[codes]


#: The fields whose value makes a row carry a sheet test; a row with none of them has every test
#: not judged (the choices alone, such as ``starter`` or ``foundation``, judge nothing).
_TEST_INPUT_NUMBERS = tuple(spec.name for spec in C.READING_TEST_NUMBERS)
_TEST_INPUT_TEXTS = ("rotation_correct", "instruments")
_TEST_FIELDS = _TEST_INPUT_NUMBERS + tuple(spec.name for spec in C.READING_CHOICES) + ("instruments",)


def rows_with_tests(t: Parsed) -> np.ndarray:
    """Per row: does it carry any sheet test (a test number, a direction of rotation, instruments)?"""
    n = len(t[_TEST_INPUT_NUMBERS[0]])
    has = np.zeros(n, dtype=bool)
    for name in _TEST_INPUT_NUMBERS:
        has |= ~np.isnan(t[name])
    for name in _TEST_INPUT_TEXTS:
        has |= t[name] != ""
    return has


#: The judged pattern of one row without tests, by thresholds (see :func:`judge_tests`); a few kept.
_UNTESTED: dict = {}
_UNTESTED_KEPT = 16


def forget_untested() -> None:
    """Forget the kept patterns of rows without tests."""
    _UNTESTED.clear()


def judge_tests(t: Parsed, pl, th: Thresholds, dates: np.ndarray) -> tuple[dict, dict, dict]:
    """Result columns, states by flag code, and extra facts for the words, for valid rows.

    ``pl(name)`` gives a nameplate value per row (``rated_voltage_v``, ``rated_current_a``,
    ``rated_kw``, ``is_nema``, ``service_factor``, ``service_factor_given``).

    Only the rows that carry a test are judged; a row without any gives what judging it gives
    (every number NaN, every state not judged, every text blank, whatever its nameplate): the
    values of one such row judged with the others, repeated.
    """
    n = len(dates)
    has = rows_with_tests(t)
    if has.all():
        return _judge_tests(t, pl, th, dates)
    # the rows with tests and one row without (the pattern every other row repeats)
    take = np.append(np.flatnonzero(has), np.argmin(has))
    tested = take[:-1]
    parts = _UNTESTED.get(th) if not tested.size else None
    if parts is None:
        sub = Parsed({k: t[k][take] for k in _TEST_FIELDS})
        parts = _judge_tests(sub, lambda name: np.asarray(pl(name))[take], th, dates[take])
        if not tested.size:
            # a row without tests judges the same whatever its nameplate: kept for the next such reading
            # (one submission at a time), one pattern per set of thresholds
            if len(_UNTESTED) >= _UNTESTED_KEPT:
                _UNTESTED.clear()
            _UNTESTED[th] = parts

    def spread(values):
        out = filled(n, values[-1], values.dtype)
        out[tested] = values[:-1]
        return out
    return tuple({k: spread(np.asarray(v)) for k, v in part.items()} for part in parts)


def _judge_tests(t: Parsed, pl, th: Thresholds, dates: np.ndarray) -> tuple[dict, dict, dict]:
    """:func:`judge_tests` on every row given."""
    n = len(dates)
    ins = insulation.insulation(
        t["insulation_resistance_1min_mohm"], t["winding_temperature_c"], t["winding_type"], t["insulation_class"],
        pl("rated_voltage_v"), ir_10min_mohm=t["insulation_resistance_10min_mohm"],
        test_voltage_v=t["insulation_test_voltage_v"], made_before_1970=t["winding_made_before_1970"] == "yes")
    r12, r23, r31 = (t[f"winding_resistance_{p}_ohm"] for p in ("l12", "l23", "l31"))
    three = ~(np.isnan(r12) | np.isnan(r23) | np.isnan(r31))
    ones = np.ones(n)
    wnd = winding.winding_resistance(np.where(three, r12, ones), np.where(three, r23, ones),
                                     np.where(three, r31, ones), t["winding_temperature_c"],
                                     t["winding_material"], unbalance_limit_pct=th.winding_resistance_unbalance_pct)
    wnd = {k: np.where(three, v, np.nan if k != "winding_resistance_unbalance_state" else V.NOT_JUDGED)
           for k, v in wnd.items()}
    sf = np.where(pl("service_factor_given"), pl("service_factor"), np.nan)
    standard = np.where(pl("is_nema"), "nema", "iec")
    setting = t["overload_setting_a"]
    ovl = protection.overload_setting(np.where(np.isnan(setting), 1.0, setting), pl("rated_current_a"),
                                      t["starter"], standard, service_factor=sf)
    given = ~np.isnan(setting)
    ovl = {k: np.where(given, v, V.NOT_JUDGED if k.endswith("_state") else np.nan) for k, v in ovl.items()}
    relay_a = protection.relay_current_a(pl("rated_current_a"), t["starter"])
    vib = vibration.vibration(t["vibration_velocity_mm_s"], pl("rated_kw"), t["foundation"])
    rot = rotation.rotation_state(np.where(t["rotation_correct"] == "", None, t["rotation_correct"]))
    late, inst_state = _instruments(t["instruments"], dates)

    tested = ~np.isnan(t["insulation_resistance_1min_mohm"]) | ~np.isnan(t["insulation_test_voltage_v"])
    overload_state = np.maximum(ovl["overload_setting_high_state"], ovl["overload_setting_low_state"])
    states = {
        "insulation_low": ins["insulation_state"],
        "polarization_index_low": ins["polarization_index_state"],
        "winding_resistance_unbalance": wnd["winding_resistance_unbalance_state"],
        "overload_setting_high": ovl["overload_setting_high_state"],
        "overload_setting_low": ovl["overload_setting_low_state"],
        "vibration_high": vib["vibration_state"],
        "rotation_wrong": rot,
        "instrument_calibration_expired": inst_state,
    }
    words = lambda s: _STATE_WORDS[np.asarray(s, dtype=int)]  # noqa: E731
    columns = {
        "insulation_resistance_40c_mohm": ins["insulation_resistance_40c_mohm"],
        "insulation_minimum_mohm": np.where(np.isnan(t["insulation_resistance_1min_mohm"]), np.nan,
                                            ins["insulation_minimum_mohm"]),
        "polarization_index": ins["polarization_index"],
        "winding_resistance_unbalance_pct": wnd["winding_resistance_unbalance_pct"],
        "overload_setting_pct": ovl["overload_setting_pct"],
        "vibration_zone": np.asarray(vib["vibration_zone"], dtype=object),
        "polarization_index_minimum": np.where(np.isnan(ins["polarization_index"]), np.nan,
                                               ins["polarization_index_minimum"]),
        # the suggestion where an insulation test is recorded
        "insulation_test_voltage_min_v": np.where(tested, ins["insulation_test_voltage_min_v"], np.nan),
        "insulation_test_voltage_max_v": np.where(tested, ins["insulation_test_voltage_max_v"], np.nan),
        "winding_resistance_25c_ohm": wnd["winding_resistance_ref_ohm"],
        "overload_setting_max_pct": ovl["overload_setting_max_pct"],
        "overload_relay_current_a": np.where(given, relay_a, np.nan),
        "vibration_zone_bc_mm_s": np.where(np.isnan(t["vibration_velocity_mm_s"]), np.nan,
                                           vib["vibration_zone_bc_mm_s"]),
        "instruments_calibration_expired": late,
        "insulation_state": words(ins["insulation_state"]),
        "polarization_index_state": words(ins["polarization_index_state"]),
        "insulation_test_voltage_state": words(ins["insulation_test_voltage_state"]),
        "winding_resistance_state": words(wnd["winding_resistance_unbalance_state"]),
        "overload_setting_state": words(overload_state),
        "vibration_state": words(vib["vibration_state"]),
        "rotation_state": words(rot),
        "instruments_state": words(inst_state),
    }
    facts = {
        "star_delta": (t["starter"] == "star_delta") & (overload_state >= V.AT_LIMIT),
        "nema": np.asarray(pl("is_nema"), dtype=bool) & (overload_state >= V.AT_LIMIT),
        "test_voltage_off": ins["insulation_test_voltage_state"] == V.AT_LIMIT,
    }
    return columns, states, facts


__all__ = ["parse_tests", "judge_tests", "reading_dates", "TEST_STATES"]
