"""The per-row run: contract columns in, result columns out, in chunks on a thread pool.

Orchestration only: every formula it applies is a function of
:mod:`slipwise.physics`. Nameplates are grouped and fitted once
(:mod:`.nameplate`), readings parsed and cross-checked (:mod:`.readings`),
then the physics runs over whole columns, :data:`CHUNK_ROWS` rows at a time.
"""

from __future__ import annotations

import os
import threading
from typing import Any, Mapping

import numpy as np
import pandas as pd

from .. import contract as C
from ..physics import circuit as ckt
from ..physics import efficiency, load, meter, speed, supply, torque_speed, typical
from ..physics.flags import Thresholds, combination_mask
from ..physics.units import KILOWATT_W
from .energy import energy_columns   # issue 11
from .findings import describe, findings_text, limit_codes
from .verdicts import judge
from .inputs import Parsed, column, column_length, filled
from .nameplate import group_nameplates, nameplates
from .readings import parse_readings
from .sheet import judge_tests, parse_tests, reading_dates

#: Rows per chunk: arrays of this size stay in cache, and chunks run on two threads
#: (numpy releases the GIL in its loops).
CHUNK_ROWS = 32768
_pool = None
_pool_lock = threading.Lock()
_ZONE_TEXT = np.array(supply.ZONE_LABELS, dtype=object)
_SIDE_TEXT = np.array(["", "stable", "unstable"], dtype=object)


def _empty_results(n: int) -> dict:
    """Blank result columns for ``n`` rows (text "" and numbers NaN)."""
    out = {}
    for col in C.RESULT_COLUMNS:
        out[col] = filled(n, "") if col in C.TEXT_RESULT_COLUMNS else np.full(n, np.nan)
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
    n = column_length(cols)
    first, inverse = group_nameplates(cols, n)
    plate_cols = {k: column(cols, k, n)[first] for k in C.NAMEPLATE_FIELDS if cols.get(k) is not None}
    plates, plate_errors = nameplates(plate_cols, len(first))

    errors = plate_errors.take(inverse)
    per_row = ("tag", "rated_voltage_v", "rated_current_a", "rated_frequency_hz", "supply", "poles_used",
               "rated_kw", "eta_used")
    plate_rows = Parsed({k: plates[k][inverse] for k in per_row})
    readings = parse_readings(cols, n, plate_rows, errors)
    readings.update(parse_tests(cols, n, errors))
    readings["_date"] = reading_dates(column(cols, "taken_at", n), n)

    out = _empty_results(n) if not errors.ok.all() else {}
    out["engine_version"] = filled(n, C.ENGINE_VERSION)
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
        valid_readings = Parsed({k: (v if all_valid else v[idx]) for k, v in readings.items() if k != "taken_at"})
        res, mask = _interpret_chunked(plates, fitted, valid_readings, th)
        res["supply_zone"] = _ZONE_TEXT[res.pop("supply_zone_code")]
        res["operating_side"] = _SIDE_TEXT[res.pop("operating_side_code")]
        res["efficiency_class"] = plates["_valid"]["efficiency_class"][fitted]
        combo, combinations = C.distinct_values(mask)
        combinations = np.array(combinations, dtype=np.int64)
        codes, finds = describe(combinations, th)
        for col, values in res.items():
            if all_valid:
                out[col] = values
            else:
                out[col][idx] = values
        flag_text = np.array([";".join(c) for c in codes], dtype=object)
        limit_text = np.array([";".join(c) for c in limit_codes(combinations)], dtype=object)
        find_text = np.array([findings_text(fl) for fl in finds], dtype=object)
        if all_valid:
            out["flags"], out["findings"] = flag_text[combo], find_text[combo]
            out["limit_flags"] = limit_text[combo]
            combo_per_row = combo
        else:
            out["flags"][idx] = flag_text[combo]
            out["findings"][idx] = find_text[combo]
            out["limit_flags"][idx] = limit_text[combo]
            combo_per_row[idx] = combo
    out["error"] = errors.message
    out["error_field"] = errors.field
    # per row: index into the distinct combinations (-1: not interpreted)
    out["_combination"] = combo_per_row
    out["_combination_flags"] = codes
    out["_combination_findings"] = finds
    return out


