"""Energy and running cost at the operating point, and what a replacement saves.

* how much electrical power the motor draws (:func:`input_power`),
* how much energy and money that is in a year (:func:`annual_energy`),
* what a more efficient motor would save at the same shaft load
  (:func:`right_size_savings_kwh`), and on a centrifugal fan or pump that the
  new motor turns faster (:func:`right_size_savings_with_speed_kwh`, cube
  law :func:`affinity_power_kw`). Choosing the replacement is
  :mod:`slipwise.physics.right_sizing`.

Units: power in kW, energy in kWh, time in h, speed in rpm, efficiency in pu.
The energy price is currency-neutral: a cost comes out in whatever currency
the price per kWh is in.

References
----------
.. [1] US DOE Motor Challenge, "Determining Electric Motor Load and
   Efficiency", fact sheet DOE/GO-10097-517: input power
   ``sqrt(3) V I PF / 1000`` (Equation 1) (read).
.. [2] US DOE Motor Challenge, "Replacing an Oversized and Underloaded
   Electric Motor", fact sheet: an assessment of savings needs the load, the
   operating efficiency at that load, and the full-load speeds of the motor
   replaced and of the replacement (read).
.. [3] US DOE Motor Challenge, "Buying an Energy-Efficient Electric Motor",
   fact sheet: annual savings ``hp x 0.746 x L x hours x (100/E_std -
   100/E_ee)`` (from memory; the same formula in kW form is used in the
   25 hp worked example cited in the tests, read).
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from .load import input_power_w
from .units import KILOWATT_W

#: Longest year [h]: 366 days x 24 h. More operating hours a year are impossible.
HOURS_PER_YEAR_MAX_H = 366.0 * 24.0


def _f(x):
    return np.asarray(x, dtype=float)


def _out(a):
    return a[()] if np.ndim(a) == 0 else a


# --- input power -------------------------------------------------------------

class InputPower(NamedTuple):
    """Electrical input [kW] with its band."""

    input_power_kw: np.ndarray
    input_power_low_kw: np.ndarray
    input_power_high_kw: np.ndarray


def measured_input_power_kw(power_kw, voltage_v, current_a, power_factor):
    """Electrical input as measured: the power reading, else ``sqrt(3) V I PF``.

    Parameters
    ----------
    power_kw : numeric
        Three-phase power read on a power meter [kW]; NaN where not read.
    voltage_v, current_a, power_factor : numeric
        Mean line voltage [V], mean line current [A], power factor [-].

    Returns
    -------
    numeric
        Input power [kW]: ``power_kw`` where finite, otherwise
        ``sqrt(3) V I PF / 1000`` (DOE [1]_, Equation 1, computed by
        :func:`slipwise.physics.load.input_power_w`).
    """
    p = _f(power_kw)
    return _out(np.where(np.isfinite(p), p, input_power_w(voltage_v, current_a, power_factor) / KILOWATT_W))


def input_power_from_output_kw(shaft_output_kw, efficiency_pu):
    """Electrical input needed for a shaft output at an efficiency.

    Parameters
    ----------
    shaft_output_kw : numeric
        Shaft output [kW], >= 0.
    efficiency_pu : numeric
        Efficiency at that output [pu], in (0, 1].

    Returns
    -------
    numeric
        ``P_in = P_out / eta`` [kW]; NaN where the output is negative or the
        efficiency outside (0, 1].

    Examples
    --------
    >>> round(float(input_power_from_output_kw(9.0, 0.9)), 6)
    10.0
    """
    p, eta = _f(shaft_output_kw), _f(efficiency_pu)
    ok = (p >= 0.0) & (eta > 0.0) & (eta <= 1.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        return _out(np.where(ok, p / np.where(ok, eta, 1.0), np.nan))


def input_power(shaft_output_kw, shaft_output_low_kw, shaft_output_high_kw,
                efficiency_pu, efficiency_low_pu, efficiency_high_pu,
                measured_input_kw=np.nan, measured_input_accuracy_pct=np.nan):
    """Electrical input at the operating point and its band.

    Parameters
    ----------
    shaft_output_kw, shaft_output_low_kw, shaft_output_high_kw : numeric
        Estimated shaft output and its band [kW].
    efficiency_pu, efficiency_low_pu, efficiency_high_pu : numeric
        Efficiency at the estimated load and its band [pu].
    measured_input_kw : numeric, optional
        Measured input (see :func:`measured_input_power_kw`) [kW]; NaN where
        none was measured.
    measured_input_accuracy_pct : numeric, optional
        Accuracy of the measured input [% of reading], >= 0.

    Returns
    -------
    InputPower
        Where an input was measured: the reading, band ``+-`` its accuracy
        (NaN band if the accuracy is unknown). Otherwise the output over the
        efficiency, band from the pessimistic pairs.

    Notes
    -----
    ``P_in = P_out / eta``; ``P_in,low = P_out,low / eta_high`` and
    ``P_in,high = P_out,high / eta_low``: the band of the quotient takes the
    ends that widen it (the output and efficiency errors are not assumed to
    cancel).
    """
    meas = _f(measured_input_kw)
    acc = _f(measured_input_accuracy_pct) / 100.0
    acc = np.where(acc >= 0.0, acc, np.nan)
    have = np.isfinite(meas) & (meas >= 0.0)
    est = input_power_from_output_kw(shaft_output_kw, efficiency_pu)
    est_lo = input_power_from_output_kw(shaft_output_low_kw, efficiency_high_pu)
    est_hi = input_power_from_output_kw(shaft_output_high_kw, efficiency_low_pu)
    return InputPower(_out(np.where(have, meas, est)),
                      _out(np.where(have, meas * (1.0 - acc), est_lo)),
                      _out(np.where(have, meas * (1.0 + acc), est_hi)))


# --- annual energy and cost --------------------------------------------------

class AnnualEnergy(NamedTuple):
    """Energy a year [kWh] and its cost [currency], each with its band."""

    annual_energy_kwh: np.ndarray
    annual_energy_low_kwh: np.ndarray
    annual_energy_high_kwh: np.ndarray
    annual_energy_cost: np.ndarray
    annual_energy_cost_low: np.ndarray
    annual_energy_cost_high: np.ndarray


def annual_energy_kwh(input_power_kw, operating_hours_per_year_h):
    """Energy drawn in a year.

    Parameters
    ----------
    input_power_kw : numeric
        Electrical input [kW], >= 0.
    operating_hours_per_year_h : numeric
        Hours run a year [h], 0 to 8784 (a leap year).

    Returns
    -------
    numeric
        ``E = P_in x t`` [kWh]; NaN where either input is outside its range.

    Examples
    --------
    >>> float(annual_energy_kwh(10.0, 4000.0))
    40000.0
    """
    p, h = _f(input_power_kw), _f(operating_hours_per_year_h)
    ok = (p >= 0.0) & (h >= 0.0) & (h <= HOURS_PER_YEAR_MAX_H)
    return _out(np.where(ok, p * h, np.nan))


def annual_energy_cost(energy_kwh, energy_price_per_kwh):
    """Cost of a year's energy, in the currency of the price.

    Parameters
    ----------
    energy_kwh : numeric
        Energy a year [kWh], >= 0.
    energy_price_per_kwh : numeric
        Price [currency/kWh], >= 0 (an average tariff; demand charges are not
        modelled).

    Returns
    -------
    numeric
        ``C = E x price`` [currency]; NaN where an input is negative or NaN.
    """
    e, c = _f(energy_kwh), _f(energy_price_per_kwh)
    return _out(np.where((e >= 0.0) & (c >= 0.0), e * c, np.nan))


def annual_energy(power: InputPower, operating_hours_per_year_h, energy_price_per_kwh):
    """Annual energy and cost with the band of the input power carried through.

    Parameters
    ----------
    power : InputPower
        Input power and its band [kW] (see :func:`input_power`).
    operating_hours_per_year_h : numeric
        Hours run a year [h].
    energy_price_per_kwh : numeric
        Price [currency/kWh].

    Returns
    -------
    AnnualEnergy
        Hours and price are taken as exact: the band is the power's band.
    """
    e = [annual_energy_kwh(p, operating_hours_per_year_h) for p in power]
    c = [annual_energy_cost(x, energy_price_per_kwh) for x in e]
    return AnnualEnergy(*e, *c)


# --- savings -------------------------------------------------------------------

def right_size_savings_kwh(shaft_output_kw, operating_hours_per_year_h, efficiency_old_pu, efficiency_new_pu):
    """Energy saved a year by a more efficient motor at the same shaft load.

    Parameters
    ----------
    shaft_output_kw : numeric
        Shaft load [kW], >= 0 (unchanged by the swap: no speed change).
    operating_hours_per_year_h : numeric
        Hours run a year [h], 0-8784.
    efficiency_old_pu, efficiency_new_pu : numeric
        Efficiency of the present motor at this load and of the replacement
        [pu], in (0, 1].

    Returns
    -------
    numeric
        ``P x t x (1/eta_old - 1/eta_new)`` [kWh]; signed (negative where the
        replacement is the less efficient); NaN where an input is out of range.

    Notes
    -----
    The DOE / Motor Challenge savings formula [3]_,
    ``kW saved = hp x 0.746 x L x (100/E_old - 100/E_new)``, with
    ``hp x 0.746 x L`` the shaft load in kW, times the hours.

    Examples
    --------
    >>> round(float(right_size_savings_kwh(25 * 0.746, 4000.0, 0.885, 0.91)))  # 25 hp, 88.5 -> 91 %
    2316
    """
    e_old = annual_energy_kwh(input_power_from_output_kw(shaft_output_kw, efficiency_old_pu),
                              operating_hours_per_year_h)
    e_new = annual_energy_kwh(input_power_from_output_kw(shaft_output_kw, efficiency_new_pu),
                              operating_hours_per_year_h)
    return _out(_f(e_old) - _f(e_new))


def affinity_power_kw(power_kw, speed_ratio):
    """Shaft power of a centrifugal fan or pump at another speed.

    Parameters
    ----------
    power_kw : numeric
        Shaft power at the present speed [kW].
    speed_ratio : numeric
        New speed over present speed [-], >= 0.

    Returns
    -------
    numeric
        ``P_new = P (n_new / n_old)^3`` [kW] (affinity laws, same system
        curve; common practice for a load dominated by friction head, less
        for a system with static head).
    """
    r = _f(speed_ratio)
    return _out(np.where(r >= 0.0, _f(power_kw) * r ** 3, np.nan))


def right_size_savings_with_speed_kwh(shaft_output_kw, operating_speed_rpm, new_speed_rpm,
                                      operating_hours_per_year_h, efficiency_old_pu, efficiency_new_pu):
    """Savings of a replacement on a variable-torque load, speed rise included.

    Parameters
    ----------
    shaft_output_kw : numeric
        Present shaft load [kW].
    operating_speed_rpm, new_speed_rpm : numeric
        Present speed and the replacement's speed on the same load [rpm]
        (see :func:`slipwise.physics.right_sizing.variable_torque_speed_rpm`).
    operating_hours_per_year_h : numeric
        Hours run a year [h].
    efficiency_old_pu, efficiency_new_pu : numeric
        Efficiencies [pu] (the new one at its new load).

    Returns
    -------
    numeric
        ``t x (P / eta_old - P (n_new/n_old)^3 / eta_new)`` [kWh], signed:
        negative where the speed rise eats the efficiency gain. The caller
        reports :func:`savings_to_report_kwh`.

    Notes
    -----
    The fan or pump also moves more flow at the higher speed; whether that
    is useful work is the process's question, not the motor's. DOE [2]_
    names both full-load speeds as needed for the assessment.
    """
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = _f(new_speed_rpm) / _f(operating_speed_rpm)
    ratio = np.where(_f(operating_speed_rpm) > 0.0, ratio, np.nan)
    p_new = affinity_power_kw(shaft_output_kw, ratio)
    e_old = annual_energy_kwh(input_power_from_output_kw(shaft_output_kw, efficiency_old_pu),
                              operating_hours_per_year_h)
    e_new = annual_energy_kwh(input_power_from_output_kw(p_new, efficiency_new_pu),
                              operating_hours_per_year_h)
    return _out(_f(e_old) - _f(e_new))


def savings_to_report_kwh(signed_savings_kwh):
    """Savings to report, and whether the speed rise (or worse efficiency) ate them.

    Parameters
    ----------
    signed_savings_kwh : numeric
        Signed savings [kWh].

    Returns
    -------
    tuple of numeric
        ``(max(0, savings) [kWh], eaten [bool])``; NaN stays NaN and is not
        flagged as eaten.
    """
    s = _f(signed_savings_kwh)
    return _out(np.where(s < 0.0, 0.0, s)), _out(s < 0.0)


def savings_within_use_kwh(savings_kwh, annual_use_kwh):
    """Savings no larger than the whole year's use.

    Parameters
    ----------
    savings_kwh : numeric
        Savings to report [kWh], >= 0 (see :func:`savings_to_report_kwh`).
    annual_use_kwh : numeric
        The present motor's energy a year [kWh] (:func:`annual_energy_kwh` of
        the input power); NaN where unknown.

    Returns
    -------
    numeric
        ``min(savings, use)`` [kWh]; the savings unchanged where the use is
        NaN. The savings are reckoned from the shaft output over the
        efficiency, the use from the measured input where there is one: two
        estimates of the same power, so the first may exceed the second by
        their errors; a replacement cannot save more than the motor uses.
    """
    s, e = _f(savings_kwh), _f(annual_use_kwh)
    return _out(np.where(np.isfinite(e) & (s > e), e, s))
