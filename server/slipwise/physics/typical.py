"""Typical motor data for nameplates that leave a value out.

Each table is typical catalogue practice, not a standard's limit: where a
nameplate lacks a value, the engine uses these and widens its bands.
"""

from __future__ import annotations

import numpy as np

from .units import HORSEPOWER_W, KILOWATT_W

#: Full-load power factor of 4-pole cage motors by rated output, typical
#: catalogue values (common practice, from memory).
_PF_KW = np.array([0.12, 0.37, 0.75, 1.5, 4.0, 7.5, 15.0, 37.0, 90.0, 250.0, 1000.0])
_PF_4POLE = np.array([0.62, 0.70, 0.74, 0.79, 0.82, 0.83, 0.84, 0.86, 0.87, 0.88, 0.88])
#: Shift of full-load power factor with pole count relative to 4 poles
#: (more poles, more magnetising current; common practice).
_PF_POLE_SHIFT = {2: 0.03, 4: 0.0, 6: -0.05, 8: -0.09}


def typical_power_factor(rated_power_kw, poles):
    """Typical full-load power factor of a cage induction motor.

    Parameters
    ----------
    rated_power_kw : numeric
        Rated output [kW].
    poles : numeric
        Poles [-]; above 8 the 8-pole shift is extended by -0.02 per pole pair.

    Returns
    -------
    numeric
        Power factor [-], within [0.45, 0.92].
    """
    p_kw = np.asarray(rated_power_kw, dtype=float)
    poles = np.asarray(poles, dtype=float)
    base = np.interp(np.log(np.minimum(np.maximum(p_kw, _PF_KW[0]), _PF_KW[-1])), np.log(_PF_KW), _PF_4POLE)
    shift = np.select([poles <= 2, poles <= 4, poles <= 6, poles <= 8],
                      [_PF_POLE_SHIFT[2], _PF_POLE_SHIFT[4], _PF_POLE_SHIFT[6], _PF_POLE_SHIFT[8]],
                      _PF_POLE_SHIFT[8] - 0.01 * (poles - 8))
    return np.minimum(np.maximum(base + shift, 0.45), 0.92)


#: Share of the rated-point losses that does not depend on load (core loss
#: plus friction and windage): central value and the band used for the
#: efficiency and input-power estimates (common practice for cage motors of
#: 1-200 kW: core 15-25 %, friction and windage 5-15 % of total losses).
FIXED_LOSS_SHARE = 0.30
FIXED_LOSS_SHARE_LOW = 0.20
FIXED_LOSS_SHARE_HIGH = 0.45


def friction_windage_share_of_fixed(poles):
    """Share of the fixed losses due to friction and windage [-].

    Two-pole machines have larger fans and more windage (common practice).
    """
    poles = np.asarray(poles, dtype=float)
    return np.where(poles <= 2, 0.55, 0.35)


#: Stator/rotor leakage reactance split X1 / (X1 + X2) by design class,
#: IEEE Std 112 (Table of empirical distribution of leakage reactances; from
#: memory): design A and D 0.5, B 0.4, C 0.3; IEC N taken as B, H as C.
LEAKAGE_STATOR_SHARE = {"A": 0.5, "B": 0.4, "C": 0.3, "D": 0.5, "N": 0.4, "H": 0.3}

#: Typical breakdown torque by design [% of rated torque]: catalogue practice
#: for 4-pole machines (NEMA MG 1 gives minimums of 200-275 % for design B;
#: IEC 60034-12 minimums for N are 160-200 %); from memory.
BREAKDOWN_TORQUE_PCT = {"A": 260.0, "B": 240.0, "C": 210.0, "D": 280.0, "N": 270.0, "H": 230.0}

#: Typical locked-rotor torque by design [% of rated torque] (catalogue
#: practice, from memory; NEMA MG 1 design D minimum is 275 %).
LOCKED_ROTOR_TORQUE_PCT = {"A": 200.0, "B": 200.0, "C": 250.0, "D": 275.0, "N": 220.0, "H": 260.0}