def _executor():
    """The engine's thread pool, started on first use."""
    global _pool
    with _pool_lock:
        if _pool is None:
            from concurrent.futures import ThreadPoolExecutor
            _pool = ThreadPoolExecutor(max_workers=max(1, min(4, os.cpu_count() or 1)),
                                       thread_name_prefix="slipwise-engine")
        return _pool


def _interpret_chunked(plates: Parsed, fitted: np.ndarray, r: Parsed, th: Thresholds):
    """:func:`_interpret_valid` over chunks of :data:`CHUNK_ROWS` rows on the pool.

    Each chunk writes its results into columns allocated once for every row (by the first
    chunk done, under a lock), so the chunks' results are never concatenated afterwards.
    """
    n = fitted.size
    if n <= CHUNK_ROWS:
        return _interpret_valid(plates, fitted, r, th)
    res: dict = {}
    mask = np.empty(n, dtype=np.int64)
    lock = threading.Lock()

    def run(a: int, b: int) -> None:
        part, part_mask = _interpret_valid(plates, fitted[a:b], Parsed({k: v[a:b] for k, v in r.items()}), th)
        with lock:
            if not res:
                res.update({k: np.empty(n, dtype=np.asarray(v).dtype) for k, v in part.items()})
        for k, v in part.items():
            if np.asarray(v).dtype != res[k].dtype:
                raise TypeError(f"result column {k} changes type between chunks")
            res[k][a:b] = v
        mask[a:b] = part_mask

    jobs = [_executor().submit(run, a, min(a + CHUNK_ROWS, n)) for a in range(0, n, CHUNK_ROWS)]
    for job in jobs:
        job.result()
    return res, mask


