"""The interpretation engine: contract fields in, contract results out.

This module parses and validates the contract's columns, fits one circuit per
distinct nameplate (cached), and runs the physics over whole columns at once.
It knows nothing of files, HTTP or SQL: the CLI and the web service call it
with plain columns or records.
"""

from __future__ import annotations

import math
import os
import threading
from collections import OrderedDict
from typing import Any, Mapping, Sequence

import numpy as np
import pandas as pd

from . import contract as C
from .physics import circuit as ckt
from .physics import efficiency, efficiency_class, load, speed, supply, torque_speed, typical
from .physics.flags import Thresholds, combination_mask, describe
from .physics.units import HORSEPOWER_W, KILOWATT_W, RPM_TO_RAD_S, SQRT3

__all__ = ["InputError", "Thresholds", "interpret_columns", "interpret_one", "interpret_records",
           "torque_speed_curve", "thresholds_from_mapping"]


class InputError(ValueError):
    """A reading or nameplate that cannot be interpreted, naming the field."""

    def __init__(self, field: str, message: str):
        super().__init__(message)
        self.field = field
        self.message = message


def thresholds_from_mapping(values: Mapping[str, Any] | None) -> Thresholds:
    """Thresholds with overrides; raises :class:`InputError` on unknown or out-of-range values."""
    if not values:
        return Thresholds()
    known = set(Thresholds.names())
    clean = {}
    for key, value in values.items():
        if key not in known:
            raise InputError(key, f"{key} is not a threshold; known: {', '.join(sorted(known))}")
        try:
            clean[key] = float(value)
        except (TypeError, ValueError):
            raise InputError(key, f"{key} must be a number") from None
    th = Thresholds(**clean)
    bad = th.validate()
    if bad:
        raise InputError(*bad[0])
    return th


# --------------------------------------------------------------------------- parsing
_CONTROL = "".join(chr(c) for c in range(32)) + "\x7f"
_SMALL = 64          # row count below which per-value Python beats pandas' set-up cost
_NAMEPLATE_NUMBER_NAMES = tuple(f.name for f in C.NAMEPLATE_NUMBERS)
_CHOICE_NAMES = tuple(f.name for f in C.NAMEPLATE_CHOICES)


def _column(cols: Mapping[str, Any], name: str, n: int):
    value = cols.get(name)
    if value is None:
        return None
    if isinstance(value, pd.Series):
        value = value.to_numpy()
    arr = value if isinstance(value, np.ndarray) else np.asarray(value, dtype=object)
    if arr.ndim == 0:
        arr = np.full(n, arr.item(), dtype=object)
    return arr


class _Errors:
    """First error per row: message and field."""

    def __init__(self, n: int):
        self.message = np.full(n, "", dtype=object)
        self.field = np.full(n, "", dtype=object)
        self.bad = np.zeros(n, dtype=bool)

    def add(self, bad, field: str, make_message):
        new = np.asarray(bad, dtype=bool) & ~self.bad
        if not new.any():
            return
        for i in np.flatnonzero(new):
            self.message[i] = make_message(i)
            self.field[i] = field
        self.bad |= new

    def take(self, index) -> "_Errors":
        out = _Errors(0)
        out.message, out.field, out.bad = self.message[index], self.field[index], self.bad[index]
        return out

    @property
    def ok(self):
        return ~self.bad


def _show(value) -> str:
    text = str(value)
    if len(text) > 40:
        text = text[:37] + "..."
    return repr(text)


def _to_float(raw, n: int, name: str, errors: _Errors):
    if raw is None:
        return np.full(n, np.nan)
    arr = np.asarray(raw)
    if arr.dtype.kind in "fiu":
        return arr.astype(float, copy=True)
    if arr.dtype.kind == "b":
        errors.add(np.ones(n, dtype=bool), name, lambda i: f"{name}: {_show(arr[i])} is not a number")
        return np.full(n, np.nan)
    # text or mixed: decide per distinct value (few of them in practice); a few rows
    # (one API record) go straight through without pandas
    if n <= _SMALL:
        codes, uniques = np.arange(n), list(arr)
        codes = np.array([-1 if v is None or (isinstance(v, float) and math.isnan(v)) else i
                          for i, v in enumerate(arr)], dtype=np.int64)
    else:
        codes, uniques = pd.factorize(pd.Series(arr, dtype=object), use_na_sentinel=True)
    values = np.full(len(uniques), np.nan)
    bad_u = np.zeros(len(uniques), dtype=bool)
    for k, v in enumerate(uniques):
        if isinstance(v, (bool, np.bool_)):
            bad_u[k] = True
            continue
        if isinstance(v, (int, float, np.integer, np.floating)):
            values[k] = float(v)
            continue
        text = str(v).strip()
        if text == "":
            continue
        try:
            x = float(text)
        except ValueError:
            bad_u[k] = True
            continue
        if math.isnan(x):
            bad_u[k] = True        # "nan" typed as text is not a reading
        else:
            values[k] = x
    out = np.append(values, np.nan)[codes]          # code -1 (missing) picks the trailing NaN
    bad = np.append(bad_u, False)[codes]
    errors.add(bad, name, lambda i: f"{name}: {_show(arr[i])} is not a number")
    return out