#: Breakaway torque a driven machine needs to start, as % of its running
#: torque (common practice: fans and centrifugal pumps 10-20 %, conveyors and
#: positive-displacement machines about their running torque, loaded
#: conveyors, crushers and mixers 150-200 %).
BREAKAWAY_TORQUE_PCT = {"variable_torque": 15.0, "constant_torque": 100.0,
                        "constant_power": 100.0, "high_breakaway": 175.0}


def lookup(table: dict, codes) -> np.ndarray:
    """Vectorised dictionary lookup of float values by code strings."""
    codes = np.asarray(codes)
    out = np.full(codes.shape, np.nan)
    for key, value in table.items():
        out[codes == key] = value
    return out


# --------------------------------------------------------------------------- saturation
#: Exponent k of the no-load (magnetising) current against air-gap flux,
#: ``I_0 / I_0r = (flux ratio)^k``, above rated flux: central value and band.
#: Common practice, from memory: a 10 % overvoltage raises the no-load current
#: of a cage motor by roughly 20 % to 60 % (1.1^2 = 1.21, 1.1^5 = 1.61),
#: depending on how far into the knee of its magnetising curve the design runs.
SATURATION_EXPONENT_ABOVE_RATED = (3.0, 2.0, 5.0)
#: The same below rated flux, where the iron leaves the knee and the curve
#: straightens (k = 1 is an unsaturated, linear magnetising branch); from memory.
SATURATION_EXPONENT_BELOW_RATED = (2.0, 1.0, 3.0)


def saturated_no_load_current(rated_no_load_current_a, flux_ratio):
    """No-load current at a flux other than rated, with magnetic saturation.

    Parameters
    ----------
    rated_no_load_current_a : numeric
        No-load current at rated voltage and frequency [A].
    flux_ratio : numeric
        Air-gap flux relative to rated, ``(V/f) / (V_r/f_r)`` [-].

    Returns
    -------
    Estimate
        ``(value, low, high)`` no-load current [A]: ``I_0r * phi^k`` with the
        central exponent, and the band from the band of exponents (above
        rated flux :data:`SATURATION_EXPONENT_ABOVE_RATED`, below it
        :data:`SATURATION_EXPONENT_BELOW_RATED`). All three equal ``I_0r`` at
        rated flux; never negative; NaN where an input is NaN or the flux
        ratio is not positive.

    Notes
    -----
    A power law through the rated point is the simplest curve with the knee's
    effect near rated flux: the magnetising current grows faster than the
    flux above it (the iron saturates) and falls more than in proportion
    below it. It replaces ``I_0 = I_0r * phi`` (no saturation), which reads
    a 5 % overvoltage as 5 % more magnetising current where a motor draws
    10-30 % more. Pass the band to :func:`slipwise.physics.load.current_method`
    (``no_load_current_low_a``, ``no_load_current_high_a``).

    Examples
    --------
    >>> [round(float(x), 3) for x in saturated_no_load_current(10.0, 1.05)]
    [11.576, 11.025, 12.763]
    """
    from .load import Estimate

    i0r = np.asarray(rated_no_load_current_a, dtype=float)
    phi = np.asarray(flux_ratio, dtype=float)
    with np.errstate(invalid="ignore", divide="ignore"):
        ok = phi > 0.0
        phi_safe = np.where(ok, phi, np.nan)
        above = phi_safe >= 1.0
        k_c, k_lo, k_hi = (np.where(above, a, b) for a, b in zip(SATURATION_EXPONENT_ABOVE_RATED,
                                                                  SATURATION_EXPONENT_BELOW_RATED))
        value = i0r * phi_safe ** k_c
        a, b = i0r * phi_safe ** k_lo, i0r * phi_safe ** k_hi
        low, high = np.fmin(a, b), np.fmax(a, b)
    return Estimate(*(np.maximum(x, 0.0) for x in (value, low, high)))


