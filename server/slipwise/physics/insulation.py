"""Insulation resistance and polarization index of a stator winding (IEEE 43-2013).

States are on the scale of :mod:`slipwise.physics.verdict`. The engine raises
``insulation_low`` when ``insulation_state`` is ``BEYOND`` and
``polarization_index_low`` when ``polarization_index_state`` is ``BEYOND``.
"""

from __future__ import annotations

import numpy as np

from .verdict import CLEAR, AT_LIMIT, NOT_JUDGED, accuracy_fraction, choice, judge_minimum, lookup

#: Reference winding temperature of IEEE 43 minimum values [°C].
REFERENCE_TEMPERATURE_C = 40.0
#: IR halves for every this many °C rise (IEEE 43 approximation) [°C].
HALVING_INTERVAL_C = 10.0

#: IEEE 43-2013 Table 3 recommended minimum IR at 40 °C [MΩ]. From memory, not read in the
#: standard; a NETA World summary of IEEE 43 (Tech Quiz #68, 2004) gives the same three rows.
MINIMUM_FORM_WOUND_MOHM = 100.0   # form-wound windings made after about 1970
MINIMUM_RANDOM_WOUND_MOHM = 5.0   # random-wound, and form-wound rated below 1 kV
#: Form-wound windings rated below this use the 5 MΩ minimum [V] (from memory).
FORM_WOUND_LOW_VOLTAGE_V = 1000.0

#: IEEE 43 minimum polarization index by thermal class (from memory; a tester's
#: manual quoting IEEE 43-2000 gives the same: A 1.5, B/F/H 2.0).
PI_MINIMUM = {"a": 1.5, "b": 2.0, "f": 2.0, "h": 2.0}
#: Above this 1-minute IR the PI is not meaningful (IEEE 43, from memory; the same NETA
#: World summary gives 5 GΩ) [MΩ].
PI_NOT_JUDGED_ABOVE_MOHM = 5000.0

#: Insulation testers commonly state about ±5 % of reading (common practice) [%].
DEFAULT_TESTER_ACCURACY_PCT = 5.0

#: IEEE 43 Table 1 (2000 edition, quoted in a tester maker's application note;
#: 2013 from memory): winding rated voltage upper bound [V] -> DC test voltage [V].
#: Rows: (upper bound [V], upper bound included, lowest and highest test voltage [V]).
TEST_VOLTAGE_TABLE = (
    (1000.0, False, 500.0, 500.0),       # < 1000 V
    (2500.0, True, 500.0, 1000.0),       # 1000-2500 V
    (5000.0, True, 1000.0, 2500.0),      # 2501-5000 V
    (12000.0, True, 2500.0, 5000.0),     # 5001-12 000 V
    (np.inf, True, 5000.0, 10000.0),     # > 12 000 V
)

WINDING_TYPES = ("random", "form")
INSULATION_CLASSES = ("a", "b", "f", "h")


def temperature_correction_factor(winding_temperature_c):
    """Factor K_T that refers an insulation resistance to 40 °C.

    Parameters
    ----------
    winding_temperature_c : numeric
        Winding temperature during the test [°C].

    Returns
    -------
    numeric
        K_T [-]; ``R_40 = K_T * R_T``. NaN where the temperature is NaN.

    Notes
    -----
    ``K_T = 0.5 ** ((40 - T) / 10)``: the resistance halves for every 10 °C
    rise. IEEE 43 gives this as an approximation; it prefers a correction curve
    measured on the winding itself (thermosetting and thermoplastic insulation
    differ), so the corrected value is an estimate.

    References
    ----------
    .. [1] IEEE Std 43-2013, Recommended Practice for Testing Insulation
       Resistance of Electric Machinery, 6.3 (temperature correction).
    """
    t = np.asarray(winding_temperature_c, dtype=float)
    return 0.5 ** ((REFERENCE_TEMPERATURE_C - t) / HALVING_INTERVAL_C)


