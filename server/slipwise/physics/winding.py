"""Winding resistance: balance of the three line-to-line readings, temperature correction.

The unbalance is the maximum deviation from the mean of the three readings
divided by the mean (the same definition NEMA MG 1 uses for voltages), so a
fault in one phase of a star winding shows in the two readings through it.
States are on the scale of :mod:`slipwise.physics.verdict`; the engine raises
``winding_resistance_unbalance`` when ``winding_resistance_unbalance_state``
is ``BEYOND``.
"""

from __future__ import annotations

import numpy as np

from .verdict import accuracy_fraction, choice, judge_maximum, lookup

#: Inferred absolute zero of resistance [°C below 0 °C]: 234.5 for copper,
#: 225 for aluminium (IEEE 118, IEC 60034-1 8.6.2.3, IEEE 112; from memory).
TEMPERATURE_CONSTANT_C = {"copper": 234.5, "aluminium": 225.0}
MATERIALS = tuple(TEMPERATURE_CONSTANT_C)

#: Reference temperature of the corrected mean [°C]. 25 °C is the reference
#: ambient of IEEE 112 and IEC 60034-2-1 and the temperature a test report's
#: cold resistance is usually given at, so the site reading compares with it
#: directly; a site reading is taken near ambient, so the correction stays small.
DEFAULT_REFERENCE_TEMPERATURE_C = 25.0

#: Largest acceptable unbalance [%]: 2 % is a common acceptance figure (common
#: practice; no standard found that states it for motors). Overridable.
DEFAULT_UNBALANCE_LIMIT_PCT = 2.0
#: A four-wire low-resistance ohmmeter: about ±0.5 % of reading (common practice).
DEFAULT_METER_ACCURACY_PCT = 0.5


def resistance_at_temperature_ohm(resistance_ohm, winding_temperature_c, reference_temperature_c,
                                  material="copper"):
    """Refer a winding resistance measured at one temperature to another.

    Parameters
    ----------
    resistance_ohm : numeric
        Resistance measured at the winding temperature [Ω].
    winding_temperature_c : numeric
        Winding temperature during the measurement [°C].
    reference_temperature_c : numeric
        Temperature to refer the resistance to [°C].
    material : str or array of str, default "copper"
        ``"copper"`` or ``"aluminium"``.

    Returns
    -------
    numeric
        Resistance at the reference temperature [Ω]; NaN where an input is NaN.

    Notes
    -----
    ``R_ref = R_T (k + T_ref) / (k + T)``, ``k`` = 234.5 °C for copper and
    225 °C for aluminium.

    References
    ----------
    .. [1] IEEE Std 118, Standard Test Code for Resistance Measurement.
    .. [2] IEC 60034-1, Rotating electrical machines - Rating and performance,
       8.6.2.3 (resistance method, temperature rise).
    .. [3] IEEE Std 112, 5.4 (correction of resistance to a specified temperature).
    """
    mat = choice(material, "material", MATERIALS)
    k = lookup(mat, TEMPERATURE_CONSTANT_C)
    t = np.asarray(winding_temperature_c, dtype=float)
    t_ref = np.asarray(reference_temperature_c, dtype=float)
    if np.any(t <= -k) or np.any(t_ref <= -k):
        raise ValueError("winding_temperature_c and reference_temperature_c must be above -k "
                         "(-234.5 °C copper, -225 °C aluminium)")
    return np.asarray(resistance_ohm, dtype=float) * (k + t_ref) / (k + t)


def winding_resistance(winding_resistance_l12_ohm, winding_resistance_l23_ohm, winding_resistance_l31_ohm,
                       winding_temperature_c=np.nan, material="copper",
                       reference_temperature_c=DEFAULT_REFERENCE_TEMPERATURE_C,
                       unbalance_limit_pct=DEFAULT_UNBALANCE_LIMIT_PCT,
                       meter_accuracy_pct=DEFAULT_METER_ACCURACY_PCT):
    """Unbalance of the three line-to-line winding resistances and their mean at a reference temperature.

    Parameters
    ----------
    winding_resistance_l12_ohm, winding_resistance_l23_ohm, winding_resistance_l31_ohm : numeric
        Resistance between motor terminals 1-2, 2-3 and 3-1 [Ω].
    winding_temperature_c : numeric, optional
        Winding temperature during the measurement [°C]; without it the
        corrected mean is NaN (the unbalance needs no temperature).
    material : str or array of str, default "copper"
        ``"copper"`` or ``"aluminium"``.
    reference_temperature_c : numeric, default 25
        Temperature the mean is referred to [°C].
    unbalance_limit_pct : numeric, default 2
        Largest acceptable unbalance [%] (common practice).
    meter_accuracy_pct : numeric, default 0.5
        Ohmmeter accuracy [% of reading].

    Returns
    -------
    dict of numeric
        ``winding_resistance_unbalance_pct`` [%], ``winding_resistance_ref_ohm``
        [Ω], ``winding_resistance_unbalance_limit_pct`` [%] and
        ``winding_resistance_unbalance_state`` (verdict scale).

    Notes
    -----
    ``u = 100 max|R_i - R_mean| / R_mean``. The band adds ``2 a`` percentage
    points (``a`` the meter accuracy in %): the worst case of one reading high
    and another low. ``BEYOND`` when ``u`` exceeds the limit; ``AT_LIMIT`` when
    ``u + 2 a`` reaches it.

    References
    ----------
    .. [1] NEMA MG 1, 14.35 (maximum-deviation definition of unbalance).
    .. [2] IEEE Std 118; IEC 60034-1 8.6.2.3 (temperature correction).

    Examples
    --------
    >>> out = winding_resistance(102.0, 100.0, 98.0, 25, meter_accuracy_pct=0)
    >>> float(out["winding_resistance_unbalance_pct"]), int(out["winding_resistance_unbalance_state"])
    (2.0, 2)
    """
    r = np.stack(np.broadcast_arrays(*(np.asarray(x, dtype=float) for x in (
        winding_resistance_l12_ohm, winding_resistance_l23_ohm, winding_resistance_l31_ohm))))
    if np.any(r <= 0):
        raise ValueError("winding_resistance_l12_ohm, _l23_ohm and _l31_ohm must be positive [Ω]")
    limit = np.asarray(unbalance_limit_pct, dtype=float)
    if np.any(limit <= 0):
        raise ValueError(f"unbalance_limit_pct must be positive; got {unbalance_limit_pct!r}")
    a_pct = 100.0 * accuracy_fraction(meter_accuracy_pct, "meter_accuracy_pct")
    mean = r.mean(axis=0)
    # rounded far below any ohmmeter's resolution: 1.02/1.00/0.98 is 2 % exactly, not 2.0000000000000018 %
    unbalance = np.round(100.0 * np.abs(r - mean).max(axis=0) / mean, 9)
    return {
        "winding_resistance_unbalance_pct": unbalance,
        "winding_resistance_ref_ohm": resistance_at_temperature_ohm(
            mean, winding_temperature_c, reference_temperature_c, material),
        "winding_resistance_unbalance_limit_pct": np.broadcast_to(limit, unbalance.shape).astype(float),
        "winding_resistance_unbalance_state": judge_maximum(unbalance, unbalance + 2.0 * a_pct, limit),
    }
