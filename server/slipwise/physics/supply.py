"""Supply quality: voltage and current unbalance, derating, tolerance zones.

Two unbalance definitions are computed because they give different numbers:

* NEMA MG 1 (14.35 / 12.45): maximum deviation from the average of the three
  line voltages, divided by the average, in percent.
* IEC (IEC 60034-26, IEC 61000-4-30): the voltage unbalance factor, the ratio of
  negative- to positive-sequence voltage, computed here from the three
  line-to-line magnitudes alone.
"""

from __future__ import annotations

import numpy as np


def _stack3(a, b, c):
    return np.stack(np.broadcast_arrays(np.asarray(a, dtype=float), np.asarray(b, dtype=float),
                                        np.asarray(c, dtype=float)))


def max_deviation_unbalance_pct(x1, x2, x3):
    """Unbalance as maximum deviation from the mean, NEMA MG 1 definition.

    Parameters
    ----------
    x1, x2, x3 : numeric
        The three line voltages [V] (or line currents [A]).

    Returns
    -------
    numeric
        ``100 * max|x_i - mean| / mean`` [%]; NaN where any value is missing
        or the mean is not positive.

    References
    ----------
    .. [1] NEMA MG 1, Motors and Generators, 14.35 "Operation of induction
       motors from unbalanced voltages" (worked example: 460, 467 and
       450 V average 459 V, maximum deviation 9 V, unbalance 1.96 %).

    Examples
    --------
    >>> round(float(max_deviation_unbalance_pct(460, 467, 450)), 2)
    1.96
    """
    x = _stack3(x1, x2, x3)
    mean = x.mean(axis=0)
    with np.errstate(divide="ignore", invalid="ignore"):
        u = 100.0 * np.abs(x - mean).max(axis=0) / mean
    return np.where(mean > 0, u, np.nan)


def voltage_unbalance_factor_pct(v12, v23, v31):
    """Negative- over positive-sequence voltage from line-to-line magnitudes.

    Parameters
    ----------
    v12, v23, v31 : numeric
        Line-to-line voltage magnitudes [V].

    Returns
    -------
    numeric
        Voltage unbalance factor ``|U2| / |U1|`` [%]. NaN where the three
        magnitudes cannot close a triangle (impossible readings).

    Notes
    -----
    With ``beta = (U12^4 + U23^4 + U31^4) / (U12^2 + U23^2 + U31^2)^2``,

    ``u2 = sqrt((1 - sqrt(3 - 6 beta)) / (1 + sqrt(3 - 6 beta)))``.

    Line-to-line voltages have no zero-sequence part, so the magnitudes fix
    the ratio exactly.

    References
    ----------
    .. [1] IEC 61000-4-30, Testing and measurement techniques - Power quality
       measurement methods, 5.7.1 (simplified unbalance formula).
    """
    u = _stack3(v12, v23, v31)
    u2sum = (u ** 2).sum(axis=0)
    with np.errstate(divide="ignore", invalid="ignore"):
        beta = (u ** 4).sum(axis=0) / u2sum ** 2
        root = np.sqrt(3.0 - 6.0 * beta)
        ratio = np.sqrt((1.0 - root) / (1.0 + root))
    # beta > 1/2 means the three sides cannot form a triangle
    return np.where(np.isfinite(ratio) & (beta <= 0.5), 100.0 * ratio, np.nan)


#: NEMA MG 1 Figure 14-1 (derating factor vs percent voltage unbalance), read
#: from the graph at whole percents. From memory of the published curve.
NEMA_DERATING_UNBALANCE_PCT = np.array([0.0, 1.0, 2.0, 3.0, 4.0, 5.0])
NEMA_DERATING_FACTOR = np.array([1.0, 1.0, 0.95, 0.88, 0.82, 0.75])
#: NEMA MG 1: operation above 5 % voltage unbalance is not recommended.
NEMA_UNBALANCE_LIMIT_PCT = 5.0
_DERATING_FLOOR = 0.05


def nema_derating_factor(voltage_unbalance_pct):
    """Derating factor for a motor on unbalanced voltage, NEMA MG 1 curve.

    Parameters
    ----------
    voltage_unbalance_pct : numeric
        Voltage unbalance by the NEMA definition [%].

    Returns
    -------
    numeric
        Factor to apply to rated output [-], in (0, 1]. Piecewise linear
        through the curve; beyond 5 % (where NEMA does not recommend
        operation) the last segment is extended, floored at 0.05.

    References
    ----------
    .. [1] NEMA MG 1, Figure 14-1 "Medium motor derating factor due to
       unbalanced voltage".
    """
    u = np.asarray(voltage_unbalance_pct, dtype=float)
    inside = np.interp(u, NEMA_DERATING_UNBALANCE_PCT, NEMA_DERATING_FACTOR)
    slope = (NEMA_DERATING_FACTOR[-1] - NEMA_DERATING_FACTOR[-2]) / (
        NEMA_DERATING_UNBALANCE_PCT[-1] - NEMA_DERATING_UNBALANCE_PCT[-2])
    beyond = NEMA_DERATING_FACTOR[-1] + slope * (u - NEMA_DERATING_UNBALANCE_PCT[-1])
    out = np.where(u > NEMA_DERATING_UNBALANCE_PCT[-1], np.maximum(beyond, _DERATING_FLOOR), inside)
    return np.where(np.isnan(u), np.nan, out)


