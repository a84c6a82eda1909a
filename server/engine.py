"""The interpretation engine: contract fields in, contract results out.

This module parses and validates the contract's columns, fits one circuit per
distinct nameplate (cached), and runs the physics over whole columns at once.
It knows nothing of files, HTTP or SQL: the CLI and the web service call it
with plain columns or records.
"""

from __future__ import annotations

import math
import threading
from collections import OrderedDict
from typing import Any, Iterable, Mapping, Sequence

import numpy as np
import pandas as pd

from . import contract as C
from .physics import circuit as ckt
from .physics import efficiency, efficiency_class, load, speed, supply, torque_speed, typical
from .physics.flags import FLAG_ORDER, Thresholds, describe
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


Thresholds.from_mapping = staticmethod(thresholds_from_mapping)  # type: ignore[attr-defined]


# --------------------------------------------------------------------------- parsing
_CONTROL = "".join(chr(c) for c in range(32)) + "\x7f"


def _column(cols: Mapping[str, Any], name: str, n: int):
    value = cols.get(name)
    if value is None:
        return None
    arr = value if isinstance(value, (np.ndarray, pd.Series)) else np.asarray(value, dtype=object)
    if np.ndim(arr) == 0:
        arr = np.full(n, arr.item() if isinstance(arr, np.ndarray) else arr, dtype=object)
    return arr


class _Errors:
    """First error per row: message and field."""

    def __init__(self, n: int):
        self.message = np.full(n, "", dtype=object)
        self.field = np.full(n, "", dtype=object)

    def add(self, bad, field: str, make_message):
        bad = np.asarray(bad, dtype=bool) & (self.message == "")
        if bad.any():
            idx = np.flatnonzero(bad)
            for i in idx:
                self.message[i] = make_message(i)
                self.field[i] = field

    @property
    def ok(self):
        return self.message == ""


def _to_float(raw, n: int, name: str, errors: _Errors):
    if raw is None:
        return np.full(n, np.nan)
    if isinstance(raw, (pd.Series, np.ndarray)) and np.asarray(raw).dtype.kind in "fiub":
        return np.asarray(raw, dtype=float)
    obj = np.asarray(raw, dtype=object)
    blank = pd.isna(pd.Series(obj)).to_numpy() | np.array(
        [isinstance(v, str) and v.strip() == "" for v in obj], dtype=bool)
    # booleans are not numbers here
    is_bool = np.array([isinstance(v, (bool, np.bool_)) for v in obj], dtype=bool)
    num = pd.to_numeric(pd.Series(np.where(blank | is_bool, np.nan, obj)), errors="coerce").to_numpy(
        dtype=float, copy=True)
    not_number = ~blank & (np.isnan(num) | is_bool)
    # "nan" typed as text is a number to pandas; treat it as not a number
    text_nan = np.array([isinstance(v, str) and v.strip().lower() in ("nan", "+nan", "-nan") for v in obj],
                        dtype=bool)
    not_number |= text_nan & ~blank
    errors.add(not_number, name, lambda i: f"{name}: {_show(obj[i])} is not a number")
    num[not_number] = np.nan
    return num


def _show(value) -> str:
    text = str(value)
    if len(text) > 40:
        text = text[:37] + "..."
    return repr(text)


def _check_range(values, spec: C.NumberField, errors: _Errors, present=None):
    with np.errstate(invalid="ignore"):
        outside = ~np.isnan(values) & ((values < spec.low) | (values > spec.high) | ~np.isfinite(values))
    errors.add(outside, spec.name,
               lambda i: f"{spec.name} = {values[i]:g} is outside the allowed range {spec.range_text()}")
    if spec.integer:
        frac = ~np.isnan(values) & np.isfinite(values) & (values != np.round(values))
        errors.add(frac, spec.name, lambda i: f"{spec.name} = {values[i]:g} must be a whole number "
                                              f"({spec.range_text()})")
    if spec.required:
        errors.add(np.isnan(values), spec.name,
                   lambda i: f"{spec.name} is required ({spec.range_text()})")


def _parse_text(raw, n: int):
    if raw is None:
        return np.full(n, "", dtype=object)
    obj = np.asarray(raw, dtype=object)
    out = np.empty(n, dtype=object)
    for i, v in enumerate(obj):
        out[i] = "" if v is None or (isinstance(v, float) and math.isnan(v)) else str(v).strip()
    return out


