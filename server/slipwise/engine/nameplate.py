"""Nameplates: grouping rows by nameplate, validation, derivation and the circuit fit.

Rows sharing one nameplate (a hash of the nameplate columns) are validated
and derived once; one circuit is fitted per distinct nameplate and kept in an
in-process LRU cache (:data:`CIRCUIT_CACHE_SIZE` entries), and a single
nameplate (the service's case) is kept parsed in a second one
(:data:`PLATE_CACHE_SIZE`).
"""

from __future__ import annotations

import threading
from typing import Any, Mapping

import numpy as np
import pandas as pd
from cachetools import LRUCache

from .. import contract as C
from ..physics import circuit as ckt
from ..physics import efficiency, efficiency_class, speed, typical
from ..physics.units import HORSEPOWER_W, KILOWATT_W
from .inputs import Parsed, RowErrors, choice_column, column, number_columns, tag_column

#: Fitted circuits kept (one per distinct nameplate) and parsed single nameplates kept.
CIRCUIT_CACHE_SIZE = 20000
PLATE_CACHE_SIZE = 4096
_circuit_cache: LRUCache = LRUCache(maxsize=CIRCUIT_CACHE_SIZE)
_plate_cache: LRUCache = LRUCache(maxsize=PLATE_CACHE_SIZE)
_cache_lock = threading.Lock()


#: Largest share of the rated losses an *assumed* efficiency may leave to the rotor copper [-]:
#: with neither efficiency nor power factor on the nameplate, the typical efficiency is capped at
#: ``max_efficiency_for_slip(s_r, 0.75)``, a quarter of the losses kept for stator copper, core,
#: friction and stray load (project judgement; the nameplate check allows 0.9 for the user's own
#: numbers, :data:`slipwise.physics.efficiency.ROTOR_LOSS_SHARE_MAX`).
ASSUMED_ROTOR_LOSS_SHARE_MAX = 0.75
#: Rotor copper share of the losses at the low end of such a capped efficiency's band [-]
#: (catalogue motors run 0.2-0.5 at rated load; common practice, from memory).
ASSUMED_ROTOR_LOSS_SHARE_LOW = 0.5


def _given(raw, n: int) -> np.ndarray:
    """Where a cell holds something (not None, NaN or blank text) [bool per row]."""
    if raw is None:
        return np.zeros(n, dtype=bool)
    arr = pd.Series(np.broadcast_to(np.asarray(raw, dtype=object), (n,)), dtype=object)
    blank = arr.isna() | arr.map(lambda x: isinstance(x, str) and not x.strip())
    return ~blank.to_numpy(dtype=bool)


def _distinct(a: float, b: float) -> tuple[str, str]:
    """Two numbers as text with just enough decimals that they read differently (when they differ)."""
    for places in range(1, 7):
        x, y = f"{a:.{places}f}", f"{b:.{places}f}"
        if x != y:
            return x, y
    return x, y


def clear_caches() -> None:
    """Forget every fitted circuit and parsed nameplate (benchmarks start cold with it)."""
    with _cache_lock:
        _circuit_cache.clear()
        _plate_cache.clear()


def group_nameplates(cols: Mapping[str, Any], n: int):
    """Rows sharing one nameplate: (first row of each, row -> nameplate index)."""
    if n == 1:
        return np.zeros(1, dtype=np.int64), np.zeros(1, dtype=np.int64)
    h = np.zeros(n, dtype=np.uint64)
    mult = np.uint64(0x100000001B3)
    with np.errstate(over="ignore"):
        for name in C.NAMEPLATE_FIELDS:
            raw = column(cols, name, n)
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