# --------------------------------------------------------------------------- breakdown torque
# NEMA MG 1 (Part 12) minimum breakdown torque of 60 Hz single-speed polyphase cage
# motors [% of full-load torque], from memory; columns 2, 4, 6, 8 poles (3600, 1800,
# 1200, 900 rpm synchronous); NaN where the table lists no value.
_NEMA_HP = np.array([0.5, 0.75, 1.0, 1.5, 2.0, 3.0, 5.0, 7.5, 10.0])
_N = np.nan
#: 12.39.1, designs A and B (10 hp and up: 200 % in every column).
_NEMA_AB_BREAKDOWN_PCT = np.array([
    (_N, _N, _N, 225.0), (_N, _N, 275.0, 220.0), (_N, 300.0, 265.0, 215.0), (250.0, 280.0, 250.0, 210.0),
    (240.0, 270.0, 240.0, 210.0), (230.0, 250.0, 230.0, 205.0), (215.0, 225.0, 215.0, 205.0),
    (200.0, 215.0, 205.0, 200.0), (200.0, 200.0, 200.0, 200.0),
])
#: 12.39.2, design C (no 2-pole column; 7.5 hp and up 190 %).
_NEMA_C_BREAKDOWN_PCT = np.array([
    (_N, _N, _N, _N), (_N, _N, _N, _N), (_N, _N, _N, _N), (_N, _N, _N, _N), (_N, _N, _N, _N),
    (_N, _N, 225.0, 200.0), (_N, 200.0, 200.0, 200.0), (_N, 190.0, 190.0, 190.0), (_N, 190.0, 190.0, 190.0),
])
#: Design D: NEMA MG 1 sets no breakdown minimum; its torque peaks at standstill, so
#: the locked-rotor minimum of 275 % (12.38.3) is its maximum torque (from memory).
NEMA_D_BREAKDOWN_PCT = 275.0
# IEC 60034-12 design N minimum breakdown torque T_b / T_N [%] by rated output (upper
# ends of its ranges [kW]) and 2, 4, 6, 8 poles, from memory; design H is taken as N.
_IEC_KW = np.array([0.63, 1.0, 1.6, 2.5, 4.0, 6.3, 10.0, 16.0, 25.0, 40.0, 63.0, 100.0, 160.0, 250.0, 400.0, 630.0])
_IEC_N_BREAKDOWN_PCT = np.array(
    [(200.0, 200.0, 190.0, 180.0)] * 6 + [(200.0, 200.0, 180.0, 170.0)] * 2 + [(190.0, 190.0, 180.0, 170.0)] * 2
    + [(180.0, 180.0, 170.0, 160.0)] + [(170.0, 170.0, 160.0, 160.0)] * 2 + [(160.0, 160.0, 160.0, 160.0)] * 3)
#: IEC 60034-1 general requirement: breakdown torque at least 1.6 times rated torque
#: (from memory); the floor used where no design table applies.
IEC_BREAKDOWN_FLOOR_PCT = 160.0
#: IEC 60034-1 tolerance on a guaranteed breakdown torque: -10 % of the value (from memory).
BREAKDOWN_TORQUE_TOLERANCE = 0.10
#: Catalogue breakdown torque over the design minimum, at least (common practice,
#: from memory: catalogue values run 10-40 % above the tables' minimums).
TYPICAL_OVER_MINIMUM = 1.15


def _pole_col(poles):
    return np.clip(np.round(np.asarray(poles, dtype=float) / 2.0) - 1, 0, 3).astype(int)


