"""Synchronous speed, pole count and slip.

Notes
-----
The rotating field of a 3-phase winding with ``p`` poles fed at ``f`` Hz turns at
``n_s = 120 f / p`` rpm; slip is ``s = (n_s - n) / n_s``.
"""

from __future__ import annotations

import numpy as np

from .units import MINUTE_S

#: rpm per (Hz / pole pair): 60 s/min, expressed per pole (2 poles = 1 pair).
_RPM_PER_HZ_PER_POLE = 2.0 * MINUTE_S


def synchronous_speed_rpm(frequency_hz, poles):
    """Synchronous speed of the stator field.

    Parameters
    ----------
    frequency_hz : numeric
        Supply (or drive output) frequency [Hz].
    poles : numeric
        Number of poles (even integer) [-].

    Returns
    -------
    numeric
        Synchronous speed [rpm], ``120 f / p``.

    References
    ----------
    .. [1] IEC 60034-1, rotating electrical machines, definitions of speed.

    Examples
    --------
    >>> float(synchronous_speed_rpm(50.0, 4))
    1500.0
    """
    frequency_hz = np.asarray(frequency_hz, dtype=float)
    poles = np.asarray(poles, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        return _RPM_PER_HZ_PER_POLE * frequency_hz / poles


def infer_poles(rated_speed_rpm, rated_frequency_hz):
    """Pole count of an induction motor from its full-load speed.

    The largest even ``p`` whose synchronous speed ``120 f / p`` is above the
    rated speed: a loaded induction motor runs a few percent below synchronous.

    Parameters
    ----------
    rated_speed_rpm : numeric
        Nameplate full-load speed [rpm].
    rated_frequency_hz : numeric
        Nameplate frequency [Hz].

    Returns
    -------
    numeric
        Poles [-] (even integer as float). NaN where the speed is not positive.

    Examples
    --------
    >>> float(infer_poles(1750, 60)), float(infer_poles(2950, 50)), float(infer_poles(975, 50))
    (4.0, 2.0, 6.0)
    """
    n = np.asarray(rated_speed_rpm, dtype=float)
    f = np.asarray(rated_frequency_hz, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        # pole pairs = floor(60 f / n) gives the largest pair count with n_s > n
        pairs = np.floor(MINUTE_S * f / n)
        pairs = np.where(np.isclose(MINUTE_S * f / n, pairs), pairs - 1, pairs)  # n == n_s exactly
    poles = 2.0 * pairs
    return np.where((n > 0) & (pairs >= 1), poles, np.nan)


def slip_pu(speed_rpm, sync_speed_rpm):
    """Slip in per unit of synchronous speed.

    Parameters
    ----------
    speed_rpm : numeric
        Shaft speed [rpm].
    sync_speed_rpm : numeric
        Synchronous speed [rpm].

    Returns
    -------
    numeric
        Slip [pu]; negative above synchronous speed (generating).

    Examples
    --------
    >>> round(float(slip_pu(1770, 1800)), 4)
    0.0167
    """
    n = np.asarray(speed_rpm, dtype=float)
    ns = np.asarray(sync_speed_rpm, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        return (ns - n) / ns


def slip_rpm(speed_rpm, sync_speed_rpm):
    """Slip speed [rpm]: synchronous minus shaft speed."""
    return np.asarray(sync_speed_rpm, dtype=float) - np.asarray(speed_rpm, dtype=float)