def parse_nameplates(cols: Mapping[str, Any], n: int) -> tuple[Parsed, RowErrors]:
    """Validate distinct nameplates and derive everything that depends on them alone."""
    errors = RowErrors(n)
    p = Parsed()
    p["tag"] = tag_column(column(cols, "tag", n), n, errors)
    number_columns(C.NAMEPLATE_NUMBERS, cols, n, errors, p)
    for spec in C.NAMEPLATE_CHOICES:
        p[spec.name] = choice_column(column(cols, spec.name, n), n, spec, errors, upper=spec.name == "design")

    # a service factor the nameplate gives (the contract's default 1.0 fills a blank one)
    p["service_factor_given"] = _given(column(cols, "service_factor", n), n)
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
    # a rated speed typed as the synchronous speed (1500 at 50 Hz): the pole guess then falls one pair short,
    # so say what the number is instead of blaming a 50 % slip on a 2-pole motor
    with np.errstate(invalid="ignore", divide="ignore"):
        sync_typed = np.isnan(p["poles"]) & np.isclose(n_r, speed.synchronous_speed_rpm(f_r, poles + 2.0))
    errors.add(bad_slip & sync_typed, "rated_speed_rpm",
               lambda i: f"rated_speed_rpm = {n_r[i]:g} is the synchronous speed of a {poles[i] + 2:g}-pole motor at "
                         f"{f_r[i]:g} Hz, not its rated speed: the nameplate's rated (full-load) speed is a little "
                         f"lower, for instance {n_r[i] * 0.97:.0f} rpm; the allowed rated slip is 0.1 to 20 %")
    errors.add(bad_slip & ~sync_typed, "rated_speed_rpm",
               lambda i: f"rated_speed_rpm = {n_r[i]:g} gives a rated slip of {100 * s_r[i]:.2g} % against "
                         f"{ns_r[i]:g} rpm synchronous ({poles[i]:g} poles at {f_r[i]:g} Hz); "
                         "the allowed rated slip is 0.1 to 20 %")
    p["poles_used"], p["sync_rated_rpm"], p["rated_slip"] = poles, ns_r, s_r

    # power balance of the nameplate: P = sqrt(3) V I pf eta
    v_r, i_r = p["rated_voltage_v"], p["rated_current_a"]
    apparent = efficiency.apparent_power_va(v_r, i_r)
    p_out = p["rated_kw"] * KILOWATT_W
    pf_np = p["rated_power_factor"]
    eta_np = p["rated_efficiency_pct"] / 100.0
    with np.errstate(invalid="ignore", divide="ignore"):
        eta_typ = efficiency_class.typical_efficiency_pct(np.nan_to_num(p["rated_kw"], nan=1.0),
                                                          np.nan_to_num(poles, nan=4.0),
                                                          np.nan_to_num(f_r, nan=50.0)) / 100.0
        eta = np.where(np.isnan(eta_np), np.where(np.isnan(pf_np), eta_typ,
                                                  efficiency.balance_factor(p_out, apparent, pf_np)), eta_np)
        pf = efficiency.balance_factor(p_out, apparent, eta)
        neither = np.isnan(eta_np) & np.isnan(pf_np)
        pf_typ = typical.typical_power_factor(p["rated_kw"], poles)
        swap = neither & ((pf < 0.30) | (pf > 0.97))
        pf = np.where(swap, pf_typ, pf)
        eta = np.where(swap, efficiency.balance_factor(p_out, apparent, pf_typ), eta)
        # with neither on the nameplate the efficiency is ours, not the user's: it yields to what the
        # rated slip allows (capped with a margin) instead of refusing the nameplate
        eta_cap = efficiency.max_efficiency_for_slip(s_r, ASSUMED_ROTOR_LOSS_SHARE_MAX)
        capped = neither & (eta > eta_cap)
        eta = np.where(capped, eta_cap, eta)
        pf = np.where(capped, efficiency.balance_factor(p_out, apparent, eta), pf)
        expected_i = efficiency.line_current_a(p_out, v_r, np.where(np.isnan(pf_np), pf, pf_np), eta)
        bad_balance = ~np.isnan(pf) & ((pf < 0.30) | (pf > 0.97) | (eta < 0.40) | (eta > 0.99)
                                       | (~np.isnan(pf_np) & ~np.isnan(eta_np) & (np.abs(pf - pf_np) > 0.12)))
    errors.add(bad_balance, "rated_current_a",
               lambda i: f"rated_current_a = {i_r[i]:g} does not fit the nameplate's power, voltage, "
                         f"efficiency and power factor (about {expected_i[i]:.3g} A expected); check the "
                         "nameplate (dual-voltage motors list a current per voltage)")
    # rotor copper loss alone is s/(1 - s) of the mechanical power: an efficiency that leaves less
    # than that (plus a tenth for the stator) is not a real motor's
    with np.errstate(invalid="ignore", divide="ignore"):
        losses = efficiency.losses_w(p_out, eta)
        rotor_loss = efficiency.rotor_copper_loss_w(s_r, p_out)
        impossible = ~bad_balance & ~np.isnan(losses) & (rotor_loss > efficiency.ROTOR_LOSS_SHARE_MAX * losses)
        eta_max = efficiency.max_efficiency_for_slip(s_r)
    # only the user's own numbers are left to contradict each other here: name them
    def impossible_text(i):
        if np.isnan(eta_np[i]):
            given = (f"the efficiency implied by rated_power_kw = {p['rated_kw'][i]:g}, rated_voltage_v = "
                     f"{v_r[i]:g}, rated_current_a = {i_r[i]:g} and rated_power_factor = {pf_np[i]:g}")
        else:
            given = "rated_efficiency_pct"
        most, value = _distinct(100 * eta_max[i], 100 * eta[i])
        return (f"rated_speed_rpm = {n_r[i]:g} means a rated slip of {100 * s_r[i]:.3g} %, which allows at most "
                f"{most} % efficiency (rotor copper loss alone is s/(1-s) of the output), but {given} is "
                f"{value} %; check these numbers on the nameplate")
    errors.add(impossible, "rated_speed_rpm", impossible_text)
    p["eta_used"], p["pf_used"] = eta, pf
    # an assumed efficiency capped by the slip: the true one may lie anywhere from where the rotor copper
    # takes half the losses up to the physical limit (the loss budgets' band spans it)
    p["eta_band_low"] = np.where(capped, efficiency.max_efficiency_for_slip(s_r, ASSUMED_ROTOR_LOSS_SHARE_LOW), eta)
    p["eta_band_high"] = np.where(capped, efficiency.max_efficiency_for_slip(s_r), eta)
    given_bd = p["breakdown_torque_pct"]
    bd = np.where(np.isnan(given_bd), typical.typical_breakdown_torque_pct(p["rated_kw"], poles, p["design"]),
                  given_bd)
    p["bd_ratio"] = bd / 100.0
    p["bd_pct"] = bd
    p["bd_low_pct"] = typical.breakdown_torque_low_pct(given_bd, p["rated_kw"], poles, p["design"])
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