def _check_range(values, spec: C.NumberField, errors: _Errors):
    with np.errstate(invalid="ignore"):
        outside = ~np.isnan(values) & ((values < spec.low) | (values > spec.high) | ~np.isfinite(values))
    errors.add(outside, spec.name,
               lambda i: f"{spec.name} = {values[i]:g} is outside the allowed range {spec.range_text()}")
    if spec.integer:
        frac = ~np.isnan(values) & np.isfinite(values) & (values != np.round(values))
        errors.add(frac, spec.name, lambda i: f"{spec.name} = {values[i]:g} must be a whole number "
                                              f"({spec.range_text()})")
    if spec.required:
        errors.add(np.isnan(values), spec.name, lambda i: f"{spec.name} is required ({spec.range_text()})")


def _parse_numbers(specs, cols: Mapping[str, Any], n: int, errors: _Errors, into: dict) -> None:
    """Numeric contract fields: parsed, defaulted, range-checked, stored under their names."""
    for spec in specs:
        values = _to_float(_column(cols, spec.name, n), n, spec.name, errors)
        if spec.default is not None:
            values = np.where(np.isnan(values), spec.default, values)
        _check_range(values, spec, errors)
        into[spec.name] = values


def _parse_text(raw, n: int):
    """Stripped text per row ("" for blank), decided per distinct value."""
    if raw is None:
        return np.full(n, "", dtype=object)
    if n <= _SMALL:
        return np.array(["" if v is None or (isinstance(v, float) and math.isnan(v)) else str(v).strip()
                         for v in np.asarray(raw, dtype=object)], dtype=object)
    codes, uniques = pd.factorize(pd.Series(np.asarray(raw, dtype=object), dtype=object), use_na_sentinel=True)
    clean = np.array(["" if (isinstance(v, float) and math.isnan(v)) else str(v).strip() for v in uniques] + [""],
                     dtype=object)
    return clean[codes]          # code -1 (missing) picks the trailing ""


def _parse_choice(raw, n: int, spec: C.ChoiceField, errors: _Errors, upper: bool):
    text = _parse_text(raw, n)
    uniq, inv = np.unique(text.astype(str), return_inverse=True)
    norm_u = np.array([t.upper() if upper else t.lower() for t in uniq], dtype=object)
    bad_u = (norm_u != "") & ~np.isin(norm_u, spec.choices)
    norm = norm_u[inv].astype(object)
    bad = bad_u[inv]
    errors.add(bad, spec.name, lambda i: f"{spec.name}: {_show(text[i])} is not allowed; use {spec.range_text()}")
    norm[bad] = ""
    return norm


def _nanmean_present(arrays):
    stack = np.stack(arrays)
    count = (~np.isnan(stack)).sum(axis=0)
    with np.errstate(invalid="ignore", divide="ignore"):
        mean = np.where(count > 0, np.nansum(stack, axis=0) / np.maximum(count, 1), np.nan)
    return mean, count


def _group_nameplates(cols: Mapping[str, Any], n: int):
    """Rows sharing one nameplate: (first row of each, row -> nameplate index)."""
    if n == 1:
        return np.zeros(1, dtype=np.int64), np.zeros(1, dtype=np.int64)
    h = np.zeros(n, dtype=np.uint64)
    mult = np.uint64(0x100000001B3)
    with np.errstate(over="ignore"):
        for name in C.NAMEPLATE_FIELDS:
            raw = _column(cols, name, n)
            if raw is None:
                continue
            arr = np.asarray(raw)
            if arr.dtype.kind == "f":
                part = np.ascontiguousarray(np.where(np.isnan(arr), np.nan, arr + 0.0)).view(np.uint64)
            elif arr.dtype.kind in "iub":
                part = arr.astype(np.int64).view(np.uint64)
            else:
                part = pd.factorize(pd.Series(arr, dtype=object))[0].astype(np.int64).view(np.uint64)
            part = part ^ (part >> np.uint64(29))
            h = (h ^ part) * mult
            h ^= h >> np.uint64(32)
    inverse, uniques = pd.factorize(h)
    first = np.empty(len(uniques), dtype=np.int64)
    first[inverse[::-1]] = np.arange(n - 1, -1, -1)      # first row of each group
    return first, inverse.astype(np.int64)


class _Parsed(dict):
    """Parsed columns by contract name, plus derived values."""


