"""Records: interpretation results as plain dicts, and the one commissioning-record writer.

Conversion
    :func:`interpret_records` / :func:`interpret_one` give one dict per reading
    (JSON types, None for blank) with ``flags`` a list of codes and
    ``findings`` a list of ``{flag, text, caution}``.

The commissioning record (CSV)
    ``slipwise analyze`` and ``GET /api/v1/export.csv`` both write the result
    part of a row with :func:`result_cells` and the cautions with
    :func:`cautions_cell`, so the two files agree cell for cell:

    * the result columns of the contract, in contract order;
    * ``flags``: the flag codes joined by ``;``;
    * ``findings``: the finding texts, in flag order, joined by `` | `` (the
      flag codes are in ``flags``; the cautions in their own column);
    * ``cautions``: each distinct caution once, joined by `` | ``;
    * a number is written with the decimals of :data:`RESULT_DECIMALS`, the
      one place where digits are set (trailing zeros dropped), blank when
      not given or not applicable;
    * a text cell starting with ``=``, ``+``, ``-``, ``@``, tab or carriage
      return gets a leading ``'`` (:func:`neutralise`; OWASP "CSV Injection").
"""

from __future__ import annotations

import math
from typing import Any, Mapping, Sequence

import numpy as np

from .. import contract as C
from ..physics.flags import Thresholds
from .findings import cautions_text, findings_text
from .inputs import InputError, records_to_columns
from .pipeline import interpret_columns

#: Decimals written per numeric result column: what the readings and methods support
#: (a 1 rpm tachometer, meters of 0.5-2 % accuracy, load bands of several %).
RESULT_DECIMALS: dict[str, int] = {
    "poles": 0,
    "sync_speed_rpm": 1, "slip_rpm": 1,                                 # speeds 0.1 rpm
    "slip_pct": 2,                                                      # 1 rpm in 1500 is 0.07 % slip
    "load_pct": 1, "load_low_pct": 1, "load_high_pct": 1,               # percentages 0.1 %
    "load_slip_pct": 1, "load_current_pct": 1, "load_power_pct": 1,
    "torque_pct": 1, "torque_low_pct": 1, "torque_high_pct": 1, "breakdown_torque_now_pct": 1,
    "efficiency_pct": 1, "efficiency_low_pct": 1, "efficiency_high_pct": 1,
    "output_kw": 3,                                                     # 1 W
    "voltage_unbalance_pct": 2, "voltage_unbalance_factor_pct": 2,      # thresholds at 1 %: 0.01 %
    "current_unbalance_pct": 2,
    "voltage_deviation_pct": 2, "frequency_deviation_pct": 2,           # 0.01 Hz in 50 Hz is 0.02 %
    "derating_factor": 2, "breakdown_margin": 2, "starting_margin": 2,  # margins 0.01
    "breakdown_margin_low": 2,
    "predicted_current_a": 2,                                           # currents 0.01 A
    "predicted_power_factor": 3,
    # the sheet's tests (engine 1.2.0)
    "insulation_resistance_40c_mohm": 2, "insulation_minimum_mohm": 2,   # 0.01 MΩ: minimums are 5, 100, kV + 1
    "polarization_index": 2, "polarization_index_minimum": 1,           # PI minimums 1.5 and 2.0
    "insulation_test_voltage_min_v": 0, "insulation_test_voltage_max_v": 0,
    "winding_resistance_unbalance_pct": 2,                              # threshold 2 %: 0.01 %
    "winding_resistance_25c_ohm": 6,                                    # a micro-ohmmeter's 1 µΩ
    "overload_setting_pct": 1, "overload_setting_max_pct": 1, "overload_relay_current_a": 2,
    "vibration_zone_bc_mm_s": 2,
    # issue 11: energy (10 W; whole kWh and currency units a year: hours and price are estimates)
    "input_power_kw": 2, "input_power_low_kw": 2, "input_power_high_kw": 2,
    "annual_energy_kwh": 0, "annual_energy_cost": 0,
    "right_size_rated_kw": 2, "right_size_efficiency_pct": 1, "right_size_savings_kwh": 0,
}
_SPEC = {column: f".{places}f" for column, places in RESULT_DECIMALS.items()}
_FORMULA_START = ("=", "+", "-", "@", "\t", "\r")


