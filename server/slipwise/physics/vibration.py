"""Vibration severity zone of a motor by its broadband RMS velocity.

Machines above 15 kW: ISO 10816-3 (now ISO 20816-3), group 2 (above 15 kW up
to 300 kW) and group 1 (above 300 kW up to 50 MW), on rigid or flexible
foundations. Machines of 15 kW or less: class I of the general part ISO 10816-1.
Above 50 MW the part does not apply: not judged.

States are on the scale of :mod:`slipwise.physics.verdict`. Zones A and B are
acceptable for long-term running; C and D are both beyond the B/C boundary, and
the engine raises ``vibration_high`` when ``vibration_state`` is ``BEYOND``.
A reading that is in zone B (or A) but whose band (the meter's accuracy,
±10 % of reading: common practice for handheld vibration meters) reaches the
B/C boundary is ``AT_LIMIT``. A reading exactly on a boundary belongs to the
lower zone: the boundary is the top of that zone.
"""

from __future__ import annotations

import numpy as np

from .verdict import NOT_JUDGED, accuracy_fraction, choice, judge_maximum

FOUNDATIONS = ("rigid", "flexible")
ZONES = np.array(["A", "B", "C", "D"])

#: Zone boundaries A/B, B/C, C/D [mm/s RMS]. All from memory (ISO 10816-3
#: Tables A.1 and A.2; ISO 10816-1 Annex B class I, which a vibration-chart
#: page reproduces as 0.71 / 1.8 / 4.5).
ZONE_BOUNDARIES_MM_S = {
    ("group 2", "rigid"): (1.4, 2.8, 4.5),
    ("group 2", "flexible"): (2.3, 4.5, 7.1),
    ("group 1", "rigid"): (2.3, 4.5, 7.1),
    ("group 1", "flexible"): (3.5, 7.1, 11.0),
    ("class I", "rigid"): (0.71, 1.8, 4.5),
    ("class I", "flexible"): (0.71, 1.8, 4.5),
}
#: Group limits by rated power [kW] (ISO 10816-3 clause 3).
SMALL_MACHINE_MAX_KW = 15.0
GROUP_2_MAX_KW = 300.0
GROUP_1_MAX_KW = 50000.0
DEFAULT_METER_ACCURACY_PCT = 10.0


def machine_group(rated_power_kw):
    """``"class I"`` (<= 15 kW), ``"group 2"`` (<= 300 kW), ``"group 1"`` (<= 50 MW), else ``""``."""
    p = np.asarray(rated_power_kw, dtype=float)
    if np.any(p <= 0):
        raise ValueError(f"rated_power_kw must be positive; got {rated_power_kw!r}")
    return np.where(p <= SMALL_MACHINE_MAX_KW, "class I",
                    np.where(p <= GROUP_2_MAX_KW, "group 2",
                             np.where(p <= GROUP_1_MAX_KW, "group 1", "")))


def vibration(vibration_velocity_mm_s, rated_power_kw, foundation,
              meter_accuracy_pct=DEFAULT_METER_ACCURACY_PCT):
    """Vibration zone and state for a motor.

    Parameters
    ----------
    vibration_velocity_mm_s : numeric
        Largest broadband RMS velocity of the axes measured on the bearing
        housings [mm/s].
    rated_power_kw : numeric
        Rated output [kW].
    foundation : str or array of str
        ``"rigid"`` or ``"flexible"``.
    meter_accuracy_pct : numeric, default 10
        Meter accuracy [% of reading] (common practice).

    Returns
    -------
    dict
        ``vibration_zone`` (``"A"`` .. ``"D"``, ``""`` when not judged),
        ``vibration_machine_group``, ``vibration_zone_ab_mm_s``,
        ``vibration_zone_bc_mm_s``, ``vibration_zone_cd_mm_s`` [mm/s] and
        ``vibration_state`` (verdict scale, judged against the B/C boundary).

    Notes
    -----
    Zone = number of boundaries the reading exceeds. ``BEYOND`` when
    ``v > B/C``; ``AT_LIMIT`` when ``v (1 + a) >= B/C``.

    References
    ----------
    .. [1] ISO 10816-3:2009, Mechanical vibration - Evaluation of machine
       vibration by measurements on non-rotating parts - Part 3, Annex A
       (superseded by ISO 20816-3:2022, whose tables were not checked here).
    .. [2] ISO 10816-1:1995, Part 1: General guidelines, Annex B.

    Examples
    --------
    >>> out = vibration(3.2, 75, "rigid")
    >>> str(out["vibration_zone"]), int(out["vibration_state"])
    ('C', 3)
    """
    v = np.asarray(vibration_velocity_mm_s, dtype=float)
    if np.any(v < 0):
        raise ValueError(f"vibration_velocity_mm_s must be non-negative; got {vibration_velocity_mm_s!r}")
    a = accuracy_fraction(meter_accuracy_pct, "meter_accuracy_pct")
    group = machine_group(rated_power_kw)
    base = choice(foundation, "foundation", FOUNDATIONS)
    v, group, base = np.broadcast_arrays(v, group, base)
    bounds = np.full(v.shape + (3,), np.nan)
    for (g, f), edges in ZONE_BOUNDARIES_MM_S.items():
        bounds[(group == g) & (base == f)] = edges
    exceeded = (v[..., None] > bounds).sum(axis=-1)
    judged = ~np.isnan(v) & ~np.isnan(bounds[..., 0])
    zone = np.where(judged, ZONES[exceeded], "")
    state = judge_maximum(v, v * (1.0 + a), bounds[..., 1])
    return {
        "vibration_zone": zone,
        "vibration_machine_group": group,
        "vibration_zone_ab_mm_s": bounds[..., 0],
        "vibration_zone_bc_mm_s": bounds[..., 1],
        "vibration_zone_cd_mm_s": bounds[..., 2],
        "vibration_state": np.where(judged, state, NOT_JUDGED).astype(int),
    }