def _parse_choice(raw, n: int, spec: C.ChoiceField, errors: _Errors, upper: bool):
    text = _parse_text(raw, n)
    norm = np.array([t.upper() if upper else t.lower() for t in text], dtype=object)
    bad = (norm != "") & ~np.isin(norm, spec.choices)
    errors.add(bad, spec.name, lambda i: f"{spec.name}: {_show(text[i])} is not allowed; "
                                         f"use {spec.range_text()}")
    norm[bad] = ""
    return norm


def _nanmean_present(arrays):
    stack = np.stack(arrays)
    count = (~np.isnan(stack)).sum(axis=0)
    with np.errstate(invalid="ignore", divide="ignore"):
        mean = np.where(count > 0, np.nansum(stack, axis=0) / np.maximum(count, 1), np.nan)
    return mean, count


class _Parsed(dict):
    """Parsed columns by contract name, plus derived nameplate values."""


def _parse(cols: Mapping[str, Any]) -> tuple[_Parsed, _Errors, int]:
    lengths = {len(v) for v in cols.values() if np.ndim(v) > 0}
    if len(lengths) > 1:
        raise ValueError("columns differ in length")
    n = lengths.pop() if lengths else 1
    errors = _Errors(n)
    p = _Parsed()

    tag = _parse_text(_column(cols, "tag", n), n)
    errors.add(tag == "", "tag", lambda i: f"tag is required (1 to {C.TAG_MAX_CHARS} characters)")
    errors.add(np.array([len(t) > C.TAG_MAX_CHARS for t in tag], dtype=bool), "tag",
               lambda i: f"tag is {len(tag[i])} characters long; the allowed length is 1 to {C.TAG_MAX_CHARS}")
    errors.add(np.array([any(ch in _CONTROL for ch in t) for t in tag], dtype=bool), "tag",
               lambda i: "tag contains control characters; use printable text only")
    p["tag"] = tag

    for spec in C.NAMEPLATE_NUMBERS + C.READING_NUMBERS:
        values = _to_float(_column(cols, spec.name, n), n, spec.name, errors)
        if spec.default is not None:
            values = np.where(np.isnan(values), spec.default, values)
        _check_range(values, spec, errors)
        p[spec.name] = values
    for spec in C.NAMEPLATE_CHOICES:
        p[spec.name] = _parse_choice(_column(cols, spec.name, n), n, spec, errors, upper=spec.name == "design")
    p["taken_at"] = _parse_text(_column(cols, "taken_at", n), n)

    # rated power: kW or hp
    kw, hp = p["rated_power_kw"], p["rated_power_hp"]
    hp_kw = hp * HORSEPOWER_W / KILOWATT_W
    both = ~np.isnan(kw) & ~np.isnan(hp)
    with np.errstate(invalid="ignore", divide="ignore"):
        disagree = both & (np.abs(kw / hp_kw - 1.0) > 0.02)
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
    p["poles_used"] = poles
    ns_r = speed.synchronous_speed_rpm(f_r, poles)
    s_r = speed.slip_pu(n_r, ns_r)
    with np.errstate(invalid="ignore"):
        bad_slip = ~np.isnan(s_r) & ((s_r <= 0.001) | (s_r > 0.20))
    errors.add(bad_slip, "rated_speed_rpm",
               lambda i: f"rated_speed_rpm = {n_r[i]:g} gives a rated slip of {100 * s_r[i]:.2g} % against "
                         f"{ns_r[i]:g} rpm synchronous ({poles[i]:g} poles at {f_r[i]:g} Hz); "
                         "the allowed rated slip is 0.1 to 20 %")
    p["sync_rated_rpm"] = ns_r
    p["rated_slip"] = s_r

    # power balance of the nameplate: P = sqrt(3) V I pf eta
    v_r, i_r = p["rated_voltage_v"], p["rated_current_a"]
    apparent = SQRT3 * v_r * i_r
    p_out = p["rated_kw"] * KILOWATT_W
    pf_np = p["rated_power_factor"]
    eta_np = p["rated_efficiency_pct"] / 100.0
    eta_typ = efficiency_class.typical_efficiency_pct(p["rated_kw"], poles, f_r) / 100.0
    with np.errstate(invalid="ignore", divide="ignore"):
        eta = np.where(np.isnan(eta_np), np.where(np.isnan(pf_np), eta_typ, p_out / (apparent * pf_np)), eta_np)
        pf = p_out / (apparent * eta)
        # neither given and the typical efficiency gives an odd PF: use the typical PF instead
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
    p["eta_used"] = eta
    p["pf_used"] = pf
    p["eta_given"] = ~np.isnan(eta_np)

    # readings
    volts = [p[f] for f in C.VOLTAGE_FIELDS]
    amps = [p[f] for f in C.CURRENT_FIELDS]
    v_mean, v_count = _nanmean_present(volts)
    i_mean, i_count = _nanmean_present(amps)
    on_drive = p["supply"] == "drive"
    errors.add((i_count == 0), "current_l1_a",
               lambda i: "at least one line current is required (current_l1_a, 0 to 10000 A)")
    errors.add((v_count == 0) & ~on_drive, "voltage_l12_v",
               lambda i: "at least one line voltage is required on a mains supply (voltage_l12_v, 10 to 16000 V)")
    with np.errstate(invalid="ignore", divide="ignore"):
        v_ratio = v_mean / v_r
        i_ratio = i_mean / i_r
        low_v = 0.05 if False else 0.5
        bad_v = ~np.isnan(v_ratio) & (((v_ratio < low_v) & ~on_drive) | (v_ratio < 0.05) | (v_ratio > 1.5))
        bad_i = ~np.isnan(i_ratio) & ((i_ratio > 8.0) | (i_ratio <= 0.0))
        f = p["frequency_hz"]
        bad_f = ~on_drive & ~np.isnan(f) & (np.abs(f / f_r - 1.0) > 0.2)
        ns = speed.synchronous_speed_rpm(f, poles)
        bad_n = ~np.isnan(ns) & (p["speed_rpm"] >= 2.0 * ns)
        p_meas = p["power_kw"] * KILOWATT_W
        bad_p = ~np.isnan(p_meas) & (p_meas > 5.0 * p_out / eta)
    vfield = np.where(np.isnan(p["voltage_l12_v"]), np.where(np.isnan(p["voltage_l23_v"]), "voltage_l31_v",
                                                             "voltage_l23_v"), "voltage_l12_v")
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
               lambda i: f"speed_rpm = {p['speed_rpm'][i]:g} is more than twice synchronous speed "
                         f"({ns[i]:g} rpm): allowed below {2 * ns[i]:g} rpm; re-read the tachometer")
    errors.add(bad_p, "power_kw",
               lambda i: f"power_kw = {p['power_kw'][i]:g} is more than five times the rated input "
                         f"({p_out[i] / eta[i] / 1000:.3g} kW)")
    p["v_mean"], p["v_count"], p["i_mean"], p["i_count"] = v_mean, v_count, i_mean, i_count
    p["on_drive"] = on_drive
    return p, errors, n