def neutralise(value: Any) -> Any:
    """Prefix text a spreadsheet would evaluate with ``'``; numbers and None pass unchanged."""
    if value.__class__ is str and value and value[0] in _FORMULA_START:
        return "'" + value
    return value


def _fixed(x: float, spec: str) -> str:
    if x != x or x in (math.inf, -math.inf):
        return ""
    text = format(x, spec)
    if "." in text:
        text = text.rstrip("0").rstrip(".")
    return "0" if text == "-0" else text


def number_cell(column: str, value) -> str:
    """One numeric result as CSV text, with the decimals :data:`RESULT_DECIMALS` gives its column."""
    if value is None:
        return ""
    return _fixed(float(value), _SPEC[column])


def number_column(column: str, values) -> list[str]:
    """:func:`number_cell` over a whole column (``slipwise analyze``'s path; the same text)."""
    spec = _SPEC[column]
    return ["" if v is None else _fixed(float(v), spec) for v in values]


def result_cells(result: Mapping[str, Any]) -> list[str]:
    """The result columns of one record (a dict of :func:`interpret_one`'s shape), in contract order."""
    cells = []
    for col in C.RESULT_COLUMNS:
        value = result.get(col)
        if col == "flags":
            cells.append(";".join(value or ()))
        elif col == "findings":
            cells.append(neutralise(findings_text(value)))
        elif col in C.TEXT_RESULT_COLUMNS:
            cells.append(neutralise(value or ""))
        else:
            cells.append(number_cell(col, value))
    return cells


def result_column(column: str, values) -> list:
    """One result column of ``slipwise analyze``'s frame as CSV cells, the same text :func:`result_cells` gives.

    ``values`` hold what :func:`interpret_columns` gives: numbers, or for
    ``flags`` and ``findings`` the already joined text (:func:`findings_text`).
    """
    if column in C.TEXT_RESULT_COLUMNS:
        return [neutralise(v or "") for v in values]
    return number_column(column, values)


def cautions_cell(result: Mapping[str, Any]) -> str:
    """The ``cautions`` cell of one record."""
    return neutralise(cautions_text(result.get("findings")))


def _py(value):
    """A JSON-ready Python value (None for NaN or infinity)."""
    if isinstance(value, (np.floating, float)):
        v = float(value)
        return None if not math.isfinite(v) else v
    if isinstance(value, np.integer):
        return int(value)
    if isinstance(value, np.bool_):
        return bool(value)
    if isinstance(value, str):
        return value
    return value


#: Text result columns given as null (not "") in a record when blank: not applicable or not judged.
_BLANK_IS_NULL = frozenset({"error", "error_field", "operating_side", "efficiency_class", "verdict", "load_state",
                            "breakdown_state", "supply_state", "voltage_unbalance_state", "current_unbalance_state",
                            "starting_state", "vibration_zone", "instruments_calibration_expired",
                            "insulation_state", "polarization_index_state", "insulation_test_voltage_state",
                            "winding_resistance_state", "overload_setting_state", "vibration_state",
                            "rotation_state", "instruments_state"})


def row_record(out: dict, i: int) -> dict:
    """Row ``i`` of :func:`interpret_columns`' output as a record."""
    row = {}
    for col in C.RESULT_COLUMNS:
        value = _py(out[col][i])
        if col == "poles" and value is not None:
            value = int(value)
        if col in C.TEXT_RESULT_COLUMNS and value == "" and col in _BLANK_IS_NULL:
            value = None
        row[col] = value
    k = int(out["_combination"][i])
    row["flags"] = list(out["_combination_flags"][k]) if k >= 0 else []
    row["findings"] = [dict(d) for d in out["_combination_findings"][k]] if k >= 0 else []
    return row


def interpret_records(records: Sequence[Mapping[str, Any]], thresholds: Thresholds | None = None) -> list[dict]:
    """Interpret several records; a bad record carries ``error`` and ``error_field``."""
    records = list(records)
    if not records:
        return []
    out = interpret_columns(records_to_columns(records), thresholds)
    return [row_record(out, i) for i in range(len(records))]


def interpret_one(record: Mapping[str, Any], thresholds: Thresholds | None = None) -> dict:
    """Interpret one nameplate + reading; raises :class:`InputError` when it cannot."""
    out = interpret_columns(records_to_columns([record]), thresholds)
    if out["error"][0]:
        raise InputError(out["error_field"][0], out["error"][0])
    return row_record(out, 0)

