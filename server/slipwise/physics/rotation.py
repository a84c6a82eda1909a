"""Direction of rotation, mapped onto the verdict scale.

The engine raises ``rotation_wrong`` when the state is ``BEYOND``.
"""

from __future__ import annotations

import numpy as np

from .verdict import BEYOND, CLEAR, NOT_JUDGED


def rotation_state(rotation_correct):
    """State of the observed direction of rotation.

    Parameters
    ----------
    rotation_correct : bool, str, None, NaN or array of them
        True (or ``"yes"``/``"true"``) where the shaft turns the way the driven
        machine needs, False (or ``"no"``/``"false"``) where it does not; None,
        NaN or ``""`` where nobody looked.

    Returns
    -------
    numpy.ndarray of int
        ``CLEAR`` for True, ``BEYOND`` for False, ``NOT_JUDGED`` when missing.
    """
    x = np.asarray(rotation_correct, dtype=object)
    flat = [NOT_JUDGED if v is None or v == "" or (isinstance(v, float) and np.isnan(v))
            else CLEAR if _truth(v) else BEYOND for v in x.ravel()]
    return np.asarray(flat, dtype=int).reshape(x.shape)


_WORDS = {"yes": True, "true": True, "no": False, "false": False}


def _truth(v):
    if isinstance(v, str) and v.strip().lower() in _WORDS:
        return _WORDS[v.strip().lower()]
    if isinstance(v, (bool, np.bool_)) or v in (0, 1):
        return bool(v)
    raise ValueError(f"rotation_correct must be true, false or missing; got {v!r}")