def minimum_insulation_resistance_mohm(winding_type, rated_voltage_v, made_before_1970=False):
    """IEEE 43 recommended minimum insulation resistance at 40 °C.

    Parameters
    ----------
    winding_type : str or array of str
        ``"random"`` (random-wound) or ``"form"`` (form-wound coils).
    rated_voltage_v : numeric
        Rated line-to-line voltage [V].
    made_before_1970 : bool or array of bool, default False
        Winding made before about 1970 (older insulation systems).

    Returns
    -------
    numeric
        Minimum 1-minute IR at 40 °C [MΩ]: ``kV + 1`` for windings made before
        1970 (kV the rated voltage in kV), 100 MΩ for form-wound windings rated
        1 kV or more, 5 MΩ for random-wound windings and form-wound windings
        rated below 1 kV. NaN where a needed rated voltage is NaN.

    References
    ----------
    .. [1] IEEE Std 43-2013, Table 3 "Recommended minimum insulation resistance
       values at 40 °C".
    """
    kind = choice(winding_type, "winding_type", WINDING_TYPES)
    v = np.asarray(rated_voltage_v, dtype=float)
    if np.any(v <= 0):
        raise ValueError(f"rated_voltage_v must be positive; got {rated_voltage_v!r}")
    old = np.asarray(made_before_1970, dtype=bool)
    modern = np.where((kind == "form") & (v >= FORM_WOUND_LOW_VOLTAGE_V),
                      MINIMUM_FORM_WOUND_MOHM, MINIMUM_RANDOM_WOUND_MOHM)
    # a random-wound winding made after 1970 needs no voltage
    modern = np.where(((kind == "form") & np.isnan(v)) | (kind == ""), np.nan, modern)
    return np.where(old, v / 1000.0 + 1.0, modern)


def recommended_test_voltage_v(rated_voltage_v):
    """Recommended DC test voltage for a winding's rated voltage (IEEE 43 Table 1).

    Parameters
    ----------
    rated_voltage_v : numeric
        Rated line-to-line voltage [V].

    Returns
    -------
    tuple of numeric
        ``(insulation_test_voltage_min_v, insulation_test_voltage_max_v)`` [V];
        NaN where the rated voltage is NaN.

    References
    ----------
    .. [1] IEEE Std 43-2013, Table 1 "Guidelines for dc voltages to be applied
       during an insulation resistance test" (same rows as the 2000 edition).
    """
    v = np.asarray(rated_voltage_v, dtype=float)
    low = np.full(v.shape, np.nan)
    high = np.full(v.shape, np.nan)
    for upper, included, lo, hi in reversed(TEST_VOLTAGE_TABLE):
        row = (v <= upper) if included else (v < upper)
        low = np.where(row, lo, low)
        high = np.where(row, hi, high)
    return low, high


def judge_test_voltage(test_voltage_v, rated_voltage_v):
    """Whether the DC test voltage used is within IEEE 43 Table 1 for the winding.

    Returns ``CLEAR`` inside the recommended range, ``AT_LIMIT`` outside it (the
    reading is then not comparable with the IEEE 43 minimums: a project
    judgement), ``NOT_JUDGED`` where either voltage is NaN.
    """
    t = np.asarray(test_voltage_v, dtype=float)
    low, high = recommended_test_voltage_v(rated_voltage_v)
    state = np.where((t >= low) & (t <= high), CLEAR, AT_LIMIT)
    return np.where(np.isnan(t) | np.isnan(low), NOT_JUDGED, state).astype(int)


