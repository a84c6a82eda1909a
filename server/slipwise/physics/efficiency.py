"""Efficiency at the operating point, with its band, from a loss model.

Losses are split at the rated point into fixed losses (core, friction and
windage: an uncertain share of the rated losses) and load losses. At the
operating point

* core loss scales with flux squared times frequency,
* friction and windage with speed squared,
* stator copper plus stray load loss with the square of the *measured*
  current (the magnetising current keeps it up at light load), not with the
  square of the load,
* rotor copper loss is ``s / (1 - s)`` times the mechanical power.

References
----------
.. [1] US DOE, "Determining Electric Motor Load and Efficiency",
   DOE/GO-10097-517 (loss categories and their behaviour with load).
.. [2] IEC 60034-1, tolerance on efficiency: -15 % of (1 - eta) for
   motors up to 150 kW, -10 % above (:func:`loss_tolerance_high`).
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from .units import SQRT3


class LossBudget(NamedTuple):
    """Rated-point losses [W] of one nameplate each (arrays)."""

    core_w: np.ndarray
    friction_windage_w: np.ndarray
    stator_w: np.ndarray       # stator copper plus stray load
    rotor_w: np.ndarray        # rotor copper


def losses_w(output_w, efficiency):
    """Total losses from output and efficiency, ``P_out / eta - P_out`` [W].

    Parameters
    ----------
    output_w : numeric
        Shaft output [W].
    efficiency : numeric
        Efficiency [pu].
    """
    with np.errstate(divide="ignore", invalid="ignore"):
        return output_w / efficiency - output_w


def rotor_copper_loss_w(slip, mechanical_power_w):
    """Rotor copper loss, ``s / (1 - s)`` times the mechanical power [W].

    The air-gap power splits into rotor copper loss ``s P_ag`` and mechanical
    power ``(1 - s) P_ag`` (standard induction-machine relation; IEC 60034-2-1
    uses it to find the rotor loss from slip).

    Parameters
    ----------
    slip : numeric
        Slip [pu].
    mechanical_power_w : numeric
        Mechanical (internal) power [W]: shaft output plus friction and windage.
    """
    s = np.asarray(slip, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return s / (1.0 - s) * mechanical_power_w


#: Share of the losses the rotor copper loss may take at most at the rated point [-]
#: (the stator's copper and the core need the rest; common practice).
ROTOR_LOSS_SHARE_MAX = 0.9


def max_efficiency_for_slip(slip, rotor_loss_share=ROTOR_LOSS_SHARE_MAX):
    """Highest efficiency a motor with this rated slip can have [pu].

    ``1 / (1 + s/(1 - s) / k)``: rotor copper loss alone is ``s/(1 - s)`` of
    the output and at most a share ``k`` of the losses.

    Parameters
    ----------
    slip : numeric
        Rated slip [pu].
    rotor_loss_share : numeric
        Largest share of the losses in the rotor copper [-].
    """
    s = np.asarray(slip, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return 1.0 / (1.0 + s / (1.0 - s) / rotor_loss_share)


def apparent_power_va(voltage_v, current_a):
    """Three-phase apparent power from line voltage and line current, ``sqrt(3) V I`` [VA]."""
    return SQRT3 * voltage_v * current_a


def balance_factor(output_w, apparent_va, known_factor):
    """The nameplate's missing factor of ``P_out = S pf eta`` [pu].

    Given the power factor, the efficiency ``P_out / (S pf)``; given the
    efficiency, the power factor ``P_out / (S eta)``.

    Parameters
    ----------
    output_w : numeric
        Rated output [W].
    apparent_va : numeric
        Rated apparent power, :func:`apparent_power_va` [VA].
    known_factor : numeric
        The factor the nameplate gives (pf or eta) [pu].
    """
    with np.errstate(divide="ignore", invalid="ignore"):
        return output_w / (apparent_va * known_factor)


def line_current_a(output_w, voltage_v, power_factor, efficiency):
    """Line current of a three-phase motor, ``P_out / (sqrt(3) V pf eta)`` [A]."""
    with np.errstate(divide="ignore", invalid="ignore"):
        return output_w / (SQRT3 * voltage_v * power_factor * efficiency)


def rated_loss_budget(rated_output_w, rated_efficiency, rated_slip, fixed_share, friction_windage_share):
    """Split the rated-point losses into their parts.

    Parameters
    ----------
    rated_output_w : numeric
        Rated output [W].
    rated_efficiency : numeric
        Rated efficiency [pu].
    rated_slip : numeric
        Rated slip [pu].
    fixed_share : numeric
        Core plus friction and windage as a share of total losses [-].
    friction_windage_share : numeric
        Friction and windage as a share of the fixed losses [-].

    Returns
    -------
    LossBudget
        The stator loss is the remainder, kept at no less than 10 % of the
        losses by shrinking the core loss and then friction and windage; never
        negative (the engine refuses a nameplate whose rotor loss alone would
        exceed 90 % of its losses).
    """
    p_out = np.asarray(rated_output_w, dtype=float)
    eta = np.asarray(rated_efficiency, dtype=float)
    s = np.asarray(rated_slip, dtype=float)
    losses = losses_w(p_out, eta)
    fixed = np.asarray(fixed_share, dtype=float) * losses
    fw = np.asarray(friction_windage_share, dtype=float) * fixed
    rotor = rotor_copper_loss_w(s, p_out + fw)
    stator = losses - fixed - rotor
    # keep at least 10 % of the losses in the stator: shrink the core loss first, then friction
    shortfall = np.maximum(0.10 * losses - stator, 0.0)
    core = np.maximum(fixed - fw - shortfall, 0.0)
    fw = np.maximum(fw - np.maximum(shortfall - (fixed - fw), 0.0), 0.0)
    stator = np.maximum(losses - core - fw - rotor, 0.0)
    return LossBudget(core, fw, stator, rotor)


def scaled_losses_w(budget: LossBudget, flux_ratio, frequency_ratio, speed_ratio, current_ratio):
    """Core, friction-and-windage and stator losses scaled from rated to the operating point [W].

    Parameters
    ----------
    budget : LossBudget
        Rated-point losses [W].
    flux_ratio, frequency_ratio, speed_ratio, current_ratio : numeric
        ``(V/f)/(V_r/f_r)``, ``f/f_r``, ``n/n_r`` and ``I/I_r`` [-].

    Returns
    -------
    core_w, friction_windage_w, stator_w : numeric
        [W].

    Notes
    -----
    Core loss ~ flux^2 f (hysteresis dominant), friction and windage ~ n^2
    (fan-cooled motor, common practice), stator copper loss ~ I^2.
    IEC 60034-2-1 separates the losses in the same parts.
    """
    core = budget.core_w * np.asarray(flux_ratio, dtype=float) ** 2 * np.asarray(frequency_ratio, dtype=float)
    fw = budget.friction_windage_w * np.asarray(speed_ratio, dtype=float) ** 2
    stator = budget.stator_w * np.asarray(current_ratio, dtype=float) ** 2
    return core, fw, stator


def operating_losses_w(budget: LossBudget, flux_ratio, frequency_ratio, speed_ratio, current_ratio,
                       slip, output_w):
    """Losses at the operating point [W].

    Parameters
    ----------
    budget : LossBudget
        Rated-point losses.
    flux_ratio : numeric
        ``(V/f) / (V_r/f_r)`` [-].
    frequency_ratio : numeric
        ``f / f_r`` [-].
    speed_ratio : numeric
        ``n / n_r`` [-].
    current_ratio : numeric
        Measured over rated current [-].
    slip : numeric
        Slip [pu].
    output_w : numeric
        Shaft output [W].

    Returns
    -------
    numeric
        Total losses [W].
    """
    s = np.minimum(np.maximum(np.asarray(slip, dtype=float), 0.0), 0.999)
    core, fw, stator = scaled_losses_w(budget, flux_ratio, frequency_ratio, speed_ratio, current_ratio)
    rotor = rotor_copper_loss_w(s, np.asarray(output_w, dtype=float) + fw)
    return core + fw + stator + rotor


def efficiency_pu(output_w, losses_w):
    """``P_out / (P_out + losses)`` [pu]; NaN where the sum is not positive."""
    out = np.asarray(output_w, dtype=float)
    tot = out + np.asarray(losses_w, dtype=float)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(tot > 0, out / tot, np.nan)


#: Multipliers bounding the actual rated losses against the nameplate's, for
#: motors up to 150 kW: IEC 60034-1 allows the efficiency to fall short by
#: 15 % of (1 - eta); the lower side is a common spread of measured motors.
LOSS_TOLERANCE = (0.90, 1.15)
#: Rated output up to which the 15 % tolerance applies [kW] (IEC 60034-1).
LOSS_TOLERANCE_LIMIT_KW = 150.0
#: Upper loss multiplier above that output: -10 % of (1 - eta) (IEC 60034-1).
LOSS_TOLERANCE_HIGH_ABOVE_LIMIT = 1.10


def loss_tolerance_high(rated_power_kw):
    """Upper multiplier on the nameplate's rated losses allowed by IEC 60034-1 [-].

    Parameters
    ----------
    rated_power_kw : numeric
        Rated output [kW]; NaN (unknown) takes the wider, up-to-150 kW value.

    Returns
    -------
    numeric
        1.15 up to and including 150 kW (efficiency may fall short by 15 % of
        ``1 - eta``), 1.10 above (10 % of ``1 - eta``).

    References
    ----------
    .. [1] IEC 60034-1, table of tolerances: efficiency, machines up to
       150 kW ``-15 % of (1 - eta)``, above 150 kW ``-10 % of (1 - eta)``.

    Examples
    --------
    >>> loss_tolerance_high([150.0, 160.0]).tolist()
    [1.15, 1.1]
    """
    p = np.asarray(rated_power_kw, dtype=float)
    with np.errstate(invalid="ignore"):
        return np.where(p > LOSS_TOLERANCE_LIMIT_KW, LOSS_TOLERANCE_HIGH_ABOVE_LIMIT, LOSS_TOLERANCE[1])


def efficiency_band(budgets, output_w, output_low_w, output_high_w, flux_ratio, frequency_ratio,
                    speed_ratio, current_ratio, current_accuracy_pct, slip, rated_power_kw=np.nan):
    """Efficiency at the operating point and its band.

    Parameters
    ----------
    budgets : tuple of LossBudget
        ``(central, low_fixed, high_fixed)``: the budgets built with the
        central, lowest and highest fixed-loss share.
    output_w, output_low_w, output_high_w : numeric
        Shaft output estimate and its band [W].
    flux_ratio, frequency_ratio, speed_ratio, current_ratio, slip : numeric
        Operating conditions (see :func:`operating_losses_w`).
    current_accuracy_pct : numeric
        Clamp meter accuracy [% of reading].
    rated_power_kw : numeric, optional
        Rated output [kW]: chooses the IEC 60034-1 loss tolerance
        (:func:`loss_tolerance_high`); unknown (NaN) takes the 15 % one.

    Returns
    -------
    tuple of numeric
        ``(efficiency, low, high)`` [pu].

    Notes
    -----
    The losses are linear in the fixed-loss share, so their extremes lie at
    the ends of its band; the highest losses go with the meter reading low
    (true current higher) and the nameplate's loss tolerance at its top, the
    lowest the other way. Each is paired with both ends of the output band
    and the band is the extreme efficiency of those pairs.
    """
    central = budgets[0]
    acc = np.asarray(current_accuracy_pct, dtype=float) / 100.0
    ir = np.asarray(current_ratio, dtype=float)
    args = (flux_ratio, frequency_ratio, speed_ratio)
    eta = efficiency_pu(output_w, operating_losses_w(central, *args, ir, slip, output_w))
    tol_high = loss_tolerance_high(rated_power_kw)
    low, high = eta, eta
    for p in (output_low_w, output_high_w):
        lost = [operating_losses_w(b, *args, ir * k, slip, p) for b in budgets[1:] for k in (1 - acc, 1 + acc)]
        hi_loss = tol_high * np.fmax(np.fmax(lost[0], lost[1]), np.fmax(lost[2], lost[3]))
        lo_loss = LOSS_TOLERANCE[0] * np.fmin(np.fmin(lost[0], lost[1]), np.fmin(lost[2], lost[3]))
        low = np.fmin(low, efficiency_pu(p, hi_loss))
        high = np.fmax(high, efficiency_pu(p, lo_loss))
    return eta, low, high
