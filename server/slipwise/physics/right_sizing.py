"""Right-sizing: the standard motor that would carry the measured load well.

* the smallest standard rating that carries the shaft load in its efficient
  range (:func:`right_size_rated_kw`), the efficiency assumed for it
  (:func:`replacement_efficiency_pct`) and the yearly savings with their band
  (:func:`right_sizing`);
* the speed trap: a new motor that slips less turns a centrifugal fan or pump
  faster (:func:`typical_rated_slip_pu`, :func:`variable_torque_speed_rpm`);
  the savings that follow are in :mod:`slipwise.physics.energy`.

References
----------
.. [1] US DOE Motor Challenge, "Determining Electric Motor Load and
   Efficiency", fact sheet DOE/GO-10097-517: "most electric motors are
   designed to run at 50 % to 100 % of rated load; maximum efficiency is
   usually near 75 % of rated load; efficiency tends to decrease
   dramatically below about 50 % load" (read).
.. [2] US DOE Motor Challenge, "Replacing an Oversized and Underloaded
   Electric Motor", fact sheet: the full-load speeds of the motor replaced
   and of the replacement are needed to assess savings (read).
.. [3] IEC 60034-30-1:2014 (IE classes; rating rows used here through
   :mod:`slipwise.physics.efficiency_class`); IEC 60072-1 preferred rated
   outputs above 200 kW (from memory).
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from . import efficiency_class as _ec
from .energy import right_size_savings_kwh

#: Rated outputs above the IE tables' last distinct row, up to 1000 kW: the
#: IEC 60072-1 preferred ratings (from memory). The IE tables hold their last
#: row flat up to 1000 kW, so these ratings have an IE limit.
_IEC_60072_TAIL_KW = (250.0, 315.0, 355.0, 400.0, 450.0, 500.0, 560.0, 630.0, 710.0, 800.0, 900.0, 1000.0)


def _ratings(table_kw):
    # the IE tables' own rows (private there; read, never changed) + IEC 60072-1 tail
    tail = [p for p in _IEC_60072_TAIL_KW if p > table_kw[-1]]
    out = np.concatenate([np.asarray(table_kw, dtype=float), tail])
    out.setflags(write=False)
    return out


#: Standard rated outputs a replacement is chosen from [kW], by rated frequency.
STANDARD_RATINGS_KW = {50.0: _ratings(_ec._KW_50HZ), 60.0: _ratings(_ec._KW_60HZ)}

#: Right-sizing aim: the new motor carries the shaft load at no more than
#: this share of its rating [pu]; with the rating steps of the tables the
#: smallest such motor then runs at 59-100 % (see :func:`right_size_rated_kw`;
#: DOE [1]_: designed for 50-100 %, best near 75 %; the common aim of 75-100 %
#: is common practice).
RIGHT_SIZE_MAX_LOAD_PU = 1.0
#: Classes a replacement may be sized to.
REPLACEMENT_CLASSES = ("IE3", "IE4")

#: Rotor copper loss as a share of the rated losses of a cage motor, used to
#: estimate a replacement's rated slip: typical loss split at full load is
#: stator I2R 25-40 %, rotor I2R 15-25 %, core 15-25 %, friction and windage
#: 5-15 %, stray 10-20 % (US DOE / BPA "Energy Management for Motor-Driven
#: Systems", from memory); the middle of the rotor range.
ROTOR_LOSS_SHARE = 0.20


def _f(x):
    return np.asarray(x, dtype=float)


def _out(a):
    return a[()] if np.ndim(a) == 0 else a


# --- right-sizing ------------------------------------------------------------

def _check_max_load(max_load_pu):
    if not 0.5 <= float(max_load_pu) <= 1.0:
        raise ValueError(f"max_load_pu must be between 0.5 and 1.0; got {max_load_pu!r}")


def right_size_rated_kw(shaft_output_kw, frequency_hz, max_load_pu=RIGHT_SIZE_MAX_LOAD_PU):
    """Smallest standard rating that carries a shaft load in its efficient range.

    Parameters
    ----------
    shaft_output_kw : numeric
        Shaft load to carry [kW], > 0 (use the high end of its band so the
        new motor is never undersized).
    frequency_hz : numeric
        Rated frequency [Hz]: 50 or 60 selects the rating list.
    max_load_pu : float, optional
        Highest share of its rating the new motor may run at [pu], 0.5-1.0.

    Returns
    -------
    numeric
        Rated output [kW]: the smallest of :data:`STANDARD_RATINGS_KW` with
        ``P_shaft <= max_load_pu x P_N``. NaN where the load is not positive,
        no standard rating (up to 1000 kW) carries it, or the frequency is
        neither 50 nor 60 Hz.

    Raises
    ------
    ValueError
        If ``max_load_pu`` is outside 0.5-1.0.

    Notes
    -----
    Rule: run at no more than ``max_load_pu`` (default 100 %) of rating; the
    smallest such rating puts the load as high in the 50-100 % range the DOE
    names [1]_ as the rating steps allow. With the default the new motor runs
    at 67-100 % of rating at 50 Hz (largest step 0.12 to 0.18 kW, 1.5x) and
    at 59-100 % at 60 Hz (largest step 2.2 to 3.7 kW, 3 hp to 5 hp, 1.68x).
    This module does not apply a service factor: continuous running above
    rating is not a sizing aim.

    Examples
    --------
    >>> float(right_size_rated_kw(8.0, 50.0))
    11.0
    """
    _check_max_load(max_load_pu)
    p, f = np.broadcast_arrays(_f(shaft_output_kw), _f(frequency_hz))
    out = np.full(p.shape, np.nan)
    need = p / float(max_load_pu)
    for freq, ratings in STANDARD_RATINGS_KW.items():
        rows = (f == freq) & (p > 0.0) & (need <= ratings[-1] * (1.0 + 1e-9))
        idx = np.searchsorted(ratings, need[rows] * (1.0 - 1e-9), side="left")
        out[rows] = ratings[np.minimum(idx, ratings.size - 1)]
    return _out(out)


def replacement_efficiency_pct(rated_kw, poles, frequency_hz, ie_class="IE3"):
    """Efficiency assumed for a replacement motor: its IE class minimum.

    Parameters
    ----------
    rated_kw : numeric
        Rated output of the replacement [kW].
    poles : numeric
        Poles [-] (the replacement keeps the pole count: same speed).
    frequency_hz : numeric
        Rated frequency [Hz].
    ie_class : {"IE3", "IE4"}
        Class the replacement is bought to.

    Returns
    -------
    numeric
        Minimum nominal full-load efficiency of IEC 60034-30-1 [%]
        (:func:`slipwise.physics.efficiency_class.nominal_efficiency_pct`).

    Notes
    -----
    No part-load correction: none was found in a source that could be read.
    A replacement sized by :func:`right_size_rated_kw` runs at 59-100 %
    load, where efficiency is near its full-load value (best near
    75 %, DOE [1]_), and a catalogue motor meets or beats its class minimum;
    so the full-load minimum tends to understate the new motor's efficiency
    and the savings.
    """
    if str(ie_class).strip().upper() not in REPLACEMENT_CLASSES:
        raise ValueError(f"ie_class must be one of {', '.join(REPLACEMENT_CLASSES)}; got {ie_class!r}")
    return _ec.nominal_efficiency_pct(rated_kw, poles, frequency_hz, str(ie_class).strip().upper())


class RightSizing(NamedTuple):
    """A replacement and what it saves a year."""

    right_size_rated_kw: np.ndarray
    right_size_load_pct: np.ndarray
    right_size_efficiency_pct: np.ndarray
    right_size_savings_kwh: np.ndarray
    right_size_savings_low_kwh: np.ndarray
    right_size_savings_high_kwh: np.ndarray


def right_sizing(shaft_output_kw, shaft_output_low_kw, shaft_output_high_kw,
                 efficiency_pu, efficiency_low_pu, efficiency_high_pu,
                 poles, frequency_hz, operating_hours_per_year_h,
                 ie_class="IE3", max_load_pu=RIGHT_SIZE_MAX_LOAD_PU):
    """Replacement rating, its efficiency and the savings band, without speed change.

    Parameters
    ----------
    shaft_output_kw, shaft_output_low_kw, shaft_output_high_kw : numeric
        Shaft load and its band [kW].
    efficiency_pu, efficiency_low_pu, efficiency_high_pu : numeric
        Present motor's efficiency at that load and its band [pu].
    poles, frequency_hz : numeric
        Poles [-] and rated frequency [Hz] of the present (and the new) motor.
    operating_hours_per_year_h : numeric
        Hours run a year [h].
    ie_class : {"IE3", "IE4"}
        Class of the replacement.
    max_load_pu : float
        See :func:`right_size_rated_kw`.

    Returns
    -------
    RightSizing
        The rating is chosen for the *high* end of the load band. The savings
        band is the extreme of the four pairs (load end, efficiency end); the
        replacement's efficiency is taken as its class minimum (see
        :func:`replacement_efficiency_pct`). Savings are signed: the caller
        reports ``max(0, ...)``.
    """
    rated = right_size_rated_kw(shaft_output_high_kw, frequency_hz, max_load_pu)
    eta_new_pct = replacement_efficiency_pct(rated, poles, frequency_hz, ie_class)
    eta_new = _f(eta_new_pct) / 100.0
    h = operating_hours_per_year_h
    central = right_size_savings_kwh(shaft_output_kw, h, efficiency_pu, eta_new)
    # the four corners (load end, efficiency end) in one call, stacked on a leading axis
    p_lo, p_hi, e_lo, e_hi, h_b, eta_b = np.broadcast_arrays(*(_f(x) for x in (
        shaft_output_low_kw, shaft_output_high_kw, efficiency_low_pu, efficiency_high_pu, h, eta_new)))
    corners = _f(right_size_savings_kwh(np.stack((p_lo, p_lo, p_hi, p_hi)), h_b,
                                        np.stack((e_lo, e_hi, e_lo, e_hi)), eta_b))
    low, high = corners.min(axis=0), corners.max(axis=0)        # NaN in any corner gives NaN, as before
    with np.errstate(divide="ignore", invalid="ignore"):
        load_pct = 100.0 * _f(shaft_output_kw) / _f(rated)
    return RightSizing(rated, _out(load_pct), eta_new_pct, central, _out(low), _out(high))


# --- the speed trap: a faster motor on a variable-torque load ----------------

def typical_rated_slip_pu(rated_efficiency_pu, rotor_loss_share=ROTOR_LOSS_SHARE):
    """Rated slip of a cage motor estimated from its rated efficiency.

    Parameters
    ----------
    rated_efficiency_pu : numeric
        Rated efficiency [pu], in (0, 1) (e.g. an IE class minimum / 100).
    rotor_loss_share : float, optional
        Rotor copper loss as a share of the rated losses [-], in (0, 1).

    Returns
    -------
    numeric
        Rated slip [pu]; NaN where the efficiency is outside (0, 1).

    Raises
    ------
    ValueError
        If ``rotor_loss_share`` is outside (0, 1).

    Notes
    -----
    Losses ``L = P (1/eta - 1)``; rotor copper loss ``P_cu2 = k L`` and
    ``P_cu2 = s/(1 - s) x P_mech`` with ``P_mech ~ P`` (friction and windage
    neglected), so ``s = k (1/eta - 1) / (1 + k (1/eta - 1))``. The rated
    output cancels. An assumption of this module, not a standard's value:
    pass a catalogue slip where one is known.

    Examples
    --------
    >>> round(float(typical_rated_slip_pu(0.914)), 4)   # 11 kW 4-pole IE3, 50 Hz
    0.0185
    """
    k = float(rotor_loss_share)
    if not 0.0 < k < 1.0:
        raise ValueError(f"rotor_loss_share must be between 0 and 1 (exclusive); got {rotor_loss_share!r}")
    eta = _f(rated_efficiency_pu)
    ok = (eta > 0.0) & (eta < 1.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        x = k * (1.0 / np.where(ok, eta, 0.5) - 1.0)
        return _out(np.where(ok, x / (1.0 + x), np.nan))


def variable_torque_speed_rpm(shaft_output_kw, operating_speed_rpm, synchronous_speed_rpm,
                              new_rated_kw, new_rated_slip_pu):
    """Speed a replacement motor would turn a variable-torque load at.

    Parameters
    ----------
    shaft_output_kw : numeric
        Present shaft load [kW], >= 0.
    operating_speed_rpm : numeric
        Present measured speed [rpm], below synchronous.
    synchronous_speed_rpm : numeric
        Synchronous speed at the supply frequency [rpm] (same for both
        motors: same poles, same supply).
    new_rated_kw : numeric
        Replacement's rated output [kW], > 0.
    new_rated_slip_pu : numeric
        Replacement's rated slip [pu], in (0, 1) (catalogue, or
        :func:`typical_rated_slip_pu`).

    Returns
    -------
    numeric
        New operating speed [rpm]; NaN where an input is out of range.

    Notes
    -----
    Load torque ``T_L = T_0 (n / n_0)^2``, ``T_0 = P_0 / omega_0``; motor
    torque linear in slip below breakdown, ``T_m = T_N s / s_N`` with
    ``T_N = P_N / (omega_s (1 - s_N))`` (rated voltage and frequency). With
    ``u = 1 - s``, ``a = P_N / (s_N (1 - s_N))``, ``c = P_0 / (1 - s_0)^3``:
    ``c u^2 + a u - a = 0``, ``u = (-a + sqrt(a^2 + 4 a c)) / (2 c)``.
    The linear torque line is good to about rated load (slip a few times
    smaller than at breakdown).
    The load law is the ``variable_torque`` one of
    :func:`slipwise.physics.torque_speed.load_torque`; supply voltage and
    frequency are taken as the new motor's rated ones (slip grows about as
    ``1/V^2`` below rated voltage, which this ignores).

    Examples
    --------
    >>> round(float(variable_torque_speed_rpm(0.0, 1460.0, 1500.0, 11.0, 0.02)))   # no load
    1500
    """
    p0, n0, ns = _f(shaft_output_kw), _f(operating_speed_rpm), _f(synchronous_speed_rpm)
    pn, sn = _f(new_rated_kw), _f(new_rated_slip_pu)
    with np.errstate(divide="ignore", invalid="ignore"):
        s0 = (ns - n0) / ns
        ok = (p0 >= 0.0) & (ns > 0.0) & (s0 >= 0.0) & (s0 < 1.0) & (pn > 0.0) & (sn > 0.0) & (sn < 1.0)
        a = pn / (sn * (1.0 - sn))
        c = p0 / (1.0 - s0) ** 3
        # the root in the form without cancellation; c = 0 (no load) gives u = 1
        u = 2.0 * a / (a + np.sqrt(a * a + 4.0 * a * c))
    return _out(np.where(ok, ns * u, np.nan))
