"""Tamper-evident chain of stored records.

Each entry's fingerprint is the SHA-256 of a canonical JSON text of its
content *and* the previous entry's fingerprint, so changing any stored value
changes that entry's fingerprint and breaks the link to every later entry.

Canonical JSON here: keys sorted, no whitespace (``","`` and ``":"``),
floats written as Python's ``repr`` (shortest text that reads back to the same
float), non-ASCII text as UTF-8, NaN and infinities refused, tuples as lists,
numpy scalars as their Python values.
"""

from __future__ import annotations

import hashlib
import json
from collections.abc import Mapping, Sequence
from datetime import datetime, timezone

import numpy as np


def _plain(obj):
    if isinstance(obj, np.generic):
        return obj.item()
    raise TypeError(f"not JSON serialisable: {type(obj).__name__}")


def canonical_json(obj) -> bytes:
    """The canonical UTF-8 JSON text of ``obj``.

    Raises
    ------
    ValueError
        If ``obj`` holds NaN or an infinity (they have no JSON form).
    TypeError
        If ``obj`` holds something JSON cannot express.
    """
    try:
        text = json.dumps(obj, sort_keys=True, separators=(",", ":"), ensure_ascii=False,
                          allow_nan=False, default=_plain)
    except ValueError as exc:
        raise ValueError(f"canonical_json refuses NaN and infinities: {exc}") from None
    return text.encode("utf-8")


def fingerprint(content: Mapping, previous: str | None) -> str:
    """SHA-256 hex digest chaining ``content`` to the previous entry.

    Parameters
    ----------
    content : Mapping
        The entry's stored content.
    previous : str or None
        The previous entry's fingerprint; None for the first entry.

    Returns
    -------
    str
        64 lower-case hex digits: ``sha256(canonical_json({"content": content,
        "previous": previous}))``. Wrapping both in one object keeps the two
        parts apart without a separator convention.
    """
    if not isinstance(content, Mapping):
        raise TypeError("content must be a mapping")
    return hashlib.sha256(canonical_json({"content": content, "previous": previous})).hexdigest()


def verify_chain(entries: Sequence[Mapping]) -> int | None:
    """Index of the first entry whose fingerprint does not match, or None.

    Parameters
    ----------
    entries : sequence of Mapping
        In chain order, each with ``"content"`` and ``"fingerprint"``. Each is
        checked against the fingerprint *stored* on the entry before it, so an
        edit shows at the edited entry itself.
    """
    previous = None
    for i, entry in enumerate(entries):
        if fingerprint(entry["content"], previous) != entry["fingerprint"]:
            return i
        previous = entry["fingerprint"]
    return None


# --- the content of a stored entry --------------------------------------------------------------------
# What a fingerprint covers is part of the record's format: the migration that fingerprinted the rows
# stored before fingerprints existed (store/alembic/versions/0003) and every later write use these two
# functions. Changing them would break every stored chain: add a new kind of entry instead.
READING_CONTENT = ("client_id", "motor_id", "motor_revision_id", "technician_id", "inputs", "result",
                   "engine_version", "content_hash", "taken_at", "taken_date", "taken_at_utc", "received_at",
                   "supersedes_id", "chain_position")
REVIEW_CONTENT = ("reading_id", "decision", "comment", "reviewer_id", "reviewed_at", "chain_position")


def _instant(value):
    """A stored timestamp as UTC ISO 8601 text to the microsecond (what both databases keep)."""
    if isinstance(value, datetime):
        if value.tzinfo is None:
            raise ValueError("naive datetime in fingerprinted content")
        return value.astimezone(timezone.utc).isoformat(timespec="microseconds")
    return value


def reading_content(row: Mapping) -> dict:
    """The fingerprinted content of a stored reading: its columns as stored (``inputs`` and ``result``
    as their JSON text, byte for byte), timestamps in UTC; the row id is not part of it (it is given by
    the database on insert), its place in the chain is."""
    return {"entry": "reading", **{name: _instant(row[name]) for name in READING_CONTENT}}


def review_content(row: Mapping) -> dict:
    """The fingerprinted content of a stored review (an acceptance is the sign-off)."""
    return {"entry": "review", **{name: _instant(row[name]) for name in REVIEW_CONTENT}}