def minimum_breakdown_torque_pct(rated_power_kw, poles, design):
    """Minimum breakdown torque a design's standard guarantees [% of rated torque].

    Parameters
    ----------
    rated_power_kw : numeric
        Rated output [kW] (NEMA designs: converted to hp, 1 hp = 0.7457 kW).
    poles : numeric
        Poles [-]; above 8 the 8-pole column is used.
    design : str or array of str
        NEMA ``"A"``, ``"B"``, ``"C"``, ``"D"`` or IEC ``"N"``, ``"H"``.

    Returns
    -------
    numeric
        NEMA MG 1 12.39.1 (A, B) and 12.39.2 (C) minimums; between listed
        ratings the next larger listed rating's value (the lower minimum, the
        pessimistic choice); where the table lists nothing for a pole count,
        the column's first listed value, or for design C 2 poles the
        IEC 60034-1 floor of 160 %. Design D 275 %. IEC 60034-12 design N
        (H taken as N) by its kW range; outside 0.63-630 kW the nearest
        range. NaN for an unknown design.

    Notes
    -----
    The tables are from memory (NEMA MG 1 and IEC 60034-12 were not read):
    check them before quoting a minimum as the standard's.

    Examples
    --------
    >>> minimum_breakdown_torque_pct([0.75, 7.5, 7.5], 4, ["B", "B", "N"]).tolist()
    [300.0, 200.0, 200.0]
    """
    p, n, d = np.broadcast_arrays(np.asarray(rated_power_kw, dtype=float), np.asarray(poles, dtype=float),
                                  np.asarray(design))
    col = _pole_col(np.nan_to_num(n, nan=4.0))     # a NaN row is masked to NaN below
    hp = p * KILOWATT_W / HORSEPOWER_W
    with np.errstate(invalid="ignore"):
        # kW equivalents of hp ratings are rounded (0.75 kW = 1.006 hp): 2 % counts as the rating
        row = np.minimum(np.searchsorted(_NEMA_HP, hp * (1.0 - 0.02), side="left"), _NEMA_HP.size - 1)

    def nema(table):
        first = np.array([table[np.flatnonzero(np.isfinite(table[:, c]))[0], c]
                          if np.isfinite(table[:, c]).any() else np.nan for c in range(4)])
        v = table[row, col]
        v = np.where(np.isfinite(v), v, first[col])
        return np.where(np.isfinite(v), v, IEC_BREAKDOWN_FLOOR_PCT)

    with np.errstate(invalid="ignore"):
        irow = np.minimum(np.searchsorted(_IEC_KW, p * (1.0 - 1e-9), side="left"), _IEC_KW.size - 1)
    iec = _IEC_N_BREAKDOWN_PCT[irow, col]
    out = np.select([np.isin(d, ("A", "B")), d == "C", d == "D", np.isin(d, ("N", "H"))],
                    [nema(_NEMA_AB_BREAKDOWN_PCT), nema(_NEMA_C_BREAKDOWN_PCT),
                     np.full(p.shape, NEMA_D_BREAKDOWN_PCT), iec], np.nan)
    out = np.where(np.isfinite(p) & np.isfinite(n), out, np.nan)
    return out[()] if out.ndim == 0 else out


def typical_breakdown_torque_pct(rated_power_kw, poles, design):
    """Breakdown torque to assume when the nameplate gives none [% of rated torque].

    The catalogue value of :data:`BREAKDOWN_TORQUE_PCT` for the design, raised
    to :data:`TYPICAL_OVER_MINIMUM` times the design's minimum
    (:func:`minimum_breakdown_torque_pct`) where that is higher (small
    4-pole NEMA B motors, whose minimum is up to 300 %).

    Examples
    --------
    >>> typical_breakdown_torque_pct([0.75, 30.0], 4, "B").tolist()
    [345.0, 240.0]
    """
    catalogue = lookup(BREAKDOWN_TORQUE_PCT, np.broadcast_to(np.asarray(design), np.broadcast(
        np.asarray(rated_power_kw), np.asarray(poles), np.asarray(design)).shape))
    out = np.fmax(catalogue, TYPICAL_OVER_MINIMUM * minimum_breakdown_torque_pct(rated_power_kw, poles, design))
    out = np.where(np.isfinite(catalogue), out, np.nan)
    return out[()] if out.ndim == 0 else out


def breakdown_torque_low_pct(given_pct, rated_power_kw, poles, design):
    """Pessimistic (lowest credible) breakdown torque at rated voltage [% of rated torque].

    Parameters
    ----------
    given_pct : numeric
        Breakdown torque from the nameplate or data sheet [%]; NaN if not given.
    rated_power_kw, poles, design
        See :func:`minimum_breakdown_torque_pct`.

    Returns
    -------
    numeric
        A given value less its IEC 60034-1 tolerance, ``0.9 * given``;
        without a given value, the design minimum
        (:func:`minimum_breakdown_torque_pct`).
    """
    given = np.asarray(given_pct, dtype=float)
    minimum = minimum_breakdown_torque_pct(rated_power_kw, poles, design)
    out = np.where(np.isfinite(given), (1.0 - BREAKDOWN_TORQUE_TOLERANCE) * given, minimum)
    return out[()] if np.ndim(out) == 0 else out