def _parse_nameplates(cols: Mapping[str, Any], n: int) -> tuple[_Parsed, _Errors]:
    """Validate distinct nameplates and derive everything that depends on them alone."""
    errors = _Errors(n)
    p = _Parsed()
    tag = _parse_text(_column(cols, "tag", n), n)
    errors.add(tag == "", "tag", lambda i: f"tag is required (1 to {C.TAG_MAX_CHARS} characters)")
    errors.add(np.array([len(t) > C.TAG_MAX_CHARS for t in tag], dtype=bool), "tag",
               lambda i: f"tag is {len(tag[i])} characters long; the allowed length is 1 to {C.TAG_MAX_CHARS}")
    errors.add(np.array([any(ch in _CONTROL for ch in t) for t in tag], dtype=bool), "tag",
               lambda i: "tag contains control characters; use printable text only")
    p["tag"] = tag
    _parse_numbers(C.NAMEPLATE_NUMBERS, cols, n, errors, p)
    for spec in C.NAMEPLATE_CHOICES:
        p[spec.name] = _parse_choice(_column(cols, spec.name, n), n, spec, errors, upper=spec.name == "design")

    kw, hp = p["rated_power_kw"], p["rated_power_hp"]
    hp_kw = hp * HORSEPOWER_W / KILOWATT_W
    with np.errstate(invalid="ignore", divide="ignore"):
        disagree = ~np.isnan(kw) & ~np.isnan(hp) & (np.abs(kw / hp_kw - 1.0) > 0.02)
    errors.add(disagree, "rated_power_hp",
               lambda i: f"rated_power_kw = {kw[i]:g} and rated_power_hp = {hp[i]:g} disagree "
                         f"({hp[i]:g} hp = {hp_kw[i]:.3g} kW); give one of them")
    errors.add(np.isnan(kw) & np.isnan(hp), "rated_power_kw",
               lambda i: "rated_power_kw (0.06 to 2000 kW) or rated_power_hp (0.08 to 2700 hp) is required")
    p["rated_kw"] = np.where(np.isnan(kw), hp_kw, kw)

    f_r, n_r = p["rated_frequency_hz"], p["rated_speed_rpm"]
    p["design"] = np.where(p["design"] == "", np.where(np.abs(f_r - 60.0) < np.abs(f_r - 50.0), "B", "N"),
                           p["design"]).astype(object)
    p["supply"] = np.where(p["supply"] == "", "mains", p["supply"]).astype(object)
    p["driven_load"] = np.where(p["driven_load"] == "", "constant_torque", p["driven_load"]).astype(object)

    inferred = speed.infer_poles(n_r, f_r)
    poles = np.where(np.isnan(p["poles"]), inferred, p["poles"])
    odd = ~np.isnan(p["poles"]) & (np.mod(p["poles"], 2) != 0)
    errors.add(odd, "poles", lambda i: f"poles = {p['poles'][i]:g} must be an even number (2 to 24)")
    errors.add(np.isnan(poles) | (poles > 24), "rated_speed_rpm",
               lambda i: f"rated_speed_rpm = {n_r[i]:g} gives no pole count from 2 to 24 at "
                         f"{f_r[i]:g} Hz; check the nameplate")
    ns_r = speed.synchronous_speed_rpm(f_r, poles)
    s_r = speed.slip_pu(n_r, ns_r)
    with np.errstate(invalid="ignore"):
        bad_slip = ~np.isnan(s_r) & ((s_r <= 0.001) | (s_r > 0.20))
    errors.add(bad_slip, "rated_speed_rpm",
               lambda i: f"rated_speed_rpm = {n_r[i]:g} gives a rated slip of {100 * s_r[i]:.2g} % against "
                         f"{ns_r[i]:g} rpm synchronous ({poles[i]:g} poles at {f_r[i]:g} Hz); "
                         "the allowed rated slip is 0.1 to 20 %")
    p["poles_used"], p["sync_rated_rpm"], p["rated_slip"] = poles, ns_r, s_r

    # power balance of the nameplate: P = sqrt(3) V I pf eta
    v_r, i_r = p["rated_voltage_v"], p["rated_current_a"]
    apparent = SQRT3 * v_r * i_r
    p_out = p["rated_kw"] * KILOWATT_W
    pf_np = p["rated_power_factor"]
    eta_np = p["rated_efficiency_pct"] / 100.0
    with np.errstate(invalid="ignore", divide="ignore"):
        eta_typ = efficiency_class.typical_efficiency_pct(np.nan_to_num(p["rated_kw"], nan=1.0),
                                                          np.nan_to_num(poles, nan=4.0),
                                                          np.nan_to_num(f_r, nan=50.0)) / 100.0
        eta = np.where(np.isnan(eta_np), np.where(np.isnan(pf_np), eta_typ, p_out / (apparent * pf_np)), eta_np)
        pf = p_out / (apparent * eta)
        neither = np.isnan(eta_np) & np.isnan(pf_np)
        pf_typ = typical.typical_power_factor(p["rated_kw"], poles)
        swap = neither & ((pf < 0.30) | (pf > 0.97))
        pf = np.where(swap, pf_typ, pf)
        eta = np.where(swap, p_out / (apparent * pf_typ), eta)
        expected_i = p_out / (SQRT3 * v_r * np.where(np.isnan(pf_np), pf, pf_np) * eta)
        bad_balance = ~np.isnan(pf) & ((pf < 0.30) | (pf > 0.97) | (eta < 0.40) | (eta > 0.99)
                                       | (~np.isnan(pf_np) & ~np.isnan(eta_np) & (np.abs(pf - pf_np) > 0.12)))
    errors.add(bad_balance, "rated_current_a",
               lambda i: f"rated_current_a = {i_r[i]:g} does not fit the nameplate's power, voltage, "
                         f"efficiency and power factor (about {expected_i[i]:.3g} A expected); check the "
                         "nameplate (dual-voltage motors list a current per voltage)")
    # rotor copper loss alone is s/(1 - s) of the mechanical power: an efficiency that leaves less
    # than that (plus a tenth for the stator) is not a real motor's
    with np.errstate(invalid="ignore", divide="ignore"):
        losses = p_out / eta - p_out
        rotor_loss = s_r / (1.0 - s_r) * p_out
        impossible = ~bad_balance & ~np.isnan(losses) & (rotor_loss > 0.9 * losses)
        eta_max = 1.0 / (1.0 + s_r / (1.0 - s_r) / 0.9)
    given = np.where(np.isnan(eta_np), "the efficiency implied by its power, current and power factor",
                     "rated_efficiency_pct")
    errors.add(impossible, "rated_speed_rpm",
               lambda i: f"rated_speed_rpm = {n_r[i]:g} means a rated slip of {100 * s_r[i]:.3g} %, which allows "
                         f"at most {100 * eta_max[i]:.3g} % efficiency (rotor copper loss alone is s/(1-s) of the "
                         f"output), but {given[i]} is {100 * eta[i]:.3g} %; check the rated speed, current and "
                         "power factor on the nameplate")
    p["eta_used"], p["pf_used"] = eta, pf
    bd = np.where(np.isnan(p["breakdown_torque_pct"]),
                  typical.lookup(typical.BREAKDOWN_TORQUE_PCT, p["design"]), p["breakdown_torque_pct"])
    p["bd_ratio"] = bd / 100.0
    p["x1_share"] = typical.lookup(typical.LEAKAGE_STATOR_SHARE, p["design"])
    p["lrt_pct"] = np.where(np.isnan(p["locked_rotor_torque_pct"]),
                            typical.lookup(typical.LOCKED_ROTOR_TORQUE_PCT, p["design"]), p["locked_rotor_torque_pct"])
    p["lrt_ratio"] = p["lrt_pct"] / 100.0
    p["breakaway_share"] = typical.lookup(typical.BREAKAWAY_TORQUE_PCT, p["driven_load"]) / 100.0
    p["fw_share"] = typical.friction_windage_share_of_fixed(poles)
    # booleans for the per-row physics (comparing text per row is slow)
    p["is_drive"] = p["supply"] == "drive"
    p["is_nema"] = np.isin(p["design"], ("A", "B", "C", "D"))
    p["is_variable_torque"] = p["driven_load"] == "variable_torque"
    p["is_constant_power"] = p["driven_load"] == "constant_power"
    p["needs_breakaway"] = np.isin(p["driven_load"], ("constant_torque", "high_breakaway"))
    p["efficiency_class"] = np.where(np.isnan(eta_np), "", efficiency_class.efficiency_class(
        np.nan_to_num(p["rated_kw"], nan=1.0), np.nan_to_num(poles, nan=4.0), np.nan_to_num(f_r, nan=50.0),
        p["rated_efficiency_pct"])).astype(object)
    return p, errors


