"""Turn request values into the contract's types, naming the field and its range on error.

Used by the web layer and the demo loader alike, so a value that would be
refused over HTTP is refused from a CSV too.
"""

from __future__ import annotations

import math
import unicodedata
import uuid
from datetime import datetime, timedelta, timezone
from typing import Any, Mapping

from slipwise.contract import CHOICE_FIELDS, NUMBER_FIELDS, READING_FIELDS, TAG_MAX_CHARS

from .errors import ValidationError
from .schema import REVISION_NAMEPLATE_FIELDS

READING_NUMBER_FIELDS = tuple(f for f in READING_FIELDS if f != "taken_at")
TEXT_LIMITS = {"site": 120, "location": 200, "description": 2000, "comment": 2000}
TAKEN_AT_EARLIEST = datetime(2000, 1, 1, tzinfo=timezone.utc)
# Record ids are INTEGER columns: 32-bit on PostgreSQL, so a larger id can never exist (and sent
# to PostgreSQL it fails as "integer out of range" instead of finding nothing).
MAX_ID = 2 ** 31 - 1
# Unicode categories a tag may not hold: controls (C0, DEL, C1), format characters (zero-width space,
# byte order mark, the bidirectional overrides that reorder what is shown - "Trojan Source",
# CVE-2021-42574), line and paragraph separators, private use. Each would let two tags that look
# the same on a label, the page or the CSV be different records.
TAG_REFUSED_CATEGORIES = frozenset({"Cc", "Cf", "Zl", "Zp", "Co"})


def blank(value: Any) -> bool:
    return value is None or (isinstance(value, str) and value.strip() == "")


def number(name: str, value: Any) -> float | int | None:
    """Parse a contract number field: blank -> None, else a float (int for integer fields) in range."""
    spec = NUMBER_FIELDS[name]
    if blank(value):
        if spec.required:
            raise ValidationError(f"{name} is required: a number from {spec.range_text()}", name)
        return None
    if isinstance(value, bool) or not isinstance(value, (int, float, str)):
        raise ValidationError(f"{name} must be a number from {spec.range_text()}", name)
    try:
        x = float(value.strip().replace(",", ".")) if isinstance(value, str) else float(value)
    except ValueError:
        raise ValidationError(f"{name} must be a number from {spec.range_text()}, not {str(value)[:40]!r}",
                              name) from None
    except OverflowError:  # a JSON whole number beyond the float range (10**400)
        x = math.inf if value > 0 else -math.inf
    if not math.isfinite(x) or not spec.low <= x <= spec.high:
        raise ValidationError(f"{name} must be from {spec.range_text()}, not {x:g}", name)
    if spec.integer:
        if x != int(x):
            raise ValidationError(f"{name} must be a whole number from {spec.range_text()}", name)
        return int(x)
    return x


def choice(name: str, value: Any) -> str | None:
    spec = CHOICE_FIELDS[name]
    if blank(value):
        if spec.required:
            raise ValidationError(f"{name} is required: {spec.range_text()}", name)
        return None
    if not isinstance(value, str) or value.strip() not in spec.choices:
        raise ValidationError(f"{name} must be {spec.range_text()}", name)
    return value.strip()


def text(name: str, value: Any, required: bool = False, limit: int | None = None) -> str:
    limit = limit or TEXT_LIMITS.get(name, 200)
    if blank(value):
        if required:
            raise ValidationError(f"{name} is required: text of 1 to {limit} characters", name)
        return ""
    if not isinstance(value, str):
        raise ValidationError(f"{name} must be text of at most {limit} characters", name)
    value = value.strip()
    if len(value) > limit or any((ord(c) < 32 and c not in "\t\n") or 0x7f <= ord(c) <= 0x9f for c in value):
        raise ValidationError(f"{name} must be text of at most {limit} characters, without control characters",
                              name)
    return value


