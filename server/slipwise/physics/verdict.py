"""The project's verdict scale and the two judgements every criterion uses.

A judged quantity gets one of four integer states, so that the engine can
store them in arrays and build findings from them:

=====  ===============  ==================================================
code   name             meaning
=====  ===============  ==================================================
0      ``NOT_JUDGED``   an input is missing (NaN), or the rule does not apply
1      ``CLEAR``        the whole band is on the right side of the threshold
2      ``AT_LIMIT``     the reading is on the right side (or exactly at the
                        threshold) but its band reaches the threshold
3      ``BEYOND``       the reading itself is on the wrong side
=====  ===============  ==================================================

The engine raises a criterion's flag when its state is ``BEYOND``.
"""

from __future__ import annotations

import numpy as np

NOT_JUDGED = 0
CLEAR = 1
AT_LIMIT = 2
BEYOND = 3

STATE_NAMES = {NOT_JUDGED: "not judged", CLEAR: "clear", AT_LIMIT: "at the limit", BEYOND: "beyond"}


def judge_minimum(value, band_low, minimum):
    """State of a quantity that must be at least ``minimum``.

    Parameters
    ----------
    value : numeric
        The reading (or the quantity computed from it) [any unit].
    band_low : numeric
        Pessimistic (low) end of the reading's band [same unit].
    minimum : numeric
        The threshold [same unit].

    Returns
    -------
    numpy.ndarray of int
        ``BEYOND`` where ``value < minimum``; ``AT_LIMIT`` where
        ``value >= minimum`` but ``band_low <= minimum``; ``CLEAR`` otherwise;
        ``NOT_JUDGED`` where any input is NaN.
    """
    v, lo, m = np.broadcast_arrays(*(np.asarray(x, dtype=float) for x in (value, band_low, minimum)))
    state = np.where(v < m, BEYOND, np.where(lo <= m, AT_LIMIT, CLEAR))
    return np.where(np.isnan(v) | np.isnan(lo) | np.isnan(m), NOT_JUDGED, state).astype(int)


def judge_maximum(value, band_high, maximum):
    """State of a quantity that must be at most ``maximum``.

    Parameters
    ----------
    value : numeric
        The reading (or the quantity computed from it) [any unit].
    band_high : numeric
        Pessimistic (high) end of the reading's band [same unit].
    maximum : numeric
        The threshold [same unit].

    Returns
    -------
    numpy.ndarray of int
        ``BEYOND`` where ``value > maximum``; ``AT_LIMIT`` where
        ``value <= maximum`` but ``band_high >= maximum``; ``CLEAR`` otherwise;
        ``NOT_JUDGED`` where any input is NaN.
    """
    v, hi, m = np.broadcast_arrays(*(np.asarray(x, dtype=float) for x in (value, band_high, maximum)))
    state = np.where(v > m, BEYOND, np.where(hi >= m, AT_LIMIT, CLEAR))
    return np.where(np.isnan(v) | np.isnan(hi) | np.isnan(m), NOT_JUDGED, state).astype(int)


#: Above this many values :func:`choice` decides each distinct value once.
_DECIDE_DISTINCT_ABOVE = 64


def choice(value, name, allowed):
    """A categorical parameter (scalar or array of str) checked against ``allowed``.

    Returns the values as a numpy array of lower-case str. ``""``, None and NaN
    (read as ``"none"`` and ``"nan"``, as a pandas column of text gives them)
    mean missing and come back as ``""`` (the judgement is then
    ``NOT_JUDGED``). Raises ``ValueError`` naming the parameter and the allowed
    values when any other value is given.
    """
    arr = np.asarray(value, dtype=str)
    if arr.size > _DECIDE_DISTINCT_ABOVE:
        # a column of many rows holds few distinct values: each is decided once
        distinct, inverse = np.unique(arr, return_inverse=True)
        return choice(distinct, name, allowed)[inverse.reshape(-1)].reshape(arr.shape)
    # a few values (one reading): plain str methods, a fraction of numpy's per-call cost on tiny arrays
    out = [_choice_text(v) for v in arr.ravel().tolist()]
    bad = sorted(set(out) - set(allowed) - {""})
    if bad:
        raise ValueError(f"{name} must be one of {', '.join(allowed)}; got {bad[0]!r}")
    return np.array(out, dtype=str).reshape(arr.shape)


def _choice_text(text: str) -> str:
    """One categorical value as :func:`choice` reads it: trimmed, lower case, "" for none/nan."""
    t = text.strip().lower()
    return "" if t in ("none", "nan") else t


def accuracy_fraction(accuracy_pct, name="accuracy_pct"):
    """An instrument accuracy in percent of reading, checked, as a fraction [-]."""
    a = np.asarray(accuracy_pct, dtype=float)
    if np.any((a < 0) | (a >= 100)):
        raise ValueError(f"{name} must be in [0, 100) % of reading; got {accuracy_pct!r}")
    return a / 100.0


def lookup(categories, table):
    """Map an array of checked categories to floats through ``table``; NaN where missing ("")."""
    out = np.full(np.shape(categories), np.nan)
    for key, val in table.items():
        out = np.where(categories == key, val, out)
    return out
