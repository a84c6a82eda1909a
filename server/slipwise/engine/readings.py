"""Readings: parsing of the reading fields and their cross-checks against the nameplate.

A reading is refused, naming its field and the allowed range, when it cannot
belong to the motor it is filed under (mean voltage or current far from
rated, frequency far from rated on mains, speed above twice synchronous,
input power above five times rated).
"""

from __future__ import annotations

from typing import Any, Mapping

import numpy as np

from .. import contract as C
from ..physics import speed
from ..physics.units import KILOWATT_W
from .inputs import Parsed, RowErrors, column, number_columns, text_column


def _nanmean_present(arrays):
    """Mean of the values present per row, and how many there were."""
    stack = np.stack(arrays)
    count = (~np.isnan(stack)).sum(axis=0)
    with np.errstate(invalid="ignore", divide="ignore"):
        mean = np.where(count > 0, np.nansum(stack, axis=0) / np.maximum(count, 1), np.nan)
    return mean, count



def parse_readings(cols: Mapping[str, Any], n: int, plate: Parsed, errors: RowErrors) -> Parsed:
    """Reading fields per row; ``plate`` holds the nameplate values broadcast to rows."""
    r = Parsed()
    number_columns(C.READING_NUMBERS, cols, n, errors, r)
    r["taken_at"] = text_column(column(cols, "taken_at", n), n)
    v_mean, v_count = _nanmean_present([r[f] for f in C.VOLTAGE_FIELDS])
    i_mean, i_count = _nanmean_present([r[f] for f in C.CURRENT_FIELDS])
    on_drive = plate["supply"] == "drive"
    v_r, i_r, f_r = plate["rated_voltage_v"], plate["rated_current_a"], plate["rated_frequency_hz"]
    errors.add(i_count == 0, "current_l1_a",
               lambda i: "at least one line current is required (current_l1_a, 0 to 10000 A)")
    errors.add((v_count == 0) & ~on_drive, "voltage_l12_v",
               lambda i: "at least one line voltage is required on a mains supply (voltage_l12_v, 10 to 16000 V)")
    with np.errstate(invalid="ignore", divide="ignore"):
        v_ratio = v_mean / v_r
        i_ratio = i_mean / i_r
        bad_v = ~np.isnan(v_ratio) & (((v_ratio < 0.5) & ~on_drive) | (v_ratio < 0.05) | (v_ratio > 1.5))
        bad_i = ~np.isnan(i_ratio) & ((i_ratio > 8.0) | (i_ratio <= 0.0))
        f = r["frequency_hz"]
        bad_f = ~on_drive & ~np.isnan(f) & (np.abs(f / f_r - 1.0) > 0.2)
        ns = speed.synchronous_speed_rpm(f, plate["poles_used"])
        bad_n = ~np.isnan(ns) & (r["speed_rpm"] >= 2.0 * ns)
        p_in_rated = plate["rated_kw"] * KILOWATT_W / plate["eta_used"]
        bad_p = ~np.isnan(r["power_kw"]) & (r["power_kw"] * KILOWATT_W > 5.0 * p_in_rated)
    def vfield(i):   # the first voltage read on row i (worded only for a refused row)
        return next((f for f in C.VOLTAGE_FIELDS[:2] if not np.isnan(r[f][i])), C.VOLTAGE_FIELDS[2])

    errors.add(bad_v, "voltage_l12_v",
               lambda i: f"{vfield(i)}: the mean line voltage {v_mean[i]:g} V is outside "
                         f"{'5' if on_drive[i] else '50'} to 150 % of rated_voltage_v ({v_r[i]:g} V); "
                         "check the meter and the nameplate voltage")
    errors.add(bad_i, "current_l1_a",
               lambda i: f"the mean line current {i_mean[i]:g} A is outside 0 to 800 % of rated_current_a "
                         f"({i_r[i]:g} A)")
    errors.add(bad_f, "frequency_hz",
               lambda i: f"frequency_hz = {f[i]:g} is more than 20 % from rated_frequency_hz ({f_r[i]:g} Hz) "
                         "on a mains supply (allowed 0.8 to 1.2 times rated); if a drive feeds the motor, "
                         "set supply to drive")
    errors.add(bad_n, "speed_rpm",
               lambda i: f"speed_rpm = {r['speed_rpm'][i]:g} is more than twice synchronous speed "
                         f"({ns[i]:g} rpm): allowed below {2 * ns[i]:g} rpm; re-read the tachometer")
    errors.add(bad_p, "power_kw",
               lambda i: f"power_kw = {r['power_kw'][i]:g} is more than five times the rated input "
                         f"({p_in_rated[i] / 1000:.3g} kW)")
    r["v_mean"], r["i_mean"] = v_mean, i_mean
    return r
