"""The provisional basis: what a page needs to judge a reading of one motor without the server.

Everything here depends on the nameplate (and the thresholds in force) alone, so
it is worked out once per motor revision and cached by the page with its motor
list: the rated point as the engine derives it (poles, rated slip, the efficiency
and power factor used), the fitted circuit (its no-load current at rated voltage,
its parameters for the breakdown torque at any voltage and frequency), the loss
split at the rated point, the breakdown torque and its lowest credible value, the
locked-rotor and breakaway torques, the thresholds and the reading fields'
defaults.

No formula of its own: the values are those :func:`.nameplate.nameplates`
derives for the pipeline (the same cache, the same physics functions), picked
out and made JSON-safe. The page's copy of the per-reading rules is
``static/js/verdict.js``; ``tests/vectors/provisional_verdict.json`` holds the
engine's results it is checked against.
"""

from __future__ import annotations

import dataclasses
import math
import threading
from typing import Any, Iterable, Mapping

import numpy as np
from cachetools import LRUCache

from .. import contract as C
from ..physics import typical
from ..physics.flags import Thresholds
from .nameplate import nameplates

#: Bases kept (one per distinct nameplate and thresholds): a motor revision is worked out once.
BASIS_CACHE_SIZE = 4096
_cache: LRUCache = LRUCache(maxsize=BASIS_CACHE_SIZE)
_lock = threading.Lock()

#: Version of the basis' layout; the page judges only with a layout it knows.
BASIS_VERSION = 1


def _num(x) -> float | None:
    """A JSON number: None for NaN; an infinite value (no core loss modelled) also None."""
    v = float(x)
    return v if math.isfinite(v) else None


def _key(record: Mapping[str, Any], th: Thresholds) -> tuple:
    return (tuple((k, type(record.get(k)).__name__, repr(record.get(k))) for k in C.NAMEPLATE_FIELDS if k != "tag"),
            dataclasses.astuple(th))


def provisional_bases(records: Iterable[Mapping[str, Any]], thresholds: Thresholds | None = None) -> list:
    """The provisional basis of each nameplate record (None where the engine refuses the nameplate).

    Parameters
    ----------
    records : iterable of mapping
        Nameplate fields by their contract names (a motor revision); blank is None.
    thresholds : Thresholds, optional
        The thresholds in force (the service's).

    Returns
    -------
    list of dict or None
        Per record: JSON-safe numbers [units in the key names; pu where
        named so], see the module docstring.
    """
    th = thresholds or Thresholds()
    records = list(records)
    out: list = [None] * len(records)
    keys = [_key(r, th) for r in records]
    missing = []
    with _lock:
        for j, key in enumerate(keys):
            if key in _cache:
                out[j] = _cache[key]
            else:
                missing.append(j)
    if missing:
        for j, basis in zip(missing, _work_out([records[j] for j in missing], th)):
            out[j] = basis
        with _lock:
            for j in missing:
                _cache[keys[j]] = out[j]
    return out


def _work_out(records: list, th: Thresholds) -> list:
    n = len(records)
    cols = {k: np.array([{**r, "tag": r.get("tag") or "basis"}.get(k) for r in records], dtype=object)
            for k in C.NAMEPLATE_FIELDS}
    with np.errstate(all="ignore"):  # as the pipeline: a nameplate that fits no circuit gives NaN, checked below
        plates, _ = nameplates(cols, n)
    out: list = [None] * n
    sub, circuit, budgets, i0_r = plates["_valid"], plates["_circuit"], plates["_budgets"], plates["_i0_rated"]
    share = typical.FIXED_LOSS_SHARE
    defaults = {f: C.NUMBER_FIELDS[f].default for f in C.READING_FIELDS
                if f in C.NUMBER_FIELDS and C.NUMBER_FIELDS[f].default is not None}
    th_dict = dataclasses.asdict(th)
    for k, row in enumerate(plates["_valid_index"]):
        pick = lambda name: sub[name][k]  # noqa: E731
        central = budgets[0]
        out[int(row)] = {
            "version": BASIS_VERSION,
            "engine_version": C.ENGINE_VERSION,
            "poles": _num(pick("poles_used")),
            "sync_rated_rpm": _num(pick("sync_rated_rpm")),
            "rated_slip": _num(pick("rated_slip")),
            "rated_speed_rpm": _num(pick("rated_speed_rpm")),
            "rated_kw": _num(pick("rated_kw")),
            "rated_voltage_v": _num(pick("rated_voltage_v")),
            "rated_current_a": _num(pick("rated_current_a")),
            "rated_frequency_hz": _num(pick("rated_frequency_hz")),
            "efficiency_used": _num(pick("eta_used")),
            "supply": str(pick("supply")),
            "design": str(pick("design")),
            "driven_load": str(pick("driven_load")),
            "is_nema": bool(pick("is_nema")),
            "service_factor": _num(pick("service_factor")),
            "service_factor_given": bool(pick("service_factor_given")),
            # current method: the fitted circuit's no-load current at rated voltage and frequency, and
            # the exponents of its rise with flux (saturation; physics.typical)
            "no_load_current_a": _num(i0_r[k]),
            "saturation_exponents": {"above_rated": list(typical.SATURATION_EXPONENT_ABOVE_RATED),
                                     "below_rated": list(typical.SATURATION_EXPONENT_BELOW_RATED)},
            # input-power method: the rated loss split and the band of the fixed losses
            "losses_w": {"core": _num(central.core_w[k]), "friction_windage": _num(central.friction_windage_w[k]),
                         "stator": _num(central.stator_w[k])},
            "fixed_loss_band": [typical.FIXED_LOSS_SHARE_LOW / share, typical.FIXED_LOSS_SHARE_HIGH / share],
            # breakdown: the design's torque and its lowest credible value at rated voltage, and the
            # circuit that gives it at another voltage and frequency (rc_ohm None: no core branch)
            "breakdown_torque_pct": _num(pick("bd_pct")),
            "breakdown_torque_low_pct": _num(pick("bd_low_pct")),
            "circuit": {name: _num(np.asarray(getattr(circuit, name))[k])
                        for name in ("r1_ohm", "x1_ohm", "r2_ohm", "x2_ohm", "xm_ohm", "rc_ohm", "r2_rise",
                                     "rated_frequency_hz", "poles")},
            "locked_rotor_torque_pct": _num(pick("lrt_pct")),
            "breakaway_share": _num(pick("breakaway_share")),
            "needs_breakaway": bool(pick("needs_breakaway")),
            "thresholds": th_dict,
            "reading_defaults": defaults,
        }
        if not _complete(out[int(row)]):
            out[int(row)] = None
    return out


def _complete(basis: dict) -> bool:
    """Every number is there (only ``rc_ohm`` may be None): a nameplate the engine accepts but cannot fit
    (its efficiency or circuit undefined) gives no basis, and the page gives no provisional verdict."""
    values = [v for k, v in basis.items() if k != "circuit"] + [v for k, v in basis["circuit"].items() if k != "rc_ohm"]
    return all(v is not None for v in values)