_plate_cache: "OrderedDict[tuple, tuple]" = OrderedDict()
_PLATE_CACHE_LIMIT = 4096


def _nameplates(plate_cols: Mapping[str, Any], n: int) -> tuple[_Parsed, _Errors]:
    """Parsed and derived nameplates; a single nameplate (the service's case) is cached."""
    key = None
    if n == 1:
        key = tuple(sorted((k, type(v[0]).__name__, repr(v[0])) for k, v in plate_cols.items()))
        with _cache_lock:
            hit = _plate_cache.get(key)
            if hit is not None:
                _plate_cache.move_to_end(key)
                return hit
    plates, errors = _parse_nameplates(plate_cols, n)
    _derive_nameplates(plates, errors.ok)
    if key is not None:
        with _cache_lock:
            _plate_cache[key] = (plates, errors)
            if len(_plate_cache) > _PLATE_CACHE_LIMIT:
                _plate_cache.popitem(last=False)
    return plates, errors


def _derive_nameplates(p: _Parsed, ok: np.ndarray) -> None:
    """Circuit fit and loss budgets of the valid nameplates (in place)."""
    idx = np.flatnonzero(ok)
    sub = _Parsed({k: np.asarray(v)[idx] for k, v in p.items()})
    circuit = _fit_for_rows(sub)
    p_out = sub["rated_kw"] * KILOWATT_W
    budgets = tuple(efficiency.rated_loss_budget(p_out, sub["eta_used"], sub["rated_slip"], share,
                                                 sub["fw_share"])
                    for share in (typical.FIXED_LOSS_SHARE, typical.FIXED_LOSS_SHARE_LOW,
                                  typical.FIXED_LOSS_SHARE_HIGH))
    i0_r = ckt.no_load_current_a(circuit, sub["rated_voltage_v"], sub["rated_frequency_hz"])
    p["_valid_index"] = idx
    p["_valid"] = sub
    p["_circuit"] = circuit
    p["_budgets"] = budgets
    p["_i0_rated"] = i0_r


