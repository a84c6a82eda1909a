"""The values that pass between the services, the engine and the store.

``Submission`` is a parsed POST /readings body (or a demo row); ``engine_record``
is the flat nameplate + reading record the engine interprets; ``to_json`` is
the compact JSON text stored for inputs and results (and hashed for replays).
"""

from __future__ import annotations

import hashlib
import json
import math
from dataclasses import dataclass
from typing import Any, Mapping

from slipwise.contract import ENERGY_FIELDS, TEST_FIELDS
from slipwise.store.motors import REVISION_FIELDS

#: Reading fields added after release 2: left out of the content hash when blank.
ADDED_LATER = frozenset(TEST_FIELDS) | frozenset(ENERGY_FIELDS)   # the sheet (1.2.0), energy (1.3.0)

_NOT_FOR_ENGINE = ("location", "description")


def _clean(obj: Any) -> Any:
    if isinstance(obj, dict):
        return {str(k): _clean(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_clean(v) for v in obj]
    if hasattr(obj, "item") and not isinstance(obj, (str, bytes)):  # numpy scalar
        obj = obj.item()
    if isinstance(obj, float) and not math.isfinite(obj):
        return None
    return obj


def to_json(obj: Any) -> str:
    """Compact JSON; NaN/inf become null so every stored text is valid JSON."""
    return json.dumps(_clean(obj), separators=(",", ":"), ensure_ascii=False, allow_nan=False)


@dataclass(frozen=True)
class Submission:
    """A validated POST /readings body."""

    client_id: str
    motor_id: int
    supersedes: int | None
    inputs: dict[str, Any]          # reading number fields (None when blank)
    taken_at: str | None            # normalised, None when not given
    taken_date: str
    taken_at_utc: Any

    def content_hash(self, technician_id: int) -> str:
        # fields added since release 2 (issue 11's energy inputs) count only when given: a submission stored
        # before they existed, replayed from a tablet's outbox after the upgrade, keeps its hash (a replay,
        # not a conflict)
        inputs = {k: self.inputs[k] for k in sorted(self.inputs)
                  if not (k in ADDED_LATER and self.inputs[k] is None)}
        content = {"client_id": self.client_id, "motor_id": self.motor_id, "supersedes": self.supersedes,
                   "technician_id": technician_id, "taken_at": self.taken_at, "inputs": inputs}
        return hashlib.sha256(to_json(content).encode("utf-8")).hexdigest()


def engine_record(revision: Mapping[str, Any], tag: str, inputs: Mapping[str, Any], taken_at: str | None) -> dict:
    """The flat nameplate + reading record that the engine interprets.

    ``revision``: a nameplate revision (row or mapping with every field of
    ``REVISION_FIELDS`` except location and description); ``inputs``: the
    reading's number fields.
    """
    record = {"tag": tag}
    for f in REVISION_FIELDS:
        if f not in _NOT_FOR_ENGINE:
            record[f] = revision.get(f)
    record.update(inputs)
    record["taken_at"] = taken_at
    return record
