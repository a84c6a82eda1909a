"""Shaft load from field readings: slip, current and input-power methods, fused.

Every method returns an :class:`Estimate`: the central value and a band
``[low, high]`` meant as roughly 95 % limits, all as a fraction of rated
shaft *output* [pu]. No method reports a negative load: estimates are
clipped at zero.

References
----------
.. [1] US DOE, "Determining Electric Motor Load and Efficiency", Motor
   Challenge fact sheet DOE/GO-10097-517 (slip, current and input-power
   methods and their worked examples).
.. [2] IEC 60034-1 / NEMA MG 1: full-load slip tolerance +-20 % of rated
   slip (+-30 % for motors under 1 kW).
.. [3] IEC 60034-2-1: temperature correction of winding resistance,
   ``R2/R1 = (k + T2) / (k + T1)`` with k = 225 for aluminium.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

#: IEC 60034-2-1 temperature constant for aluminium rotor cages [degC].
ALUMINIUM_K_DEGC = 225.0
#: Ambient temperature assumed for a cold rotor [degC] (IEC 60034-1 reference ambient 20-40).
AMBIENT_DEGC = 25.0
#: Rotor temperature rise at rated load [K] (common practice for class B rise, class F insulation).
ROTOR_RISE_RATED_K = 75.0
#: Thermal time constant used to judge how warm the rotor is [min] (common practice, small/medium motors).
ROTOR_THERMAL_TIME_MIN = 30.0
#: Nameplate slip tolerance, fraction of rated slip (IEC 60034-1 Table 21 / NEMA MG 1 12.46).
SLIP_TOLERANCE = 0.20
SLIP_TOLERANCE_BELOW_1KW = 0.30
#: Model error of the current method beyond meter and no-load current uncertainty [pu of rated]:
#: the quadrature model ignores the rotor leakage current and nameplate currents are rounded.
CURRENT_MODEL_ERROR_PU = 0.08
#: Uncertainty of the circuit's no-load current [fraction].
NO_LOAD_CURRENT_TOLERANCE = 0.20
#: Absolute accuracy of a power-factor reading [-] (common practice for clamp power meters).
POWER_FACTOR_ACCURACY = 0.02


class Estimate(NamedTuple):
    """A load estimate [pu of rated output] with its band."""

    value: np.ndarray
    low: np.ndarray
    high: np.ndarray


def _combine_rel(*rel):
    """Quadrature sum of relative half-widths, in log space."""
    return np.sqrt(sum(np.log1p(np.asarray(r, dtype=float)) ** 2 for r in rel))


def rotor_resistance_ratio(load_pu, minutes_running):
    """Rotor resistance relative to its value at rated load and temperature [-].

    The rotor is taken to settle at ``ambient + rise * load^2`` and to approach
    it with a first-order thermal time constant from ambient. Unknown running
    time (NaN) is taken as a fully warm rotor here; the cold case belongs in
    the band (see :func:`slip_method`).
    """
    load_pu = np.minimum(np.maximum(np.asarray(load_pu, dtype=float), 0.0), 2.0)
    t = np.asarray(minutes_running, dtype=float)
    warm_fraction = np.where(np.isnan(t), 1.0, 1.0 - np.exp(-t / ROTOR_THERMAL_TIME_MIN))
    temp = AMBIENT_DEGC + ROTOR_RISE_RATED_K * load_pu ** 2 * warm_fraction
    return (ALUMINIUM_K_DEGC + temp) / (ALUMINIUM_K_DEGC + AMBIENT_DEGC + ROTOR_RISE_RATED_K)


def slip_torque_pu(slip_rpm, rated_slip_rpm, flux_ratio):
    """Shaft torque over rated torque from slip speed and flux [pu].

    Parameters
    ----------
    slip_rpm : numeric
        Measured slip speed, synchronous speed *at the measured frequency*
        minus shaft speed [rpm].
    rated_slip_rpm : numeric
        Nameplate slip speed, rated synchronous minus rated speed [rpm].
    flux_ratio : numeric
        Air-gap flux relative to rated, ``(V/f) / (V_r/f_r)`` [-].

    Returns
    -------
    numeric
        ``T / T_r = (n_slip / n_slip,r) * flux_ratio^2``.

    Notes
    -----
    In the linear part of the torque-slip curve the rotor current is
    proportional to the air-gap flux times the rotor frequency (slip speed)
    and the torque to flux times rotor current, so
    ``T ~ (V/f)^2 * n_slip`` [1]_ on mains and on a drive alike. On mains at
    rated frequency this is the DOE sheet's ``(s / s_r) (V / V_r)^2``; off
    rated frequency it accounts for the frequency as well (at +2 % f and rated
    voltage a rated-torque point slips 1.02^2 times the rated slip speed).
    Stator resistance and leakage make the law approximate (about 1 % within
    +-5 % V and f, checked against the circuit in the tests).

    Examples
    --------
    >>> round(float(slip_torque_pu(40.0 * 1.02 ** 2, 40.0, 1.0 / 1.02)), 6)
    1.0
    """
    with np.errstate(divide="ignore", invalid="ignore"):
        return (np.asarray(slip_rpm, dtype=float) / np.asarray(rated_slip_rpm, dtype=float)
                * np.asarray(flux_ratio, dtype=float) ** 2)


def slip_method(slip_rpm, rated_slip_rpm, flux_ratio, speed_ratio, rated_power_kw,
                tachometer_resolution_rpm, voltage_accuracy_pct, minutes_running, on_drive):
    """Load by the slip method with flux (voltage) compensation.

    Parameters
    ----------
    slip_rpm : numeric
        Measured slip speed, synchronous speed at the measured frequency minus
        shaft speed [rpm], on mains and on a drive alike.
    rated_slip_rpm : numeric
        Nameplate slip speed at rated frequency [rpm].
    flux_ratio : numeric
        Air-gap flux relative to rated, ``(V/f) / (V_r/f_r)`` [-], on mains
        and on a drive alike (see :func:`slip_torque_pu`).
    speed_ratio : numeric
        Shaft speed over rated speed [-].
    rated_power_kw : numeric
        Rated output [kW] (chooses the nameplate slip tolerance).
    tachometer_resolution_rpm : numeric
        Resolution plus accuracy of the speed reading [rpm].
    voltage_accuracy_pct : numeric
        Voltmeter accuracy [% of reading].
    minutes_running : numeric
        Time run before the reading [min]; NaN when unknown.
    on_drive : numeric of bool
        Supply by a variable-frequency drive.

    Returns
    -------
    torque : Estimate
        Shaft torque over rated torque [pu].
    output : Estimate
        Shaft output over rated output [pu] (torque times speed ratio).

    Notes
    -----
    Torque from :func:`slip_torque_pu`: in the linear part of the
    torque-speed curve torque is proportional to rotor frequency (slip speed)
    times flux squared, one law for mains and drive; on mains at rated
    frequency it is the published ``(s / s_r) (V / V_r)^2`` [1]_. A caller
    that passes ``s * n_s,r`` and ``V / V_r`` on mains gets the published
    method, which ignores a frequency deviation (it reads about 2 % high at
    +2 % f).

    The band combines in quadrature (log space) the nameplate slip tolerance
    [2]_, the tachometer resolution and the voltmeter accuracy (doubled: flux
    enters squared); a rotor that may be cold (unknown or short running
    time) widens only the high side, up to the rated-to-ambient resistance
    ratio [3]_; a warm rotor at part load is cooler than at rated load too, by
    ``(k + T_amb + rise L^2) / (k + T_amb + rise)``, which also widens the high
    side.
    """
    slip_rpm = np.asarray(slip_rpm, dtype=float)
    rated_slip_rpm = np.asarray(rated_slip_rpm, dtype=float)
    torque = slip_torque_pu(slip_rpm, rated_slip_rpm, flux_ratio)
    with np.errstate(divide="ignore", invalid="ignore"):
        tol = np.where(np.asarray(rated_power_kw, dtype=float) < 1.0, SLIP_TOLERANCE_BELOW_1KW, SLIP_TOLERANCE)
        tach = np.asarray(tachometer_resolution_rpm, dtype=float) / np.maximum(np.abs(slip_rpm), 1e-9)
        volt = 2.0 * np.asarray(voltage_accuracy_pct, dtype=float) / 100.0
        volt = np.where(np.asarray(on_drive, dtype=bool), 2.0 * volt, volt)  # PWM voltage read by meter
        # nameplate slip tolerance: true rated slip in [1 - tol, 1 + tol] times nameplate
        half_low = _combine_rel(tol, tach, volt)
        half_high = _combine_rel(tol / (1.0 - tol), tach, volt)
        # a rotor cooler than at rated load slips less for the same torque: at part
        # load when warm, and anything down to ambient when the running time is unknown
        t = np.asarray(minutes_running, dtype=float)
        thermal = np.where(np.isnan(t), 1.0 / rotor_resistance_ratio(0.0, 0.0),
                           1.0 / rotor_resistance_ratio(torque, t))
        t_low = torque * np.exp(-half_low)
        t_high = torque * np.exp(half_high) * np.maximum(thermal, 1.0)
    speed_ratio = np.asarray(speed_ratio, dtype=float)
    torque_est = Estimate(*(np.maximum(a, 0.0) for a in (torque, t_low, t_high)))
    output_est = Estimate(*(a * speed_ratio for a in torque_est))
    return torque_est, output_est


def current_method(current_a, rated_current_a, no_load_current_a, rated_no_load_current_a,
                   flux_ratio, speed_ratio, current_accuracy_pct, no_load_current_low_a=None,
                   no_load_current_high_a=None):
    """Load by the current method, with the magnetising current removed.

    Parameters
    ----------
    current_a : numeric
        Measured line current, mean of the phases read [A].
    rated_current_a : numeric
        Nameplate current [A].
    no_load_current_a : numeric
        No-load current at the present voltage and frequency [A] (from the
        fitted circuit).
    rated_no_load_current_a : numeric
        No-load current at rated voltage and frequency [A].
    flux_ratio : numeric
        Flux relative to rated [-] (see :func:`slip_method`).
    speed_ratio : numeric
        Shaft speed over rated speed [-].
    current_accuracy_pct : numeric
        Clamp meter accuracy [% of reading].
    no_load_current_low_a, no_load_current_high_a : numeric, optional
        Band of the no-load current at the present flux [A], e.g. from
        :func:`slipwise.physics.typical.saturated_no_load_current`; the band
        then spans it as well as the circuit's own 20 % uncertainty. Omitted:
        ``no_load_current_a`` itself.

    Returns
    -------
    Estimate
        Shaft output over rated output [pu].

    Notes
    -----
    The DOE fact sheet's current method takes load as ``I/I_r`` scaled by
    ``V/V_r`` [1]_, which reads 30-60 % for an idling motor. Here the
    no-load (mostly magnetising) current is taken out in quadrature:
    torque ``~ flux * sqrt(I^2 - I_0^2) / sqrt(I_r^2 - I_0r^2)``, output =
    torque times speed ratio. The band adds the meter accuracy, a 20 %
    uncertainty of the circuit's no-load current and an 8 % model error.
    """
    i = np.asarray(current_a, dtype=float)
    i_r = np.asarray(rated_current_a, dtype=float)
    i0 = np.asarray(no_load_current_a, dtype=float)
    i0r = np.asarray(rated_no_load_current_a, dtype=float)
    factor = np.asarray(flux_ratio, dtype=float) * np.asarray(speed_ratio, dtype=float)
    acc = np.asarray(current_accuracy_pct, dtype=float) / 100.0

    i0_low = i0 if no_load_current_low_a is None else np.asarray(no_load_current_low_a, dtype=float)
    i0_high = i0 if no_load_current_high_a is None else np.asarray(no_load_current_high_a, dtype=float)

    def load(i_meas, i0_now, i0_scale):
        with np.errstate(invalid="ignore", divide="ignore"):
            num = np.sqrt(np.maximum(i_meas ** 2 - (i0_now * i0_scale) ** 2, 0.0))
            den = np.sqrt(np.maximum(i_r ** 2 - (i0r * i0_scale) ** 2, 1e-12))
            return num / den * factor

    value = load(i, i0, 1.0)
    # low: meter reads high and the magnetising current is larger than modelled
    low = np.minimum(load(i * (1 - acc), i0_high, 1 + NO_LOAD_CURRENT_TOLERANCE), load(i * (1 - acc), i0_high, 1.0))
    high = np.maximum(load(i * (1 + acc), i0_low, 1 - NO_LOAD_CURRENT_TOLERANCE), load(i * (1 + acc), i0_low, 1.0))
    # model error in quadrature with the half-widths above
    low = value - np.sqrt((value - low) ** 2 + CURRENT_MODEL_ERROR_PU ** 2)
    high = value + np.sqrt((high - value) ** 2 + CURRENT_MODEL_ERROR_PU ** 2)
    return Estimate(np.maximum(value, 0.0), np.maximum(low, 0.0), np.maximum(high, 0.0))


def input_power_w(voltage_v, current_a, power_factor):
    """Three-phase input power from line voltage, line current and PF [W].

    ``P = sqrt(3) V I pf`` (DOE fact sheet [1]_, Equation 1 without the /1000).
    """
    return np.sqrt(3.0) * np.asarray(voltage_v, dtype=float) * np.asarray(current_a, dtype=float) * \
        np.asarray(power_factor, dtype=float)


def input_power_accuracy_pct(voltage_accuracy_pct, current_accuracy_pct, power_factor):
    """Accuracy of an input power computed from V, I and pf readings [%].

    Root-sum-square of the relative errors of the three readings, the power
    factor's taken as :data:`POWER_FACTOR_ACCURACY` absolute (GUM, uncorrelated
    inputs to a product).
    """
    with np.errstate(divide="ignore", invalid="ignore"):
        return 100.0 * np.sqrt((voltage_accuracy_pct / 100) ** 2 + (current_accuracy_pct / 100) ** 2
                               + (POWER_FACTOR_ACCURACY / power_factor) ** 2)


def magnetising_current_a(rated_no_load_current_a, flux_ratio):
    """No-load (magnetising) current at a flux [A]: proportional to flux, saturation neglected (in the band)."""
    return rated_no_load_current_a * flux_ratio


def input_power_method(input_w, input_accuracy_pct, core_loss_w, friction_windage_w, stator_loss_w,
                       slip, rated_output_w, fixed_loss_band=(0.67, 1.5), stator_loss_band=(0.8, 1.2)):
    """Load by the input-power method with losses at the operating point.

    Parameters
    ----------
    input_w : numeric
        Measured (or V, I, PF derived) input power [W].
    input_accuracy_pct : numeric
        Accuracy of that input power [% of reading].
    core_loss_w : numeric
        Core loss at the present voltage and frequency [W].
    friction_windage_w : numeric
        Friction and windage at the present speed [W].
    stator_loss_w : numeric
        Stator copper plus stray load loss at the *measured* current [W].
    slip : numeric
        Measured slip [pu]: rotor copper loss is ``s`` times air-gap power.
    rated_output_w : numeric
        Rated output [W].
    fixed_loss_band, stator_loss_band : tuple of float
        Multipliers bounding the fixed and the stator losses (typical loss
        split uncertainty).

    Returns
    -------
    Estimate
        Shaft output over rated output [pu].

    Notes
    -----
    ``P_ag = P_in - P_core - P_cu1``, ``P_out = (1 - s) P_ag - P_fw``. This
    takes the efficiency at the estimated load, not at full load as the DOE
    sheet's ``P_in / P_ir`` ratio does [1]_.
    """
    p_in = np.asarray(input_w, dtype=float)
    acc = np.asarray(input_accuracy_pct, dtype=float) / 100.0
    core = np.asarray(core_loss_w, dtype=float)
    fw = np.asarray(friction_windage_w, dtype=float)
    cu1 = np.asarray(stator_loss_w, dtype=float)
    s = np.minimum(np.maximum(np.asarray(slip, dtype=float), 0.0), 1.0)
    p_rated = np.asarray(rated_output_w, dtype=float)

    def out(pin, kfix, kcu):
        return ((1.0 - s) * (pin - kfix * core - kcu * cu1) - kfix * fw) / p_rated

    value = out(p_in, 1.0, 1.0)
    low = out(p_in * (1 - acc), fixed_loss_band[1], stator_loss_band[1])
    high = out(p_in * (1 + acc), fixed_loss_band[0], stator_loss_band[0])
    return Estimate(*(np.maximum(a, 0.0) for a in (value, low, high)))


def widen(estimate: Estimate, factor) -> Estimate:
    """The same estimate with its band scaled by ``factor`` about the central value [pu]."""
    e = estimate
    return Estimate(e.value, e.value - (e.value - e.low) * factor, e.value + (e.high - e.value) * factor)


def fuse(estimates):
    """Fuse independent estimates, weighting each by its uncertainty.

    Parameters
    ----------
    estimates : sequence of Estimate
        NaN marks a method that is not available for a row.

    Returns
    -------
    fused : Estimate
        Inverse-variance weighted value; each side's half-width is the
        quadrature combination of the methods' half-widths on that side
        (taken as 2-sigma limits); a method whose value is clipped at zero
        counts its high side's width on its low side too. With one method it
        is that method.
    consistent : numpy.ndarray of bool
        False where two methods disagree by more than their bands allow.
    outlier : numpy.ndarray of int
        Index of the method that disagrees with the others: the one in most
        disagreeing pairs, on a tie the one farthest from the median; -1
        where all agree, -2 where only two methods disagree
        (either may be the wrong one).
    """
    v = np.stack([np.asarray(e.value, dtype=float) for e in estimates])
    lo = np.stack([np.asarray(e.low, dtype=float) for e in estimates])
    hi = np.stack([np.asarray(e.high, dtype=float) for e in estimates])
    floor = 1e-3  # 0.1 % of rated: keeps a method with a zero-width band from owning the fusion
    s_lo = np.maximum((v - lo) / 2.0, floor)
    s_hi = np.maximum((hi - v) / 2.0, floor)
    # a method clipped at zero (the current method where the current is below the modelled
    # no-load current) measured nothing below its zero: its low side is its high side's width,
    # not the floor, which would otherwise own the fused low side (0.2 % wide at 10 % load)
    s_lo_open = np.where(v <= lo, np.maximum(s_lo, s_hi), s_lo)
    sigma = 0.5 * (s_lo + s_hi)
    ok = np.isfinite(v) & np.isfinite(sigma)
    w = np.where(ok, 1.0 / sigma ** 2, 0.0)
    wsum = w.sum(axis=0)
    with np.errstate(invalid="ignore", divide="ignore"):
        value = np.where(ok, w * np.where(ok, v, 0.0), 0.0).sum(axis=0) / wsum
        half_lo = 2.0 * np.sqrt(1.0 / np.where(ok, 1.0 / s_lo_open ** 2, 0.0).sum(axis=0))
        half_hi = 2.0 * np.sqrt(1.0 / np.where(ok, 1.0 / s_hi ** 2, 0.0).sum(axis=0))
    value = np.where(wsum > 0, value, np.nan)
    fused = Estimate(np.maximum(value, 0.0), np.maximum(value - half_lo, 0.0), value + half_hi)

    m = v.shape[0]
    # pair (a, b) with a above b: a's low side against b's high side, both directions at once
    gap = v[:, None] - v[None, :]
    allowed = np.sqrt((v - lo)[:, None] ** 2 + (hi - v)[None, :] ** 2)
    both = ok[:, None] & ok[None, :]
    with np.errstate(invalid="ignore"):
        disagree = both & (gap > allowed)
    pair = disagree | np.swapaxes(disagree, 0, 1)
    consistent = ~pair.any(axis=(0, 1))
    n_ok = ok.sum(axis=0)
    votes = pair.sum(axis=1)                 # how many methods each one disagrees with
    top = votes.max(axis=0)
    unique_top = (votes == top).sum(axis=0) == 1
    # a tie among three or more: the one farthest from the median (in load, not in
    # sigmas: a tight band must not make a method the culprit by itself)
    with np.errstate(invalid="ignore", divide="ignore"):
        # only rows where every method is available use the tie-break: their median of three
        # is sum - max - min (a sort per row would cost more than the rest of the fusion)
        total = v.sum(axis=0)
        median = total - v.max(axis=0) - v.min(axis=0) if m == 3 else np.median(v, axis=0)
        distance = np.where(ok, np.abs(v - median), -np.inf)
    by_votes = np.argmax(votes, axis=0)
    by_distance = np.argmax(distance, axis=0)
    outlier = np.where(consistent, -1, np.where(n_ok >= 3, np.where(unique_top, by_votes, by_distance), -2))
    return fused, consistent, outlier