def deviation_pct(measured, rated):
    """Deviation of a measured value from its rated value [% of rated]."""
    measured = np.asarray(measured, dtype=float)
    rated = np.asarray(rated, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return 100.0 * (measured - rated) / rated


#: Label per supply zone code: 0 unknown, 1-3 from :func:`iec_zone_code`, and
#: :data:`DRIVE_ZONE_CODE` for a motor on a drive (no mains tolerance applies).
ZONE_LABELS = ("", "A", "B", "outside", "drive")
DRIVE_ZONE_CODE = 4


def drive_voltage_v(rated_voltage_v, frequency_hz, rated_frequency_hz):
    """Voltage a V/f drive applies at an output frequency [V].

    Constant V/f up to rated frequency, rated voltage above it (field
    weakening): ``V = V_r min(f/f_r, 1)``.
    """
    with np.errstate(divide="ignore", invalid="ignore"):
        return rated_voltage_v * np.minimum(np.asarray(frequency_hz, dtype=float) / rated_frequency_hz, 1.0)


def flux_ratio(voltage_v, frequency_hz, rated_voltage_v, rated_frequency_hz):
    """Air-gap flux over rated flux, ``(V/f) / (V_r/f_r)`` [-] (stator drop neglected)."""
    with np.errstate(divide="ignore", invalid="ignore"):
        return (np.asarray(voltage_v, dtype=float) / frequency_hz) / (rated_voltage_v / rated_frequency_hz)


def iec_zone(voltage_deviation_pct, frequency_deviation_pct):
    """IEC 60034-1 voltage/frequency zone of operation for a motor.

    Parameters
    ----------
    voltage_deviation_pct, frequency_deviation_pct : numeric
        Deviations of voltage and frequency from rated [% of rated].

    Returns
    -------
    numpy.ndarray of str
        ``"A"``, ``"B"`` or ``"outside"``; ``""`` where a deviation is NaN.

    Notes
    -----
    IEC 60034-1 (figure "Voltage and frequency limits for motors"), from
    memory of the figure: zone A is the hexagon with corners (df, dV) =
    (-2, -5), (-2, +3), (0, +5), (+2, +5), (+2, -3), (0, -5) %, that is
    ``|df| <= 2``, ``|dV| <= 5`` and ``|dV - df| <= 5``; zone B is
    ``-5 <= df <= +3``, ``|dV| <= 10`` and ``|dV - df| <= 10``. The cut
    corners are where flux (V/f) is far from rated.
    """
    return np.array(ZONE_LABELS[:4])[iec_zone_code(voltage_deviation_pct, frequency_deviation_pct)]


def iec_zone_code(voltage_deviation_pct, frequency_deviation_pct):
    """:func:`iec_zone` as a code: 0 unknown (NaN), 1 zone A, 2 zone B, 3 outside."""
    dv = np.asarray(voltage_deviation_pct, dtype=float)
    df = np.asarray(frequency_deviation_pct, dtype=float)
    eps = 1e-9
    in_a = (np.abs(df) <= 2 + eps) & (np.abs(dv) <= 5 + eps) & (np.abs(dv - df) <= 5 + eps)
    in_b = (df >= -5 - eps) & (df <= 3 + eps) & (np.abs(dv) <= 10 + eps) & (np.abs(dv - df) <= 10 + eps)
    code = np.where(in_a, 1, np.where(in_b, 2, 3))
    return np.where(np.isnan(dv) | np.isnan(df), 0, code)


def within_nema_tolerance(voltage_deviation_pct, frequency_deviation_pct):
    """Whether a supply is within the NEMA MG 1 running tolerance.

    NEMA MG 1 (12.44): rated voltage +-10 % at rated frequency, rated
    frequency +-5 % at rated voltage, and a combined ``|dV| + |df| <= 10 %``
    with ``|df| <= 5 %``.

    Parameters
    ----------
    voltage_deviation_pct, frequency_deviation_pct : numeric
        Deviations from rated [%].

    Returns
    -------
    numpy.ndarray of bool
        False also where a deviation is NaN.
    """
    dv = np.abs(np.asarray(voltage_deviation_pct, dtype=float))
    df = np.abs(np.asarray(frequency_deviation_pct, dtype=float))
    eps = 1e-9
    return (dv <= 10 + eps) & (df <= 5 + eps) & (dv + df <= 10 + eps)
