"""Overload relay setting against the current the relay sees at full load.

States are on the scale of :mod:`slipwise.physics.verdict`. The engine raises
``overload_setting_high`` when ``overload_setting_high_state`` is ``BEYOND`` and
``overload_setting_low`` when ``overload_setting_low_state`` is ``BEYOND``.

The *low* judgement. A thermal overload relay must not trip at 1.05 times its
setting and must trip within two hours at 1.20 times it (IEC 60947-4-1 tripping
limits, from memory). A relay set below FLA / 1.20 (83.3 % of the full-load
current it sees) is therefore expected to trip a motor running at full load:
``BEYOND``. Between that and FLA / 1.05 (95.2 %) it may trip: ``AT_LIMIT``.
"""

from __future__ import annotations

import numpy as np

from .verdict import AT_LIMIT, BEYOND, CLEAR, NOT_JUDGED, choice, lookup

STARTERS = ("direct", "star_delta", "soft", "drive")
NAMEPLATE_STANDARDS = ("nema", "iec")

#: NEC 430.32(A)(1): largest setting [% of FLA] (read from the code's text as
#: commonly quoted; from memory).
NEC_LIMIT_SF_OR_RISE_PCT = 125.0     # marked SF >= 1.15, or marked rise <= 40 °C
NEC_LIMIT_OTHER_PCT = 115.0          # all other motors
NEC_SERVICE_FACTOR = 1.15
NEC_TEMPERATURE_RISE_C = 40.0
#: IEC practice: set the relay at the rated current; up to 105 % tolerated
#: (common practice; IEC 60947-4-1 tripping limits give the context).
IEC_LIMIT_PCT = 105.0
#: Within this many percentage points below the high limit the setting is at
#: the limit: about the reading resolution of a relay's adjustment dial (a
#: project judgement, not a published figure).
DIAL_BAND_PCT = 2.5
#: IEC 60947-4-1 thermal overload relay: no trip at 1.05 x setting, trip within
#: 2 h at 1.20 x setting (from memory).
NO_TRIP_MULTIPLE = 1.05
TRIP_MULTIPLE = 1.20


def relay_current_a(full_load_current_a, starter, relay_in_winding=None):
    """Current the overload relay carries when the motor runs at full load.

    Parameters
    ----------
    full_load_current_a : numeric
        Nameplate full-load (line) current [A].
    starter : str or array of str
        ``"direct"``, ``"star_delta"``, ``"soft"`` or ``"drive"``.
    relay_in_winding : bool or array of bool, optional
        True where a star-delta starter's relay sits in the winding (phase)
        circuit, after the line contactor; False where it sits in the line.
        Default: True for star-delta (the usual arrangement), False otherwise.

    Returns
    -------
    numeric
        ``FLA / sqrt(3)`` where the relay carries winding (delta phase)
        current, ``FLA`` otherwise [A].

    References
    ----------
    .. [1] Delta connection: line current = sqrt(3) x phase current (any
       electrical machines textbook).
    """
    kind = choice(starter, "starter", STARTERS)
    fla = np.asarray(full_load_current_a, dtype=float)
    if np.any(fla <= 0):
        raise ValueError(f"full_load_current_a must be positive; got {full_load_current_a!r}")
    in_winding = (kind == "star_delta") if relay_in_winding is None else np.asarray(relay_in_winding, dtype=bool)
    if np.any(in_winding & (kind != "star_delta")):
        raise ValueError("relay_in_winding may be true only with starter star_delta")
    seen = np.where(in_winding, fla / np.sqrt(3.0), fla)
    return np.where(kind == "", np.nan, seen)


