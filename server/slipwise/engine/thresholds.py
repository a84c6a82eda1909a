"""Flag thresholds from user overrides (CLI ``--threshold``, service configuration)."""

from __future__ import annotations

from typing import Any, Mapping

from ..physics.flags import Thresholds
from .inputs import InputError


def thresholds_from_mapping(values: Mapping[str, Any] | None) -> Thresholds:
    """Thresholds with overrides; raises :class:`InputError` on unknown or out-of-range values."""
    if not values:
        return Thresholds()
    known = set(Thresholds.names())
    clean = {}
    for key, value in values.items():
        if key not in known:
            raise InputError(key, f"{key} is not a threshold; known: {', '.join(sorted(known))}")
        try:
            clean[key] = float(value)
        except (TypeError, ValueError):
            raise InputError(key, f"{key} must be a number") from None
    th = Thresholds(**clean)
    bad = th.validate()
    if bad:
        raise InputError(*bad[0])
    return th
