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
    rotation_correct : bool, None, NaN or array of them
        True where the shaft turns the way the driven machine needs, False
        where it does not, None or NaN where nobody looked.

    Returns
    -------
    numpy.ndarray of int
        ``CLEAR`` for True, ``BEYOND`` for False, ``NOT_JUDGED`` when missing.
    """
    x = np.asarray(rotation_correct, dtype=object)
    flat = [NOT_JUDGED if v is None or (isinstance(v, float) and np.isnan(v))
            else CLEAR if _truth(v) else BEYOND for v in x.ravel()]
    return np.asarray(flat, dtype=int).reshape(x.shape)


def _truth(v):
    if isinstance(v, (bool, np.bool_)) or v in (0, 1):
        return bool(v)
    raise ValueError(f"rotation_correct must be true, false or missing; got {v!r}")