def setting_limit_pct(nameplate_standard, service_factor=np.nan, temperature_rise_c=np.nan):
    """Largest overload relay setting [% of the full-load current the relay sees].

    Parameters
    ----------
    nameplate_standard : str or array of str
        ``"nema"`` (design letter A-D nameplate) or ``"iec"`` (design N/H).
    service_factor : numeric, optional
        Marked service factor [-]; NaN where not marked (taken as 1.0).
    temperature_rise_c : numeric, optional
        Marked temperature rise [°C]; NaN where not marked.

    Returns
    -------
    numeric
        NEMA: 125 % where SF >= 1.15 or the marked rise is 40 °C or less,
        115 % otherwise (NEC 430.32(A)(1)). IEC: 105 % (common practice).

    References
    ----------
    .. [1] NFPA 70, National Electrical Code, 430.32(A)(1).
    .. [2] IEC 60947-4-1, Contactors and motor-starters, tripping limits of
       thermal overload relays (context for setting at the rated current).
    """
    std = choice(nameplate_standard, "nameplate_standard", NAMEPLATE_STANDARDS)
    sf = np.asarray(service_factor, dtype=float)
    rise = np.asarray(temperature_rise_c, dtype=float)
    if np.any(sf < 1.0):
        raise ValueError(f"service_factor must be at least 1.0; got {service_factor!r}")
    generous = (sf >= NEC_SERVICE_FACTOR) | (rise <= NEC_TEMPERATURE_RISE_C)
    nema = np.where(generous, NEC_LIMIT_SF_OR_RISE_PCT, NEC_LIMIT_OTHER_PCT)
    return np.where(std == "nema", nema, lookup(std, {"iec": IEC_LIMIT_PCT}))


def overload_setting(overload_setting_a, full_load_current_a, starter, nameplate_standard,
                     service_factor=np.nan, temperature_rise_c=np.nan, relay_in_winding=None):
    """Overload relay setting as a percentage of the current it sees at full load, judged.

    Parameters
    ----------
    overload_setting_a : numeric
        Current the relay is set to [A].
    full_load_current_a : numeric
        Nameplate full-load current [A].
    starter : str or array of str
        ``"direct"``, ``"star_delta"``, ``"soft"`` or ``"drive"``.
    nameplate_standard : str or array of str
        ``"nema"`` or ``"iec"``.
    service_factor, temperature_rise_c : numeric, optional
        Marked service factor [-] and temperature rise [°C]; NaN if not marked.
    relay_in_winding : bool or array of bool, optional
        See :func:`relay_current_a`.

    Returns
    -------
    dict of numeric
        ``overload_setting_pct`` [%], ``overload_setting_max_pct`` [%],
        ``overload_setting_high_state``, ``overload_setting_min_pct`` [%],
        ``overload_setting_low_state`` (verdict scale).

    Notes
    -----
    ``pct = 100 I_set / I_relay``. High: ``BEYOND`` above the limit,
    ``AT_LIMIT`` within 2.5 points below it or at it (the 2.5-point dial band is
    a project judgement). Low: ``BEYOND`` below
    ``100 / 1.20`` = 83.3 %, ``AT_LIMIT`` below ``100 / 1.05`` = 95.2 %.

    References
    ----------
    .. [1] NFPA 70, National Electrical Code, 430.32(A)(1).
    .. [2] IEC 60947-4-1, tripping limits of thermal overload relays.

    Examples
    --------
    >>> out = overload_setting(100.0, 100.0, "star_delta", "iec")
    >>> round(float(out["overload_setting_pct"]), 1), int(out["overload_setting_high_state"])
    (173.2, 3)
    """
    setting = np.asarray(overload_setting_a, dtype=float)
    if np.any(setting <= 0):
        raise ValueError(f"overload_setting_a must be positive; got {overload_setting_a!r}")
    seen = relay_current_a(full_load_current_a, starter, relay_in_winding)
    # rounded far below a dial's resolution: 40.95 A on 39 A is 105 % exactly, not 105.00000000000001 %
    pct = np.round(100.0 * setting / seen, 9)
    limit = setting_limit_pct(nameplate_standard, service_factor, temperature_rise_c)
    high = np.where(pct > limit, BEYOND, np.where(pct >= limit - DIAL_BAND_PCT, AT_LIMIT, CLEAR))
    trip_pct = 100.0 / TRIP_MULTIPLE
    no_trip_pct = 100.0 / NO_TRIP_MULTIPLE
    low = np.where(pct < trip_pct, BEYOND, np.where(pct < no_trip_pct, AT_LIMIT, CLEAR))
    missing = np.isnan(pct) | np.isnan(limit)
    return {
        "overload_setting_pct": pct,
        "overload_setting_max_pct": limit,
        "overload_setting_high_state": np.where(missing, NOT_JUDGED, high).astype(int),
        "overload_setting_min_pct": np.full(np.shape(pct), no_trip_pct),
        "overload_setting_low_state": np.where(missing, NOT_JUDGED, low).astype(int),
    }