# --------------------------------------------------------------------------- circuit cache
_CACHE_LIMIT = 20000
_cache: "OrderedDict[tuple, tuple]" = OrderedDict()
_cache_lock = threading.Lock()
_FIT_INPUTS = ("rated_kw", "rated_voltage_v", "rated_current_a", "rated_frequency_hz", "poles_used",
               "rated_speed_rpm", "pf_used", "eta_used", "bd_ratio", "x1_share")


def _fit_for_rows(p: _Parsed) -> ckt.Circuit:
    """One fitted circuit per row, fitting each distinct nameplate once (and caching it)."""
    mat = np.column_stack([np.asarray(p[k], dtype=float) for k in _FIT_INPUTS])
    n = mat.shape[0]
    bits = np.ascontiguousarray(mat).view(np.uint64)
    weights = (np.arange(1, mat.shape[1] + 1, dtype=np.uint64) * np.uint64(0x9E3779B97F4A7C15)) | np.uint64(1)
    with np.errstate(over="ignore"):
        h = (bits * weights).sum(axis=1, dtype=np.uint64) ^ (bits[:, 0] >> np.uint64(7))
    uniq_h, first, inverse = np.unique(h, return_index=True, return_inverse=True)
    keys = [tuple(mat[i]) for i in first]
    rows = [None] * len(keys)
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
        sub = mat[[first[j] for j in missing]]
        kw, v, i, f, poles, nr, pf, eta, bd, x1 = sub.T
        fixed = np.full(len(missing), typical.FIXED_LOSS_SHARE)
        fit = ckt.fit_circuit(kw * KILOWATT_W, v, i, f, poles, nr, pf, eta, bd, x1, fixed,
                              typical.friction_windage_share_of_fixed(poles))
        with _cache_lock:
            for k, j in enumerate(missing):
                rows[j] = tuple(np.asarray(a)[k] for a in fit)
                _cache[keys[j]] = rows[j]
                if len(_cache) > _CACHE_LIMIT:
                    _cache.popitem(last=False)
    table = ckt.Circuit(*(np.array(col) for col in zip(*rows)))
    return table.take(inverse.reshape(n))