def polarization_index(ir_1min_mohm, ir_10min_mohm):
    """Polarization index: 10-minute over 1-minute insulation resistance [-].

    NaN where either reading is NaN or the 1-minute reading is not positive.

    References
    ----------
    .. [1] IEEE Std 43-2013, 3.2 (definition of the polarization index).
    """
    r1 = np.asarray(ir_1min_mohm, dtype=float)
    r10 = np.asarray(ir_10min_mohm, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(r1 > 0, r10 / r1, np.nan)


def insulation(ir_1min_mohm, winding_temperature_c, winding_type, insulation_class, rated_voltage_v,
               ir_10min_mohm=np.nan, test_voltage_v=np.nan, made_before_1970=False,
               tester_accuracy_pct=DEFAULT_TESTER_ACCURACY_PCT):
    """Insulation resistance and polarization index judged against IEEE 43.

    Parameters
    ----------
    ir_1min_mohm : numeric
        Insulation resistance to earth after 1 minute [MΩ].
    winding_temperature_c : numeric
        Winding temperature during the test [°C].
    winding_type : str or array of str
        ``"random"`` or ``"form"``.
    insulation_class : str or array of str
        Thermal class ``A``, ``B``, ``F`` or ``H``.
    rated_voltage_v : numeric
        Rated line-to-line voltage [V].
    ir_10min_mohm : numeric, optional
        Insulation resistance after 10 minutes [MΩ]; NaN when not taken.
    test_voltage_v : numeric, optional
        DC test voltage used [V]; NaN when not recorded.
    made_before_1970 : bool or array of bool, default False
        Winding made before about 1970.
    tester_accuracy_pct : numeric, default 5
        Tester accuracy [% of reading]; ±5 % is common practice.

    Returns
    -------
    dict of numeric
        ``insulation_resistance_40c_mohm`` [MΩ], ``insulation_minimum_mohm``
        [MΩ], ``insulation_state``; ``polarization_index`` [-],
        ``polarization_index_minimum`` [-], ``polarization_index_state``;
        ``insulation_test_voltage_min_v``, ``insulation_test_voltage_max_v``
        [V], ``insulation_test_voltage_state``. States on the verdict scale.

    Notes
    -----
    ``R_40 = K_T R_T`` with ``K_T = 0.5 ** ((40 - T) / 10)``. The insulation is
    ``BEYOND`` when ``R_40`` is below the minimum and ``AT_LIMIT`` when
    ``R_40 (1 - a)`` reaches it (``a`` the tester accuracy). The PI is judged
    on ``PI (1 - a) / (1 + a)``, the worst case of the two readings erring
    opposite ways; it is ``NOT_JUDGED`` when the 1-minute reading is above
    5,000 MΩ, where IEEE 43 says the PI may not indicate the condition.

    References
    ----------
    .. [1] IEEE Std 43-2013, 6.3, 12.2, 12.3 and Tables 1 and 3.

    Examples
    --------
    >>> out = insulation(120, 20, "form", "F", 6600, ir_10min_mohm=300)
    >>> float(out["insulation_resistance_40c_mohm"]), int(out["insulation_state"])
    (30.0, 3)
    >>> float(out["polarization_index"]), int(out["polarization_index_state"])
    (2.5, 1)
    """
    a = accuracy_fraction(tester_accuracy_pct, "tester_accuracy_pct")
    r1 = np.asarray(ir_1min_mohm, dtype=float)
    if np.any(r1 < 0):
        raise ValueError(f"ir_1min_mohm must be non-negative; got {ir_1min_mohm!r}")
    r40 = temperature_correction_factor(winding_temperature_c) * r1
    minimum = minimum_insulation_resistance_mohm(winding_type, rated_voltage_v, made_before_1970)
    ir_state = judge_minimum(r40, r40 * (1.0 - a), minimum)

    cls = choice(insulation_class, "insulation_class", INSULATION_CLASSES)
    pi_min = lookup(cls, PI_MINIMUM)
    pi = polarization_index(r1, ir_10min_mohm)
    pi_state = judge_minimum(pi, pi * (1.0 - a) / (1.0 + a), pi_min)
    pi_state = np.where(r1 > PI_NOT_JUDGED_ABOVE_MOHM, NOT_JUDGED, pi_state)

    v_low, v_high = recommended_test_voltage_v(rated_voltage_v)
    return {
        "insulation_resistance_40c_mohm": r40,
        "insulation_minimum_mohm": minimum,
        "insulation_state": ir_state,
        "polarization_index": pi,
        "polarization_index_minimum": pi_min,
        "polarization_index_state": pi_state,
        "insulation_test_voltage_min_v": v_low,
        "insulation_test_voltage_max_v": v_high,
        "insulation_test_voltage_state": judge_test_voltage(test_voltage_v, rated_voltage_v),
    }


__all__ = ["insulation", "temperature_correction_factor", "minimum_insulation_resistance_mohm",
           "recommended_test_voltage_v", "judge_test_voltage", "polarization_index"]