def tag(value: Any) -> str:
    t = text("tag", value, required=True, limit=TAG_MAX_CHARS)
    if "\n" in t or "\t" in t:
        raise ValidationError(f"tag must be one line of 1 to {TAG_MAX_CHARS} characters", "tag")
    hidden = next((c for c in t if unicodedata.category(c) in TAG_REFUSED_CATEGORIES), None)
    if hidden is not None:
        raise ValidationError(f"tag must be 1 to {TAG_MAX_CHARS} visible characters; U+{ord(hidden):04X} is a "
                              "control, invisible or direction-changing character", "tag")
    return t


def identifier(name: str, value: Any, required: bool = True) -> int | None:
    if value is None and not required:
        return None
    if isinstance(value, bool) or not isinstance(value, int) or not 1 <= value <= MAX_ID:
        # ASCII digits only: str.isdigit() also accepts '²', which int() refuses
        if isinstance(value, str) and _ascii_digits(value.strip(), 19) and 1 <= int(value) <= MAX_ID:
            return int(value)
        raise ValidationError(f"{name} must be a record id: a whole number from 1 to {MAX_ID}", name)
    return value


def _ascii_digits(text: str, max_chars: int) -> bool:
    return 0 < len(text) <= max_chars and text.isascii() and text.isdigit()


def client_id(value: Any) -> str:
    if not isinstance(value, str):
        raise ValidationError("client_id is required: a UUID such as 123e4567-e89b-12d3-a456-426614174000",
                              "client_id")
    try:
        return str(uuid.UUID(value.strip()))
    except ValueError:
        raise ValidationError("client_id must be a UUID such as 123e4567-e89b-12d3-a456-426614174000",
                              "client_id") from None


def taken_at(value: Any, now: datetime) -> tuple[str | None, str, datetime]:
    """Return (as given, normalised or None; calendar date; UTC instant for ordering).

    A time without an offset is the technician's local clock: its date is the
    date written, and it is ordered as if it were UTC.
    """
    if blank(value):
        return None, now.date().isoformat(), now
    latest = now + timedelta(days=2)
    message = (f"taken_at must be an ISO 8601 date and time (2024-05-17T09:30:00+02:00) from "
               f"2000-01-01 to {latest.date().isoformat()}")
    if not isinstance(value, str) or len(value) > 40:
        raise ValidationError(message, "taken_at")
    try:
        t = datetime.fromisoformat(value.strip())
    except ValueError:
        raise ValidationError(message, "taken_at") from None
    aware = t if t.tzinfo else t.replace(tzinfo=timezone.utc)
    if not TAKEN_AT_EARLIEST <= aware <= latest:
        raise ValidationError(message, "taken_at")
    return t.isoformat(timespec="seconds"), t.date().isoformat(), aware.astimezone(timezone.utc)


def nameplate(body: Mapping[str, Any]) -> dict[str, Any]:
    """The revision's nameplate fields from a request body (tag and site are checked apart)."""
    out: dict[str, Any] = {}
    for name in REVISION_NAMEPLATE_FIELDS:
        value = body.get(name)
        out[name] = number(name, value) if name in NUMBER_FIELDS else choice(name, value)
    if out.get("rated_power_kw") is None and out.get("rated_power_hp") is None:
        spec = NUMBER_FIELDS["rated_power_kw"]
        raise ValidationError(f"rated_power_kw is required (or rated_power_hp): {spec.range_text()}",
                              "rated_power_kw")
    return out


def reading(body: Mapping[str, Any]) -> dict[str, Any]:
    """The reading fields (numbers only; taken_at is parsed by ``taken_at``)."""
    return {name: number(name, body.get(name)) for name in READING_NUMBER_FIELDS}


def unknown_fields(body: Mapping[str, Any], allowed: set[str] | frozenset[str]) -> None:
    for key in body:
        if key not in allowed:
            raise ValidationError(f"unknown field {str(key)[:60]!r}; allowed fields: " + ", ".join(sorted(allowed)),
                                  str(key)[:60])