# --------------------------------------------------------------------------- interpretation
def _empty_results(n: int) -> dict:
    out = {}
    for col in C.RESULT_COLUMNS:
        if col in C.TEXT_RESULT_COLUMNS:
            out[col] = np.full(n, "", dtype=object)
        else:
            out[col] = np.full(n, np.nan)
    return out


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
        Every column of :data:`server.contract.RESULT_COLUMNS`, plus
        ``"_flags"`` (tuple of codes per row) and ``"_findings"`` (list of
        dicts per row). Rows that cannot be interpreted carry ``error`` and
        ``error_field`` and no results.
    """
    th = thresholds or Thresholds()
    p, errors, n = _parse(cols)
    out = _empty_results(n)
    out["engine_version"][:] = C.ENGINE_VERSION
    ok = errors.ok
    idx = np.flatnonzero(ok)
    flags_per_row = np.empty(n, dtype=object)
    findings_per_row = np.empty(n, dtype=object)
    flags_per_row[:] = [()] * n
    findings_per_row[:] = [[] for _ in range(n)] if n < 1000 else [[]] * n
    if idx.size:
        sub = _Parsed({k: (np.asarray(v)[idx] if np.ndim(v) else v) for k, v in p.items()})
        res, codes, finds, inverse = _interpret_valid(sub, th)
        for col, values in res.items():
            out[col][idx] = values
        flag_text = np.array([";".join(c) for c in codes], dtype=object)
        find_text = np.array([" | ".join(f"{d['flag']}: {d['text']}" + (f" Caution: {d['caution']}"
                                                                        if d["caution"] else "")
                                         for d in fl) for fl in finds], dtype=object)
        out["flags"][idx] = flag_text[inverse]
        out["findings"][idx] = find_text[inverse]
        codes_arr = np.empty(len(codes), dtype=object)
        codes_arr[:] = codes
        finds_arr = np.empty(len(finds), dtype=object)
        finds_arr[:] = finds
        flags_per_row[idx] = codes_arr[inverse]
        findings_per_row[idx] = finds_arr[inverse]
    out["error"] = errors.message
    out["error_field"] = errors.field
    out["_flags"] = flags_per_row
    out["_findings"] = findings_per_row
    return out


def _interpret_valid(p: _Parsed, th: Thresholds):
    n = len(p["tag"])
    circuit = _attach_fit_inputs(p)
    poles = p["poles_used"]
    f, f_r = p["frequency_hz"], p["rated_frequency_hz"]
    v_r, i_r = p["rated_voltage_v"], p["rated_current_a"]
    n_meas, n_r = p["speed_rpm"], p["rated_speed_rpm"]
    on_drive = p["on_drive"]
    p_rated_w = p["rated_kw"] * KILOWATT_W
    ns = speed.synchronous_speed_rpm(f, poles)
    ns_r = p["sync_rated_rpm"]
    s = speed.slip_pu(n_meas, ns)
    slip_rpm = speed.slip_rpm(n_meas, ns)
    s_r = p["rated_slip"]
    above = s <= 0.0
    # voltage: measured, or on a drive without a reading the V/f the drive applies
    v_expected_drive = v_r * np.minimum(f / f_r, 1.0)
    v = np.where(np.isnan(p["v_mean"]), v_expected_drive, p["v_mean"])
    flux = (v / f) / (v_r / f_r)
    speed_ratio = n_meas / n_r
    i_meas = p["i_mean"]

    # --- load, three methods ------------------------------------------------------
    slip_equiv = np.where(on_drive, slip_rpm, s * ns_r)
    rated_slip_rpm = s_r * ns_r
    flux_slip = np.where(on_drive, flux, v / v_r)
    torque_slip, out_slip = load.slip_method(slip_equiv, rated_slip_rpm, flux_slip, speed_ratio, p["rated_kw"],
                                             p["tachometer_resolution_rpm"], p["voltage_accuracy_pct"],
                                             p["minutes_running"], on_drive)
    i0 = ckt.no_load_current_a(circuit, v, f)
    i0_r = ckt.no_load_current_a(circuit, v_r, f_r)
    out_current = load.current_method(i_meas, i_r, i0, i0_r, flux, speed_ratio, p["current_accuracy_pct"])

    budget = efficiency.rated_loss_budget(p_rated_w, p["eta_used"], s_r, typical.FIXED_LOSS_SHARE,
                                          typical.friction_windage_share_of_fixed(poles))
    freq_ratio = f / f_r
    core_now = budget.core_w * flux ** 2 * freq_ratio
    fw_now = budget.friction_windage_w * speed_ratio ** 2
    current_ratio = i_meas / i_r
    stator_now = budget.stator_w * current_ratio ** 2
    pk = p["power_kw"] * KILOWATT_W
    measured_v = ~np.isnan(p["v_mean"])
    from_vipf = load.input_power_w(p["v_mean"], i_meas, p["power_factor"])
    p_in = np.where(np.isnan(pk), from_vipf, pk)
    with np.errstate(divide="ignore", invalid="ignore"):
        acc_vipf = 100.0 * np.sqrt((p["voltage_accuracy_pct"] / 100) ** 2 + (p["current_accuracy_pct"] / 100) ** 2
                                   + (load.POWER_FACTOR_ACCURACY / p["power_factor"]) ** 2)
    p_acc = np.where(np.isnan(pk), acc_vipf, p["power_accuracy_pct"])
    share = typical.FIXED_LOSS_SHARE
    out_power = load.input_power_method(
        p_in, p_acc, core_now, fw_now, stator_now, s, p_rated_w,
        fixed_loss_band=(typical.FIXED_LOSS_SHARE_LOW / share, typical.FIXED_LOSS_SHARE_HIGH / share))
    del measured_v

    nan_if_above = lambda e: load.Estimate(*(np.where(above, np.nan, a) for a in e))  # noqa: E731
    methods = [nan_if_above(out_slip), nan_if_above(out_current), nan_if_above(out_power)]
    scaled = [load.Estimate(e.value, e.value - (e.value - e.low) * th.inconsistency_factor,
                            e.value + (e.high - e.value) * th.inconsistency_factor) for e in methods]
    fused, _, _ = load.fuse(methods)
    _, consistent, outlier = load.fuse(scaled)
    load_pu = fused.value
    torque_pu = load_pu / speed_ratio
    torque_low = fused.low / speed_ratio
    torque_high = fused.high / speed_ratio

    # --- circuit at the operating point --------------------------------------------
    with np.errstate(invalid="ignore", divide="ignore"):
        op = ckt.solve(circuit, v, f, np.where(above, np.nan, s))
        t_em_max, s_max = ckt.breakdown(circuit, v, f)
        omega_r = n_r * RPM_TO_RAD_S
        t_rated = p_rated_w / omega_r
        t_fw = fw_now / np.maximum(n_meas * RPM_TO_RAD_S, 1e-9)
        bd_pct = 100.0 * (t_em_max - t_fw) / t_rated
        margin = torque_speed.breakdown_margin(bd_pct, np.maximum(100.0 * torque_pu, 1.0))
        # stability: motor slope by central difference on the circuit curve
        ds = np.maximum(1e-4, 0.02 * np.abs(s))
        t_minus = ckt.solve(circuit, v, f, s - ds).torque_em_nm
        t_plus = ckt.solve(circuit, v, f, s + ds).torque_em_nm
        motor_slope = (t_minus - t_plus) / (2.0 * ds * ns)      # dT/dn [N m per rpm]
        load_slope = torque_speed.load_torque_slope(p["driven_load"], n_meas, torque_pu * t_rated)
        stable = torque_speed.is_stable(motor_slope, load_slope) & (s < s_max)
        side = np.where(above | np.isnan(load_pu), "", np.where(stable, "stable", "unstable"))
        lrt_pct = np.where(np.isnan(p["locked_rotor_torque_pct"]),
                           typical.lookup(typical.LOCKED_ROTOR_TORQUE_PCT, p["design"]), p["locked_rotor_torque_pct"])
        lrt_now = lrt_pct * (v / v_r) ** 2
        need = typical.lookup(typical.BREAKAWAY_TORQUE_PCT, p["driven_load"]) / 100.0 * \
            np.maximum(100.0 * torque_pu, 10.0)
        starting = np.where(on_drive, np.nan, lrt_now / need)

    # --- efficiency -------------------------------------------------------------------
    budgets = tuple(efficiency.rated_loss_budget(p_rated_w, p["eta_used"], s_r, share_k,
                                                 typical.friction_windage_share_of_fixed(poles))
                    for share_k in (typical.FIXED_LOSS_SHARE, typical.FIXED_LOSS_SHARE_LOW,
                                    typical.FIXED_LOSS_SHARE_HIGH))
    eta, eta_lo, eta_hi = efficiency.efficiency_band(
        budgets, load_pu * p_rated_w, fused.low * p_rated_w, fused.high * p_rated_w, flux, freq_ratio,
        speed_ratio, current_ratio, p["current_accuracy_pct"], s)
    eff_class = efficiency_class.efficiency_class(p["rated_kw"], poles, f_r, p["rated_efficiency_pct"])

    # --- supply ---------------------------------------------------------------------------
    vu = supply.max_deviation_unbalance_pct(p["voltage_l12_v"], p["voltage_l23_v"], p["voltage_l31_v"])
    vuf = supply.voltage_unbalance_factor_pct(p["voltage_l12_v"], p["voltage_l23_v"], p["voltage_l31_v"])
    iu = supply.max_deviation_unbalance_pct(p["current_l1_a"], p["current_l2_a"], p["current_l3_a"])
    derate = supply.nema_derating_factor(vu)
    v_dev = supply.deviation_pct(p["v_mean"], np.where(on_drive, v_expected_drive, v_r))
    f_dev = np.where(on_drive, np.nan, supply.deviation_pct(f, f_r))
    zone = np.where(on_drive, "drive", supply.iec_zone(v_dev, f_dev))
    nema_design = np.isin(p["design"], ("A", "B", "C", "D"))
    out_of_tol = ~on_drive & np.where(nema_design, ~supply.within_nema_tolerance(v_dev, f_dev), zone != "A")

    # --- flags ------------------------------------------------------------------------------
    basis = np.where(on_drive, torque_pu, load_pu) * 100.0
    with np.errstate(invalid="ignore"):
        flag_arrays = {
            "speed_above_synchronous": above,
            "overloaded": basis > th.overloaded_pct,
            "over_service_factor": basis > 100.0 * p["service_factor"],
            "near_breakdown": ~above & ((margin < th.near_breakdown_margin) | (side == "unstable")),
            "underloaded": basis < th.underloaded_pct,
            "supply_out_of_tolerance": out_of_tol,
            "voltage_unbalance": vu > th.voltage_unbalance_pct,
            "current_unbalance": iu > th.current_unbalance_pct,
            "readings_inconsistent": ~above & ~consistent,
            "starting_torque_low": ~above & np.isin(p["driven_load"], ("constant_torque", "high_breakaway"))
                                   & (starting < th.starting_margin),
        }
    assert tuple(flag_arrays) == FLAG_ORDER or set(flag_arrays) == set(FLAG_ORDER)
    codes, finds, inverse = describe(flag_arrays, np.where(consistent, -1, outlier), on_drive, th)

    res = {
        "poles": poles,
        "sync_speed_rpm": ns,
        "slip_pct": 100.0 * s,
        "slip_rpm": slip_rpm,
        "load_pct": 100.0 * load_pu,
        "load_low_pct": 100.0 * fused.low,
        "load_high_pct": 100.0 * fused.high,
        "load_slip_pct": 100.0 * methods[0].value,
        "load_current_pct": 100.0 * methods[1].value,
        "load_power_pct": 100.0 * methods[2].value,
        "output_kw": load_pu * p["rated_kw"],
        "torque_pct": 100.0 * torque_pu,
        "torque_low_pct": 100.0 * torque_low,
        "torque_high_pct": 100.0 * torque_high,
        "efficiency_pct": 100.0 * eta,
        "efficiency_low_pct": 100.0 * eta_lo,
        "efficiency_high_pct": 100.0 * eta_hi,
        "efficiency_class": eff_class,
        "voltage_unbalance_pct": vu,
        "voltage_unbalance_factor_pct": vuf,
        "current_unbalance_pct": iu,
        "derating_factor": derate,
        "voltage_deviation_pct": v_dev,
        "frequency_deviation_pct": f_dev,
        "supply_zone": zone,
        "breakdown_margin": np.where(above, np.nan, margin),
        "predicted_current_a": op.current_a,
        "predicted_power_factor": op.power_factor,
        "breakdown_torque_pct": bd_pct,
        "starting_margin": np.where(above, np.nan, starting),
        "operating_side": side,
    }
    return res, codes, finds, inverse


def _attach_fit_inputs(p: _Parsed) -> ckt.Circuit:
    bd = np.where(np.isnan(p["breakdown_torque_pct"]),
                  typical.lookup(typical.BREAKDOWN_TORQUE_PCT, p["design"]), p["breakdown_torque_pct"])
    p["bd_ratio"] = bd / 100.0
    p["x1_share"] = typical.lookup(typical.LEAKAGE_STATOR_SHARE, p["design"])
    return _fit_for_rows(p)


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
    row["flags"] = list(out["_flags"][i])
    row["findings"] = list(out["_findings"][i])
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
        ``rated_torque_nm``, ``sync_speed_rpm``; and ``driven_load``.
    """
    result = interpret_one(record, thresholds)
    p, errors, _ = _parse(_records_to_columns([record]))
    circuit = _attach_fit_inputs(p)
    f = p["frequency_hz"]
    v_r = p["rated_voltage_v"]
    v = np.where(np.isnan(p["v_mean"]), v_r * np.minimum(f / p["rated_frequency_hz"], 1.0), p["v_mean"])
    ns = float(speed.synchronous_speed_rpm(f, p["poles_used"])[0])
    slip = np.concatenate([np.geomspace(1e-4, 1.0, points - 1), [0.0]])[::-1]
    slip = np.sort(slip)[::-1]
    n = ns * (1.0 - slip)
    fw = circuit.friction_windage_w[0]
    n_r = float(p["rated_speed_rpm"][0])
    omega = np.maximum(n * RPM_TO_RAD_S, 1e-6)
    fw_torque = fw * (n / n_r) ** 2 / omega

    def shaft(volts):
        t = ckt.solve(circuit.take(np.zeros(slip.size, dtype=int)), volts, f[0], slip).torque_em_nm
        return np.maximum(t - fw_torque, 0.0)

    t_meas = shaft(float(v[0]))
    t_rated_v = shaft(float(v_r[0]))
    t_rated = float(p["rated_kw"][0]) * KILOWATT_W / (n_r * RPM_TO_RAD_S)
    t_max, s_max = ckt.breakdown(circuit, v, f)
    bd_speed = ns * (1.0 - float(s_max[0]))
    bd_torque = (result["breakdown_torque_pct"] or 0.0) / 100.0 * t_rated
    op_speed = float(p["speed_rpm"][0])
    op_torque = None if result["torque_pct"] is None else result["torque_pct"] / 100.0 * t_rated
    law = str(p["driven_load"][0])
    if op_torque is not None:
        lrt_need = typical.BREAKAWAY_TORQUE_PCT[law] / 100.0 * max(op_torque, 0.1 * t_rated)
        load_t = torque_speed.load_torque(n, law, op_speed, op_torque, ns, breakaway_torque=lrt_need)
    else:
        load_t = np.full(n.shape, np.nan)
    return {
        "speed_rpm": n, "torque_measured_v_nm": t_meas, "torque_rated_v_nm": t_rated_v, "load_torque_nm": load_t,
        "operating_speed_rpm": op_speed if op_torque is not None else None,
        "operating_torque_nm": op_torque, "breakdown_speed_rpm": bd_speed, "breakdown_torque_nm": bd_torque,
        "rated_torque_nm": t_rated, "sync_speed_rpm": ns, "driven_load": law,
        "measured_voltage_v": float(v[0]), "rated_voltage_v": float(v_r[0]),
    }