def _interpret_valid(plates: Parsed, fitted: np.ndarray, r: Parsed, th: Thresholds):
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
    v_expected_drive = supply.drive_voltage_v(v_r, f, f_r)
    v = np.where(np.isnan(r["v_mean"]), v_expected_drive, r["v_mean"])
    flux = supply.flux_ratio(v, f, v_r, f_r)
    speed_ratio = n_meas / n_r
    freq_ratio = f / f_r
    i_meas = r["i_mean"]
    current_ratio = i_meas / i_r

    # --- load, three methods ------------------------------------------------------------
    # one law on mains and drive: torque ~ (V/f)^2 x slip speed at the measured frequency
    _, out_slip = load.slip_method(slip_rpm, s_r * ns_r, flux, speed_ratio,
                                   rated_kw, r["tachometer_resolution_rpm"], r["voltage_accuracy_pct"],
                                   r["minutes_running"], on_drive)
    # the no-load current at the present flux, with the iron's saturation and its band
    i0, i0_low, i0_high = typical.saturated_no_load_current(i0_r, flux)
    out_current = load.current_method(i_meas, i_r, i0, i0_r, flux, speed_ratio, r["current_accuracy_pct"],
                                      no_load_current_low_a=i0_low, no_load_current_high_a=i0_high)
    central = budgets[0]
    core_now, fw_now, stator_now = efficiency.scaled_losses_w(central, flux, freq_ratio, speed_ratio, current_ratio)
    pk = r["power_kw"] * KILOWATT_W
    p_in = np.where(np.isnan(pk), load.input_power_w(r["v_mean"], i_meas, r["power_factor"]), pk)
    acc_vipf = load.input_power_accuracy_pct(r["voltage_accuracy_pct"], r["current_accuracy_pct"], r["power_factor"])
    p_in_acc = np.where(np.isnan(pk), acc_vipf, meter.reading_accuracy_pct(r["power_accuracy_pct"], r["power_kw"]))
    share = typical.FIXED_LOSS_SHARE
    out_power = load.input_power_method(
        p_in, p_in_acc,
        core_now, fw_now, stator_now, s,
        p_rated_w, fixed_loss_band=(typical.FIXED_LOSS_SHARE_LOW / share, typical.FIXED_LOSS_SHARE_HIGH / share))

    methods = [load.Estimate(*(np.where(above, np.nan, a) for a in e)) for e in (out_slip, out_current, out_power)]
    fused, consistent, outlier = load.fuse(methods)
    if th.inconsistency_factor != 1.0:
        _, consistent, outlier = load.fuse([load.widen(e, th.inconsistency_factor) for e in methods])
    load_pu = fused.value
    torque_pu = torque_speed.torque_from_load(load_pu, speed_ratio)
    at_sync = above & (n_meas - ns <= r["tachometer_resolution_rpm"])

    # --- circuit at the operating point, breakdown, stability -------------------------------
    with np.errstate(invalid="ignore", divide="ignore"):
        op = ckt.solve(circuit, v, f, s_run)
        t_em_max, s_max = ckt.breakdown(circuit, v, f)
        t_rated = torque_speed.torque_nm(p_rated_w, n_r)
        t_fw = torque_speed.torque_nm(fw_now, n_meas)
        bd_pct = torque_speed.shaft_breakdown_torque_pct(t_em_max, t_fw, t_rated)
        torque_low_pct = torque_speed.torque_from_load(100.0 * fused.low, speed_ratio)
        torque_high_pct = torque_speed.torque_from_load(100.0 * fused.high, speed_ratio)
        # central: the circuit's breakdown; pessimistic: the design's lowest credible one at the top of the load band
        margin, margin_low = torque_speed.breakdown_margin_band(bd_pct, pl("bd_pct"), pl("bd_low_pct"),
                                                                100.0 * torque_pu, torque_high_pct)
        # motor slope from the Kloss form through the circuit's breakdown point (documented simplification)
        motor_slope = torque_speed.kloss_slope_nm_per_rpm(s_run, s_max, bd_pct / 100.0 * t_rated, ns)
        load_slope = torque_speed.load_torque_slope(pl("driven_load"), n_meas, torque_pu * t_rated)
        stable = torque_speed.is_stable(motor_slope, load_slope) & (s_run < s_max)
        has_point = ~above & ~np.isnan(load_pu)
        unstable = has_point & ~stable
        # two methods that disagree, the slip method far above the current method: the speed
        # reading is the suspect (a belt pulley or the driven shaft read, the commonest slip
        # error; common practice), as it is where the slip says "past breakdown"
        speed_suspect = (outlier == -2) & ((s_run > s_max) | (methods[0].value > 1.3 * methods[1].value)) \
            & (methods[1].value < 1.2)
        outlier = np.where(speed_suspect, 0, outlier)
        starting = np.where(on_drive | above, np.nan, torque_speed.starting_margin(
            pl("lrt_pct"), v, v_r, pl("breakaway_share"), 100.0 * torque_pu))
        starting_low = np.where(on_drive | above, np.nan, torque_speed.starting_margin(
            pl("lrt_pct"), v, v_r, pl("breakaway_share"), torque_high_pct))

    # --- efficiency --------------------------------------------------------------------------
    eta, eta_lo, eta_hi = efficiency.efficiency_band(
        budgets, load_pu * p_rated_w, fused.low * p_rated_w, fused.high * p_rated_w, flux, freq_ratio,
        speed_ratio, current_ratio, r["current_accuracy_pct"], s, rated_power_kw=rated_kw)

    # --- supply --------------------------------------------------------------------------------
    vu = supply.max_deviation_unbalance_pct(r["voltage_l12_v"], r["voltage_l23_v"], r["voltage_l31_v"])
    vuf = supply.voltage_unbalance_factor_pct(r["voltage_l12_v"], r["voltage_l23_v"], r["voltage_l31_v"])
    iu = supply.max_deviation_unbalance_pct(r["current_l1_a"], r["current_l2_a"], r["current_l3_a"])
    derate = supply.nema_derating_factor(vu)
    v_dev = supply.deviation_pct(r["v_mean"], np.where(on_drive, v_expected_drive, v_r))
    f_dev = np.where(on_drive, np.nan, supply.deviation_pct(f, f_r))
    zone_code = supply.iec_zone_code(v_dev, f_dev)
    zone_code = np.where(on_drive, supply.DRIVE_ZONE_CODE, zone_code)

    # --- the sheet's tests (insulation, winding, relay, vibration, rotation, instruments) -------
    plate_now = {"rated_kw": rated_kw}
    test_cols, test_states, test_facts = judge_tests(r, lambda name: plate_now[name] if name in plate_now else pl(name),
                                                     th, r["_date"])

    # --- states on the verdict scale and the flags (state "beyond") ------------------------------
    basis_low = np.where(on_drive, torque_low_pct, 100.0 * fused.low)
    basis_high = np.where(on_drive, torque_high_pct, 100.0 * fused.high)
    # on a drive a fan or pump turns down by design: judge underload on the torque it would
    # need at rated speed by its square law (common practice)
    project = on_drive & pl("is_variable_torque")
    under_low, under_high = (np.where(project, torque_speed.variable_torque(n_r, n_meas, b), b)
                             for b in (basis_low, basis_high))
    states = judge(th, above=above, at_sync=at_sync, consistent=consistent, basis_low=basis_low,
                   basis_high=basis_high, under_low=under_low, under_high=under_high,
                   service_factor=pl("service_factor"), sf_given=pl("service_factor_given"),
                   margin_low=margin_low, unstable=unstable, zone_code=zone_code, is_nema=pl("is_nema"),
                   on_drive=on_drive, v_dev=v_dev, f_dev=f_dev, voltage_accuracy_pct=r["voltage_accuracy_pct"],
                   vu=vu, iu=iu, starting=starting, starting_low=starting_low,
                   needs_breakaway=pl("needs_breakaway"), tests=test_states, test_facts=test_facts)
    mask = combination_mask(states.flags, np.where(consistent, -1, outlier), on_drive, at_sync)
    mask |= states.extra_bits

    # --- energy, cost and right-sizing (issue 11; engine/energy.py) ------------------------------
    energy_cols, energy_bits = energy_columns(
        th, rated_kw=rated_kw, poles=poles, rated_frequency_hz=f_r, load_pu=load_pu, load_low_pu=fused.low,
        load_high_pu=fused.high, efficiency_pu=eta, efficiency_low_pu=eta_lo, efficiency_high_pu=eta_hi,
        measured_input_kw=p_in / KILOWATT_W, measured_input_accuracy_pct=p_in_acc, speed_rpm=n_meas,
        sync_speed_rpm=ns, on_drive=on_drive, variable_torque=pl("is_variable_torque"),
        hours_h=r["operating_hours_per_year"], price_per_kwh=r["energy_price_per_kwh"], consistent=consistent)
    mask |= energy_bits
    # --- end of energy

    res = {
        "poles": poles, "sync_speed_rpm": ns, "slip_pct": 100.0 * s, "slip_rpm": slip_rpm,
        "load_pct": 100.0 * load_pu, "load_low_pct": 100.0 * fused.low, "load_high_pct": 100.0 * fused.high,
        "load_slip_pct": 100.0 * methods[0].value, "load_current_pct": 100.0 * methods[1].value,
        "load_power_pct": 100.0 * methods[2].value,
        "output_kw": load_pu * rated_kw,
        "torque_pct": 100.0 * torque_pu, "torque_low_pct": torque_low_pct, "torque_high_pct": torque_high_pct,
        "efficiency_pct": 100.0 * eta, "efficiency_low_pct": 100.0 * eta_lo, "efficiency_high_pct": 100.0 * eta_hi,
        "voltage_unbalance_pct": vu, "voltage_unbalance_factor_pct": vuf, "current_unbalance_pct": iu,
        "derating_factor": derate, "voltage_deviation_pct": v_dev, "frequency_deviation_pct": f_dev,
        "supply_zone_code": zone_code,
        "breakdown_margin": np.where(above, np.nan, margin),
        "breakdown_margin_low": np.where(above, np.nan, margin_low),
        "predicted_current_a": op.current_a, "predicted_power_factor": op.power_factor,
        "breakdown_torque_now_pct": bd_pct, "starting_margin": starting,
        "operating_side_code": np.where(has_point, np.where(stable, 1, 2), 0),
        **states.columns, **test_cols,
        **energy_cols,   # issue 11
    }
    return res, mask


