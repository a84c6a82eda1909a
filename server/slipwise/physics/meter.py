"""A reading as stated: the step of its last digit and the accuracy it carries.

A field reading is typed as an instrument showed it (or as the engineer kept
it); the value is good to half its last stated digit, on top of the
instrument's accuracy.

References
----------
.. [1] JCGM 100:2008 (GUM), 5.1.2: independent input errors add in
   quadrature; F.2.2.1: the resolution of a digital indication, a
   rectangular spread of half a step either side (section numbers from
   memory).
"""

from __future__ import annotations

import numpy as np

#: Most decimals a reading is taken to state [-]; finer steps are far below any meter's accuracy.
MAX_DECIMALS = 12


def stated_resolution(reading):
    """The step of a reading's last stated digit, ``10^-d`` for ``d`` decimals [unit of the reading].

    A reading written as ``0.7`` is known to its last digit only: the
    instrument showed (or the engineer kept) 0.1 of its unit, and the true
    value lies within half a step, 0.65-0.75 (common practice: a stated
    value is good to half its last digit; GUM F.2.2.1 [1]_). The decimals
    are those of the shortest decimal text that gives the same float, so
    ``0.70`` typed counts as ``0.7`` (the wider, safe reading); a whole
    number counts as a step of 1. NaN stays NaN.

    Examples
    --------
    >>> [float(x) for x in stated_resolution([0.7, 24.25, 3.0])]
    [0.1, 0.01, 1.0]
    """
    x = np.asarray(reading, dtype=float)
    flat = x.ravel()
    step = np.full(flat.shape, np.nan)
    # fewest decimals that give the value back (what its shortest text shows), up to
    # MAX_DECIMALS, on the rows still open; a text conversion per row would double the engine's time
    left = np.flatnonzero(np.isfinite(flat))
    for decimals in range(MAX_DECIMALS + 1):
        if left.size == 0:
            break
        v = flat[left]
        exact = np.abs(np.round(v, decimals) - v) <= 8.0 * np.spacing(np.abs(v))
        step[left[exact]] = 10.0 ** -decimals
        left = left[~exact]
    step[left] = 10.0 ** -MAX_DECIMALS
    step = step.reshape(x.shape)
    return step if step.ndim else np.float64(step)


def reading_accuracy_pct(accuracy_pct, reading):
    """A meter's accuracy with half the reading's last stated digit added [% of reading].

    ``sqrt(a^2 + (100 q / 2 x)^2)``: the meter's accuracy ``a`` and the
    rounding to the stated step ``q`` (:func:`stated_resolution`) are
    independent errors and add in quadrature (GUM [1]_); a power meter's data
    sheet states the same pair as "% of reading + digits".

    Parameters
    ----------
    accuracy_pct : numeric
        Meter accuracy [% of reading].
    reading : numeric
        The reading as stated [any unit].
    """
    x = np.asarray(reading, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        rounding = 100.0 * 0.5 * stated_resolution(x) / np.abs(x)
    # a zero reading has no relative rounding error to state: the meter's accuracy alone
    rounding = np.where(x == 0.0, 0.0, rounding)
    return np.sqrt(np.asarray(accuracy_pct, dtype=float) ** 2 + rounding ** 2)