def _parse_readings(cols: Mapping[str, Any], n: int, plate: _Parsed, errors: _Errors) -> _Parsed:
    """Reading fields per row; ``plate`` holds the nameplate values broadcast to rows."""
    r = _Parsed()
    _parse_numbers(C.READING_NUMBERS, cols, n, errors, r)
    r["taken_at"] = _parse_text(_column(cols, "taken_at", n), n)
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
    vfield = np.where(np.isnan(r["voltage_l12_v"]),
                      np.where(np.isnan(r["voltage_l23_v"]), "voltage_l31_v", "voltage_l23_v"), "voltage_l12_v")
    errors.add(bad_v, "voltage_l12_v",
               lambda i: f"{vfield[i]}: the mean line voltage {v_mean[i]:g} V is outside "
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


# --------------------------------------------------------------------------- circuit cache
_CACHE_LIMIT = 20000
_cache: "OrderedDict[tuple, tuple]" = OrderedDict()
_cache_lock = threading.Lock()
_FIT_INPUTS = ("rated_kw", "rated_voltage_v", "rated_current_a", "rated_frequency_hz", "poles_used",
               "rated_speed_rpm", "pf_used", "eta_used", "bd_ratio", "x1_share", "fw_share", "lrt_ratio")


def _fit_for_rows(p: _Parsed) -> ckt.Circuit:
    """One fitted circuit per distinct nameplate, from the cache where it is there."""
    mat = np.column_stack([np.asarray(p[k], dtype=float) for k in _FIT_INPUTS])
    keys = [tuple(row) for row in mat.tolist()]
    rows: list = [None] * len(keys)
    missing = []
    with _cache_lock:
        for j, key in enumerate(keys):
            hit = _cache.get(key)
            if hit is None:
                missing.append(j)
            else:
                _cache.move_to_end(key)
                rows[j] = hit
    if missing:
        kw, v, i, f, poles, nr, pf, eta, bd, x1, fw, lrt = mat[missing].T
        fit = ckt.fit_circuit(kw * KILOWATT_W, v, i, f, poles, nr, pf, eta, bd, x1,
                              np.full(len(missing), typical.FIXED_LOSS_SHARE), fw, locked_rotor_ratio=lrt)
        with _cache_lock:
            for k, j in enumerate(missing):
                rows[j] = tuple(np.asarray(a)[k] for a in fit)
                _cache[keys[j]] = rows[j]
                if len(_cache) > _CACHE_LIMIT:
                    _cache.popitem(last=False)
    if not rows:
        return ckt.Circuit(*(np.empty(0) for _ in ckt.Circuit._fields))
    return ckt.Circuit(*(np.array(col) for col in zip(*rows)))


# --------------------------------------------------------------------------- interpretation
def _empty_results(n: int) -> dict:
    out = {}
    for col in C.RESULT_COLUMNS:
        out[col] = np.full(n, "", dtype=object) if col in C.TEXT_RESULT_COLUMNS else np.full(n, np.nan)
    return out


def _column_length(cols: Mapping[str, Any]) -> int:
    lengths = {len(v) for v in cols.values() if np.ndim(v) > 0}
    if len(lengths) > 1:
        raise ValueError("columns differ in length")
    return lengths.pop() if lengths else 1


def interpret_columns(cols: Mapping[str, Any], thresholds: Thresholds | None = None) -> dict:
    """Interpret a table of readings given as columns.

    Parameters
    ----------
    cols : mapping of str -> array-like
        Contract input columns (nameplate and reading fields); missing
        columns are blank. Values may be numbers or text.
    thresholds : Thresholds, optional

    Returns
    -------
    dict of str -> numpy.ndarray
        Every column of :data:`slipwise.contract.RESULT_COLUMNS`, plus
        ``"_combination"`` (per row, an index into ``"_combination_flags"``,
        tuples of flag codes, and ``"_combination_findings"``, lists of
        ``{flag, text, caution}`` dicts; -1 for a row not interpreted). Rows
        that cannot be interpreted carry ``error`` and ``error_field`` and no
        results.
    """
    # garbage rows (1e308, inf) overflow on their way to their error; every result is checked
    with np.errstate(all="ignore"):
        return _interpret_columns(cols, thresholds)


def _interpret_columns(cols: Mapping[str, Any], thresholds: Thresholds | None) -> dict:
    th = thresholds or Thresholds()
    n = _column_length(cols)
    first, inverse = _group_nameplates(cols, n)
    plate_cols = {k: _column(cols, k, n)[first] for k in C.NAMEPLATE_FIELDS if cols.get(k) is not None}
    plates, plate_errors = _nameplates(plate_cols, len(first))

    errors = plate_errors.take(inverse)
    per_row = ("tag", "rated_voltage_v", "rated_current_a", "rated_frequency_hz", "supply", "poles_used",
               "rated_kw", "eta_used")
    plate_rows = _Parsed({k: plates[k][inverse] for k in per_row})
    readings = _parse_readings(cols, n, plate_rows, errors)

    out = _empty_results(n) if not errors.ok.all() else {}
    out["engine_version"] = np.full(n, C.ENGINE_VERSION, dtype=object)
    combo_per_row = np.full(n, -1, dtype=np.int64)
    codes: list = []
    finds: list = []
    ok = errors.ok
    idx = np.flatnonzero(ok)
    if idx.size:
        # valid rows only ever point at valid nameplates; map them into the fitted subset
        position = np.full(len(first), -1)
        position[plates["_valid_index"]] = np.arange(plates["_valid_index"].size)
        all_valid = idx.size == n
        fitted = position[inverse if all_valid else inverse[idx]]
        valid_readings = _Parsed({k: (v if all_valid else v[idx]) for k, v in readings.items() if k != "taken_at"})
        res, mask = _interpret_chunked(plates, fitted, valid_readings, th)
        res["supply_zone"] = _ZONE_TEXT[res.pop("supply_zone_code")]
        res["operating_side"] = _SIDE_TEXT[res.pop("operating_side_code")]
        res["efficiency_class"] = plates["_valid"]["efficiency_class"][fitted]
        combo, combinations = pd.factorize(mask)
        codes, finds = describe(combinations, th)
        for col, values in res.items():
            if all_valid:
                out[col] = values
            else:
                out[col][idx] = values
        flag_text = np.array([";".join(c) for c in codes], dtype=object)
        find_text = np.array([" | ".join(f"{d['flag']}: {d['text']}" + (f" Caution: {d['caution']}"
                                                                        if d["caution"] else "")
                                         for d in fl) for fl in finds], dtype=object)
        if all_valid:
            out["flags"], out["findings"] = flag_text[combo], find_text[combo]
            combo_per_row = combo
        else:
            out["flags"][idx] = flag_text[combo]
            out["findings"][idx] = find_text[combo]
            combo_per_row[idx] = combo
    out["error"] = errors.message
    out["error_field"] = errors.field
    # per row: index into the distinct combinations (-1: not interpreted)
    out["_combination"] = combo_per_row
    out["_combination_flags"] = codes
    out["_combination_findings"] = finds
    return out


#: Rows per chunk: arrays of this size stay in cache, and chunks run on two threads
#: (numpy releases the GIL in its loops).
CHUNK_ROWS = 32768
_pool = None
_pool_lock = threading.Lock()


def _executor():
    global _pool
    with _pool_lock:
        if _pool is None:
            from concurrent.futures import ThreadPoolExecutor
            _pool = ThreadPoolExecutor(max_workers=max(1, min(4, os.cpu_count() or 1)),
                                       thread_name_prefix="slipwise-engine")
        return _pool


def _interpret_chunked(plates: _Parsed, fitted: np.ndarray, r: _Parsed, th: Thresholds):
    n = fitted.size
    if n <= CHUNK_ROWS:
        return _interpret_valid(plates, fitted, r, th)
    bounds = [(a, min(a + CHUNK_ROWS, n)) for a in range(0, n, CHUNK_ROWS)]
    jobs = [_executor().submit(_interpret_valid, plates, fitted[a:b], _Parsed({k: v[a:b] for k, v in r.items()}), th)
            for a, b in bounds]
    parts = [job.result() for job in jobs]
    res = {k: np.concatenate([part[0][k] for part in parts]) for k in parts[0][0]}
    return res, np.concatenate([part[1] for part in parts])


_ZONE_TEXT = np.array(["", "A", "B", "outside", "drive"], dtype=object)
_SIDE_TEXT = np.array(["", "stable", "unstable"], dtype=object)


def _interpret_valid(plates: _Parsed, fitted: np.ndarray, r: _Parsed, th: Thresholds):
    """Physics on valid rows; ``fitted`` maps each row to its fitted nameplate."""
    sub = plates["_valid"]
    pl = lambda name: sub[name][fitted]  # noqa: E731
    circuit = plates["_circuit"].take(fitted)
    budgets = tuple(efficiency.LossBudget(*(part[fitted] for part in b)) for b in plates["_budgets"])
    i0_r = plates["_i0_rated"][fitted]
    poles = pl("poles_used")
    f, f_r = r["frequency_hz"], pl("rated_frequency_hz")
    v_r, i_r = pl("rated_voltage_v"), pl("rated_current_a")
    n_meas, n_r = r["speed_rpm"], pl("rated_speed_rpm")
    on_drive = pl("is_drive")
    rated_kw = pl("rated_kw")
    p_rated_w = rated_kw * KILOWATT_W
    ns = speed.synchronous_speed_rpm(f, poles)
    ns_r = pl("sync_rated_rpm")
    s = speed.slip_pu(n_meas, ns)
    slip_rpm = speed.slip_rpm(n_meas, ns)
    s_r = pl("rated_slip")
    above = s <= 0.0
    s_run = np.where(above, np.nan, s)
    # voltage: measured, or on a drive without a reading the V/f the drive applies
    v_expected_drive = v_r * np.minimum(f / f_r, 1.0)
    v = np.where(np.isnan(r["v_mean"]), v_expected_drive, r["v_mean"])
    flux = (v / f) / (v_r / f_r)
    speed_ratio = n_meas / n_r
    freq_ratio = f / f_r
    i_meas = r["i_mean"]
    current_ratio = i_meas / i_r

    # --- load, three methods ------------------------------------------------------------
    slip_equiv = np.where(on_drive, slip_rpm, s * ns_r)
    _, out_slip = load.slip_method(slip_equiv, s_r * ns_r, np.where(on_drive, flux, v / v_r), speed_ratio,
                                   rated_kw, r["tachometer_resolution_rpm"], r["voltage_accuracy_pct"],
                                   r["minutes_running"], on_drive)
    i0 = i0_r * flux          # magnetising current ~ flux (saturation neglected; in the band)
    out_current = load.current_method(i_meas, i_r, i0, i0_r, flux, speed_ratio, r["current_accuracy_pct"])
    central = budgets[0]
    core_now = central.core_w * flux ** 2 * freq_ratio
    fw_now = central.friction_windage_w * speed_ratio ** 2
    stator_now = central.stator_w * current_ratio ** 2
    pk = r["power_kw"] * KILOWATT_W
    p_in = np.where(np.isnan(pk), load.input_power_w(r["v_mean"], i_meas, r["power_factor"]), pk)
    with np.errstate(divide="ignore", invalid="ignore"):
        acc_vipf = 100.0 * np.sqrt((r["voltage_accuracy_pct"] / 100) ** 2 + (r["current_accuracy_pct"] / 100) ** 2
                                   + (load.POWER_FACTOR_ACCURACY / r["power_factor"]) ** 2)
    share = typical.FIXED_LOSS_SHARE
    out_power = load.input_power_method(
        p_in, np.where(np.isnan(pk), acc_vipf, r["power_accuracy_pct"]), core_now, fw_now, stator_now, s,
        p_rated_w, fixed_loss_band=(typical.FIXED_LOSS_SHARE_LOW / share, typical.FIXED_LOSS_SHARE_HIGH / share))

    methods = [load.Estimate(*(np.where(above, np.nan, a) for a in e)) for e in (out_slip, out_current, out_power)]
    fused, consistent, outlier = load.fuse(methods)
    if th.inconsistency_factor != 1.0:
        k = th.inconsistency_factor
        scaled = [load.Estimate(e.value, e.value - (e.value - e.low) * k, e.value + (e.high - e.value) * k)
                  for e in methods]
        _, consistent, outlier = load.fuse(scaled)
    load_pu = fused.value
    torque_pu = load_pu / speed_ratio
    at_sync = above & (n_meas - ns <= r["tachometer_resolution_rpm"])

    # --- circuit at the operating point, breakdown, stability -------------------------------
    with np.errstate(invalid="ignore", divide="ignore"):
        op = ckt.solve(circuit, v, f, s_run)
        t_em_max, s_max = ckt.breakdown(circuit, v, f)
        t_rated = p_rated_w / (n_r * RPM_TO_RAD_S)
        t_fw = fw_now / np.maximum(n_meas * RPM_TO_RAD_S, 1e-9)
        bd_pct = 100.0 * (t_em_max - t_fw) / t_rated
        margin = torque_speed.breakdown_margin(bd_pct, np.maximum(100.0 * torque_pu, 1.0))
        # motor slope from the Kloss form through the circuit's breakdown point (documented
        # simplification): dT/ds = 2 Tk (sk/s^2 - 1/sk) / (s/sk + sk/s)^2, dn = -ns ds
        x = s_run / s_max + s_max / s_run
        dt_ds = 2.0 * bd_pct / 100.0 * t_rated * (s_max / s_run ** 2 - 1.0 / s_max) / x ** 2
        motor_slope = -dt_ds / ns
        t_op = torque_pu * t_rated
        load_slope = np.where(pl("is_variable_torque"), 2.0 * t_op / n_meas,
                              np.where(pl("is_constant_power"), -t_op / n_meas, 0.0))
        stable = torque_speed.is_stable(motor_slope, load_slope) & (s_run < s_max)
        has_point = ~above & ~np.isnan(load_pu)
        unstable = has_point & ~stable
        # two methods that disagree, the slip method far above the current method: the speed
        # reading is the suspect (a belt pulley or the driven shaft read, the commonest slip
        # error; common practice), as it is where the slip says "past breakdown"
        speed_suspect = (outlier == -2) & ((s_run > s_max) | (methods[0].value > 1.3 * methods[1].value)) \
            & (methods[1].value < 1.2)
        outlier = np.where(speed_suspect, 0, outlier)
        lrt_now = pl("lrt_pct") * (v / v_r) ** 2
        need = pl("breakaway_share") * np.maximum(100.0 * torque_pu, 10.0)
        starting = np.where(on_drive | above, np.nan, lrt_now / need)

    # --- efficiency --------------------------------------------------------------------------
    eta, eta_lo, eta_hi = efficiency.efficiency_band(
        budgets, load_pu * p_rated_w, fused.low * p_rated_w, fused.high * p_rated_w, flux, freq_ratio,
        speed_ratio, current_ratio, r["current_accuracy_pct"], s)

    # --- supply --------------------------------------------------------------------------------
    vu = supply.max_deviation_unbalance_pct(r["voltage_l12_v"], r["voltage_l23_v"], r["voltage_l31_v"])
    vuf = supply.voltage_unbalance_factor_pct(r["voltage_l12_v"], r["voltage_l23_v"], r["voltage_l31_v"])
    iu = supply.max_deviation_unbalance_pct(r["current_l1_a"], r["current_l2_a"], r["current_l3_a"])
    derate = supply.nema_derating_factor(vu)
    v_dev = supply.deviation_pct(r["v_mean"], np.where(on_drive, v_expected_drive, v_r))
    f_dev = np.where(on_drive, np.nan, supply.deviation_pct(f, f_r))
    zone_code = supply.iec_zone_code(v_dev, f_dev)
    zone_code = np.where(on_drive, 4, zone_code)
    out_of_tol = ~on_drive & np.where(pl("is_nema"), ~supply.within_nema_tolerance(v_dev, f_dev), zone_code != 1)

    # --- flags -----------------------------------------------------------------------------------
    basis = np.where(on_drive, torque_pu, load_pu) * 100.0
    # on a drive a fan or pump turns down by design: judge underload on the torque it would
    # need at rated speed by its square law (common practice)
    under_basis = np.where(on_drive & pl("is_variable_torque"), basis * (n_r / n_meas) ** 2, basis)
    with np.errstate(invalid="ignore"):
        flag_arrays = {
            "speed_above_synchronous": above,
            "overloaded": basis > th.overloaded_pct,
            "over_service_factor": basis > 100.0 * pl("service_factor"),
            "near_breakdown": ~above & ((margin < th.near_breakdown_margin) | unstable),
            "underloaded": under_basis < th.underloaded_pct,
            "supply_out_of_tolerance": out_of_tol,
            "voltage_unbalance": vu > th.voltage_unbalance_pct,
            "current_unbalance": iu > th.current_unbalance_pct,
            "readings_inconsistent": ~above & ~consistent,
            "starting_torque_low": pl("needs_breakaway") & (starting < th.starting_margin),
        }
    mask = combination_mask(flag_arrays, np.where(consistent, -1, outlier), on_drive, at_sync)

    res = {
        "poles": poles, "sync_speed_rpm": ns, "slip_pct": 100.0 * s, "slip_rpm": slip_rpm,
        "load_pct": 100.0 * load_pu, "load_low_pct": 100.0 * fused.low, "load_high_pct": 100.0 * fused.high,
        "load_slip_pct": 100.0 * methods[0].value, "load_current_pct": 100.0 * methods[1].value,
        "load_power_pct": 100.0 * methods[2].value,
        "output_kw": load_pu * rated_kw,
        "torque_pct": 100.0 * torque_pu, "torque_low_pct": 100.0 * fused.low / speed_ratio,
        "torque_high_pct": 100.0 * fused.high / speed_ratio,
        "efficiency_pct": 100.0 * eta, "efficiency_low_pct": 100.0 * eta_lo, "efficiency_high_pct": 100.0 * eta_hi,
        "voltage_unbalance_pct": vu, "voltage_unbalance_factor_pct": vuf, "current_unbalance_pct": iu,
        "derating_factor": derate, "voltage_deviation_pct": v_dev, "frequency_deviation_pct": f_dev,
        "supply_zone_code": zone_code,
        "breakdown_margin": np.where(above, np.nan, margin),
        "predicted_current_a": op.current_a, "predicted_power_factor": op.power_factor,
        "breakdown_torque_now_pct": bd_pct, "starting_margin": starting,
        "operating_side_code": np.where(has_point, np.where(stable, 1, 2), 0),
    }
    return res, mask


# --------------------------------------------------------------------------- records
def _py(value):
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


def _records_to_columns(records: Sequence[Mapping[str, Any]]) -> dict:
    names = set()
    for r in records:
        names.update(r.keys())
    return {k: np.array([r.get(k) for r in records], dtype=object) for k in names if k in C.INPUT_FIELDS}


def _row(out: dict, i: int) -> dict:
    row = {}
    for col in C.RESULT_COLUMNS:
        value = _py(out[col][i])
        if col == "poles" and value is not None:
            value = int(value)
        if col in C.TEXT_RESULT_COLUMNS and value == "" and col in ("error", "error_field", "operating_side",
                                                                    "efficiency_class"):
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
    out = interpret_columns(_records_to_columns(records), thresholds)
    return [_row(out, i) for i in range(len(records))]


def interpret_one(record: Mapping[str, Any], thresholds: Thresholds | None = None) -> dict:
    """Interpret one nameplate + reading; raises :class:`InputError` when it cannot."""
    out = interpret_columns(_records_to_columns([record]), thresholds)
    if out["error"][0]:
        raise InputError(out["error_field"][0], out["error"][0])
    return _row(out, 0)


def _single_plate(record: Mapping[str, Any]) -> _Parsed:
    cols = _records_to_columns([record])
    plates, errors = _nameplates({k: _column(cols, k, 1) for k in C.NAMEPLATE_FIELDS if k in cols}, 1)
    if not errors.ok[0]:
        raise InputError(errors.field[0], errors.message[0])
    return plates


def torque_speed_curve(record: Mapping[str, Any], thresholds: Thresholds | None = None, points: int = 200) -> dict:
    """Arrays for the torque-speed picture of one reading.

    Returns
    -------
    dict
        ``speed_rpm``; ``torque_measured_v_nm`` and ``torque_rated_v_nm`` (the
        motor's shaft torque at the measured and at rated voltage, at the
        measured frequency); ``load_torque_nm`` (the driven load's law through
        the operating point); floats ``operating_speed_rpm``,
        ``operating_torque_nm`` (None without an operating point),
        ``breakdown_speed_rpm``, ``breakdown_torque_nm`` (at measured voltage),
        ``rated_torque_nm``, ``sync_speed_rpm``, ``measured_voltage_v``,
        ``rated_voltage_v``; and ``driven_load``.
    """
    result = interpret_one(record, thresholds)
    plates = _single_plate(record)
    circuit = plates["_circuit"]
    f = float(record.get("frequency_hz"))
    f_r = float(plates["rated_frequency_hz"][0])
    v_r = float(plates["rated_voltage_v"][0])
    volts = [_float_or_nan(record.get(k)) for k in C.VOLTAGE_FIELDS]
    volts = [x for x in volts if not math.isnan(x)]
    v = sum(volts) / len(volts) if volts else v_r * min(f / f_r, 1.0)
    ns = float(result["sync_speed_rpm"])
    slip = np.concatenate([np.geomspace(1.0, 1e-4, points - 1), [0.0]])
    n = ns * (1.0 - slip)
    n_r = float(plates["rated_speed_rpm"][0])
    fw = float(circuit.friction_windage_w[0])
    fw_torque = fw * (n / n_r) ** 2 / np.maximum(n * RPM_TO_RAD_S, 1e-6)
    many = circuit.take(np.zeros(slip.size, dtype=int))

    def shaft(volt):
        return np.maximum(ckt.solve(many, volt, f, slip).torque_em_nm - fw_torque, 0.0)

    t_rated = float(plates["rated_kw"][0]) * KILOWATT_W / (n_r * RPM_TO_RAD_S)
    _, s_max = ckt.breakdown(circuit, v, f)
    law = str(plates["driven_load"][0])
    op_torque = None if result["torque_pct"] is None else result["torque_pct"] / 100.0 * t_rated
    op_speed = float(record.get("speed_rpm"))
    if op_torque is not None:
        need = typical.BREAKAWAY_TORQUE_PCT[law] / 100.0 * max(op_torque, 0.1 * t_rated)
        load_t = torque_speed.load_torque(n, law, op_speed, op_torque, ns, breakaway_torque=need)
    else:
        load_t = np.full(n.shape, np.nan)
    return {
        "speed_rpm": n, "torque_measured_v_nm": shaft(v), "torque_rated_v_nm": shaft(v_r), "load_torque_nm": load_t,
        "operating_speed_rpm": op_speed if op_torque is not None else None, "operating_torque_nm": op_torque,
        "breakdown_speed_rpm": ns * (1.0 - float(s_max[0])),
        "breakdown_torque_nm": (result["breakdown_torque_now_pct"] or 0.0) / 100.0 * t_rated,
        "rated_torque_nm": t_rated, "sync_speed_rpm": ns, "driven_load": law,
        "measured_voltage_v": v, "rated_voltage_v": v_r,
    }


def _float_or_nan(value) -> float:
    try:
        return float(value)
    except (TypeError, ValueError):
        return math.nan