def nameplates(plate_cols: Mapping[str, Any], n: int) -> tuple[Parsed, RowErrors]:
    """Parsed and derived nameplates; a single nameplate (the service's case) is cached."""
    key = None
    if n == 1:
        key = tuple(sorted((k, type(v[0]).__name__, repr(v[0])) for k, v in plate_cols.items()))
        with _cache_lock:
            hit = _plate_cache.get(key)
            if hit is not None:
                return hit
    plates, errors = parse_nameplates(plate_cols, n)
    _derive_nameplates(plates, errors.ok)
    if key is not None:
        with _cache_lock:
            _plate_cache[key] = (plates, errors)
    return plates, errors


def _derive_nameplates(p: Parsed, ok: np.ndarray) -> None:
    """Circuit fit and loss budgets of the valid nameplates (in place)."""
    idx = np.flatnonzero(ok)
    sub = Parsed({k: np.asarray(v)[idx] for k, v in p.items()})
    circuit = _fit_for_rows(sub)
    p_out = sub["rated_kw"] * KILOWATT_W
    # the band's budgets: a low fixed-loss share with the lowest credible efficiency (most losses) and a
    # high one with the highest (equal to the central efficiency unless it was assumed and capped)
    budgets = tuple(efficiency.rated_loss_budget(p_out, sub[eta], sub["rated_slip"], share, sub["fw_share"])
                    for share, eta in ((typical.FIXED_LOSS_SHARE, "eta_used"),
                                       (typical.FIXED_LOSS_SHARE_LOW, "eta_band_low"),
                                       (typical.FIXED_LOSS_SHARE_HIGH, "eta_band_high")))
    i0_r = ckt.no_load_current_a(circuit, sub["rated_voltage_v"], sub["rated_frequency_hz"])
    p["_valid_index"] = idx
    p["_valid"] = sub
    p["_circuit"] = circuit
    p["_budgets"] = budgets
    p["_i0_rated"] = i0_r


_FIT_INPUTS = ("rated_kw", "rated_voltage_v", "rated_current_a", "rated_frequency_hz", "poles_used",
               "rated_speed_rpm", "pf_used", "eta_used", "bd_ratio", "x1_share", "fw_share", "lrt_ratio")


def _fit_for_rows(p: Parsed) -> ckt.Circuit:
    """One fitted circuit per distinct nameplate, from the cache where it is there."""
    mat = np.column_stack([np.asarray(p[k], dtype=float) for k in _FIT_INPUTS])
    keys = [tuple(row) for row in mat.tolist()]
    rows: list = [None] * len(keys)
    missing = []
    with _cache_lock:
        for j, key in enumerate(keys):
            hit = _circuit_cache.get(key)
            if hit is None:
                missing.append(j)
            else:
                rows[j] = hit
    if missing:
        kw, v, i, f, poles, nr, pf, eta, bd, x1, fw, lrt = mat[missing].T
        fit = ckt.fit_circuit(kw * KILOWATT_W, v, i, f, poles, nr, pf, eta, bd, x1,
                              np.full(len(missing), typical.FIXED_LOSS_SHARE), fw, locked_rotor_ratio=lrt)
        with _cache_lock:
            for k, j in enumerate(missing):
                rows[j] = tuple(np.asarray(a)[k] for a in fit)
                _circuit_cache[keys[j]] = rows[j]
    if not rows:
        return ckt.Circuit(*(np.empty(0) for _ in ckt.Circuit._fields))
    return ckt.Circuit(*(np.array(col) for col in zip(*rows)))


