"""Torque-speed: driven-load torque laws, breakdown margin, stability, starting.

The motor's own curve comes from the fitted circuit (:mod:`.circuit`); the
Kloss formula here is the documented simplification used where only the
breakdown point is known.
"""

from __future__ import annotations

import numpy as np

from .units import RPM_TO_RAD_S

#: Driven-load torque laws and how load torque varies with speed ``n``:
#: ``variable_torque`` T ~ n^2 (fans, centrifugal pumps); ``constant_torque``
#: (conveyors, positive-displacement pumps, compressors); ``constant_power``
#: T ~ 1/n (winders, some machine tools); ``high_breakaway`` constant torque
#: with a breakaway peak near standstill (loaded conveyors, crushers, mixers).
LOAD_LAWS = ("variable_torque", "constant_torque", "constant_power", "high_breakaway")

#: Speed below which a high-breakaway load needs its breakaway torque [pu of synchronous].
BREAKAWAY_SPEED_PU = 0.1


def kloss_torque(slip, breakdown_slip, breakdown_torque):
    """Motor torque by the Kloss formula.

    Parameters
    ----------
    slip : numeric
        Slip [pu].
    breakdown_slip : numeric
        Slip at breakdown torque [pu].
    breakdown_torque : numeric
        Breakdown torque (any unit; the result has the same unit).

    Returns
    -------
    numeric
        ``T = 2 T_k / (s / s_k + s_k / s)``.

    Notes
    -----
    Neglects stator resistance; exact for the circuit with ``R1 = 0``. It is a
    simplification: the fitted circuit is used for the reported figures.

    References
    ----------
    .. [1] M. Kloss, the classical two-parameter torque-slip formula, as given
       in standard electric-machinery texts.

    Examples
    --------
    >>> float(kloss_torque(0.2, 0.2, 250.0))
    250.0
    """
    s = np.asarray(slip, dtype=float)
    sk = np.asarray(breakdown_slip, dtype=float)
    tk = np.asarray(breakdown_torque, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(s == 0, 0.0, 2.0 * tk / (s / sk + sk / s))


def kloss_slope_nm_per_rpm(slip, breakdown_slip, breakdown_torque_nm, sync_speed_rpm):
    """Slope of the motor's torque-speed curve by the Kloss form [N·m/rpm].

    Parameters
    ----------
    slip : numeric
        Operating slip [pu] (positive).
    breakdown_slip : numeric
        Slip at breakdown torque [pu].
    breakdown_torque_nm : numeric
        Breakdown torque [N·m].
    sync_speed_rpm : numeric
        Synchronous speed [rpm].

    Returns
    -------
    numeric
        ``dT/dn`` at the operating point [N·m/rpm]; negative on the stable side.

    Notes
    -----
    Derivative of the Kloss formula (:func:`kloss_torque`) with
    respect to slip, ``dT/ds = 2 T_k (s_k/s^2 - 1/s_k) / (s/s_k + s_k/s)^2``,
    and ``dn = -n_s ds``. The Kloss form neglects stator resistance; it is
    used through the fitted circuit's breakdown point, a documented
    simplification for the sign of the slope (stability), not for figures.

    References
    ----------
    .. [1] M. Kloss, the classical two-parameter torque-slip formula, as given
       in standard electric-machinery texts.

    Examples
    --------
    >>> abs(float(kloss_slope_nm_per_rpm(0.2, 0.2, 250.0, 1500.0))) < 1e-12   # zero at breakdown
    True
    """
    s = np.asarray(slip, dtype=float)
    sk = np.asarray(breakdown_slip, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        x = s / sk + sk / s
        dt_ds = 2.0 * np.asarray(breakdown_torque_nm, dtype=float) * (sk / s ** 2 - 1.0 / sk) / x ** 2
        return -dt_ds / np.asarray(sync_speed_rpm, dtype=float)


def torque_nm(power_w, speed_rpm):
    """Torque from power and speed, ``T = P / omega`` [N·m].

    Parameters
    ----------
    power_w : numeric
        Mechanical power [W].
    speed_rpm : numeric
        Shaft speed [rpm]; floored at 1e-9 rad/s so standstill gives a finite value.

    Returns
    -------
    numeric
        Torque [N·m].

    Examples
    --------
    >>> round(float(torque_nm(11000.0, 1460.0)), 2)   # 11 kW at 1460 rpm
    71.95
    """
    omega = np.asarray(speed_rpm, dtype=float) * RPM_TO_RAD_S
    return np.asarray(power_w, dtype=float) / np.maximum(omega, 1e-9)


def torque_from_load(load, speed_ratio):
    """Shaft torque over rated torque from shaft output over rated output [pu or %, as ``load``].

    ``T/T_r = (P/P_r) / (n/n_r)``: torque is power over speed.

    Parameters
    ----------
    load : numeric
        Shaft output over rated output [pu or %].
    speed_ratio : numeric
        Shaft speed over rated speed [-].

    Examples
    --------
    >>> float(torque_from_load(0.5, 0.5))   # half the output at half the speed: rated torque
    1.0
    """
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.asarray(load, dtype=float) / np.asarray(speed_ratio, dtype=float)


def shaft_breakdown_torque_pct(breakdown_torque_em_nm, friction_windage_nm, rated_torque_nm):
    """Breakdown torque available at the shaft [% of rated torque].

    The electromagnetic breakdown torque less the friction and windage torque
    at the operating speed, over rated torque.
    """
    with np.errstate(divide="ignore", invalid="ignore"):
        return 100.0 * (np.asarray(breakdown_torque_em_nm, dtype=float) - friction_windage_nm) / rated_torque_nm


def starting_margin(locked_rotor_torque_pct, voltage_v, rated_voltage_v, breakaway_share, operating_torque_pct):
    """Locked-rotor torque at the measured voltage over the breakaway torque the load needs [-].

    Parameters
    ----------
    locked_rotor_torque_pct : numeric
        Locked-rotor torque at rated voltage [% of rated torque].
    voltage_v, rated_voltage_v : numeric
        Supply voltage and rated voltage [V].
    breakaway_share : numeric
        Breakaway torque of the driven load over its running torque [-].
    operating_torque_pct : numeric
        Running torque of the load [% of rated], floored at 10 % (an
        unloaded reading still has to start its machine).

    Notes
    -----
    Locked-rotor torque scales with the square of the voltage (the current
    at standstill is set by the leakage impedance), IEC 60034-12 and
    NEMA MG 1 give it at rated voltage.
    """
    with np.errstate(divide="ignore", invalid="ignore"):
        lrt_now = locked_rotor_torque_pct * (voltage_v / rated_voltage_v) ** 2
        need = breakaway_share * np.maximum(operating_torque_pct, 10.0)
        return lrt_now / need


def variable_torque(speed_rpm, operating_speed_rpm, operating_torque):
    """Torque of a fan or centrifugal pump at a speed, ``T = T_0 (n/n_0)^2`` (affinity laws).

    Parameters
    ----------
    speed_rpm : numeric
        Speed to evaluate [rpm].
    operating_speed_rpm, operating_torque : numeric
        A point on the law [rpm], [any torque unit; the result has the same unit].
    """
    with np.errstate(divide="ignore", invalid="ignore"):
        return operating_torque * (np.asarray(speed_rpm, dtype=float) / operating_speed_rpm) ** 2


def load_torque(speed_rpm, law, operating_speed_rpm, operating_torque, sync_speed_rpm,
                breakaway_torque=np.nan):
    """Torque the driven machine demands at a speed, through the operating point.

    Parameters
    ----------
    speed_rpm : numeric
        Speeds to evaluate [rpm].
    law : str or array of str
        One of :data:`LOAD_LAWS`.
    operating_speed_rpm, operating_torque : numeric
        The operating point the law passes through [rpm], [any torque unit].
    sync_speed_rpm : numeric
        Synchronous speed [rpm] (scales the breakaway region).
    breakaway_torque : numeric
        Torque needed at standstill by ``high_breakaway`` loads (same unit).

    Returns
    -------
    numeric
        Load torque; for ``constant_power`` capped at 3x the operating torque
        near standstill (a real machine's limit).
    """
    n = np.asarray(speed_rpm, dtype=float)
    law = np.asarray(law)
    n0 = np.asarray(operating_speed_rpm, dtype=float)
    t0 = np.asarray(operating_torque, dtype=float)
    ns = np.asarray(sync_speed_rpm, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        variable = variable_torque(n, n0, t0)
        constant = t0 * np.ones_like(n)
        power = np.minimum(t0 * n0 / np.maximum(n, 1e-9), 3.0 * t0)
        ramp = np.minimum(np.maximum(1.0 - n / (BREAKAWAY_SPEED_PU * ns), 0.0), 1.0)
        breakaway = t0 + (np.fmax(np.asarray(breakaway_torque, dtype=float), t0) - t0) * ramp
    return np.select([law == "variable_torque", law == "constant_torque", law == "constant_power",
                      law == "high_breakaway"], [variable, constant, power, breakaway], np.nan)


def load_torque_slope(law, operating_speed_rpm, operating_torque):
    """Slope of the driven load's torque-speed law at the operating point.

    Parameters
    ----------
    law : str or array of str
        One of :data:`LOAD_LAWS`.
    operating_speed_rpm, operating_torque : numeric
        The operating point [rpm], [any torque unit].

    Returns
    -------
    numeric
        ``dT/dn`` [torque unit per rpm]: ``2 T_0 / n_0`` for variable torque
        (``T ~ n^2``), ``-T_0 / n_0`` for constant power (``T ~ 1/n``), 0 for
        constant-torque and high-breakaway loads above breakaway speed.
    """
    law = np.asarray(law)
    n0 = np.asarray(operating_speed_rpm, dtype=float)
    t0 = np.asarray(operating_torque, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.select([law == "variable_torque", law == "constant_power"],
                         [2.0 * t0 / n0, -t0 / n0], 0.0)


def is_stable(motor_slope, load_slope):
    """Whether an operating point is stable.

    Parameters
    ----------
    motor_slope, load_slope : numeric
        d(torque)/d(speed) of the motor and of the load at the point
        [torque unit per rpm].

    Returns
    -------
    numpy.ndarray of bool
        True where a small speed rise makes the load torque exceed the motor
        torque (``dT_motor/dn < dT_load/dn``), so the speed falls back.
    """
    return np.asarray(motor_slope, dtype=float) < np.asarray(load_slope, dtype=float)


def breakdown_margin(breakdown_torque, operating_torque):
    """Breakdown torque over operating torque [-].

    The operating torque is floored at 1 % of the breakdown torque's unit
    basis by the caller; here NaN where either is missing.
    """
    bt = np.asarray(breakdown_torque, dtype=float)
    ot = np.asarray(operating_torque, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(ot > 0, bt / ot, np.nan)


def breakdown_margin_band(breakdown_now_pct, breakdown_rated_pct, breakdown_low_rated_pct,
                          operating_torque_pct, operating_torque_high_pct):
    """Breakdown margin, central and pessimistic-low [-].

    Parameters
    ----------
    breakdown_now_pct : numeric
        Breakdown torque at the present voltage and frequency, from the
        circuit fitted to ``breakdown_rated_pct`` [% of rated torque].
    breakdown_rated_pct : numeric
        The breakdown torque at rated voltage the circuit was fitted to
        (nameplate or :func:`typical.typical_breakdown_torque_pct`) [%].
    breakdown_low_rated_pct : numeric
        Lowest credible breakdown torque at rated voltage
        (:func:`typical.breakdown_torque_low_pct`) [%].
    operating_torque_pct, operating_torque_high_pct : numeric
        Operating torque, central and high end of its band [% of rated
        torque]; floored at 1 %.

    Returns
    -------
    tuple of numeric
        ``(central, low)``: ``T_b,now / T_op`` and
        ``T_b,now * (T_b,low / T_b,rated) / T_op,high`` (the present voltage's
        effect taken from the circuit, the rated-voltage value at its lowest,
        the load at its highest). NaN where an input is missing.

    Examples
    --------
    >>> [round(float(x), 3) for x in breakdown_margin_band(240.0, 240.0, 160.0, 100.0, 110.0)]
    [2.4, 1.455]
    """
    now = np.asarray(breakdown_now_pct, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        scale = np.asarray(breakdown_low_rated_pct, dtype=float) / np.asarray(breakdown_rated_pct, dtype=float)
        central = breakdown_margin(now, np.maximum(np.asarray(operating_torque_pct, dtype=float), 1.0))
        low = breakdown_margin(now * np.fmin(scale, 1.0),
                               np.maximum(np.asarray(operating_torque_high_pct, dtype=float), 1.0))
    return central, low
