"""Query-string and path parameters, checked with errors that name them."""

from __future__ import annotations

import re
from datetime import date as _date

from flask import request
from werkzeug.routing import BaseConverter, PathConverter

from slipwise.contract import FLAG_CODES, MAX_ID
from slipwise.store.errors import NotFoundError

from .errors import ApiError

_DATE = re.compile(r"^\d{4}-\d{2}-\d{2}$")


class IdConverter(BaseConverter):
    """A record id in a path: 1 to 18 digits (longer is no id and gives 404; see ids_in_range)."""

    regex = r"[0-9]{1,18}"

    def to_python(self, value: str) -> int:
        return int(value)

    def to_url(self, value) -> str:
        return str(int(value))


def ids_in_range(endpoint, values) -> None:
    """``url_value_preprocessor``: a path id above MAX_ID names no record: 404 before any query.

    (Refusing it in IdConverter instead would make werkzeug answer 405 when another
    method's rule has the same path.)
    """
    for name, value in (values or {}).items():
        if isinstance(value, int) and value > MAX_ID:
            raise NotFoundError(f"no record with {name} {value}: ids go up to {MAX_ID}", name)


class PagePathConverter(PathConverter):
    """``path`` that never starts with ``api/``: the page routes do not catch API URLs.

    Without it an API URL that no API route matches (``/api/v1/motors/x``) matched the
    page's GET-only catch-all, so a PUT or POST there got 405 instead of 404.
    """

    regex = r"(?!api(?:/|$))[^/].*?"


def query(allowed: tuple[str, ...]) -> dict[str, str]:
    args = {}
    for key in request.args:
        if key not in allowed:
            raise ApiError(400, "invalid_input", f"unknown query parameter {key[:60]!r}; allowed: " + ", ".join(allowed),
                           key[:60])
        values = request.args.getlist(key)
        if len(values) != 1:
            raise ApiError(400, "invalid_input", f"give {key} once", key)
        args[key] = values[0]
    return args


def date_param(args: dict, name: str = "date") -> str | None:
    value = args.get(name)
    if value is None or value == "":
        return None
    try:
        if not _DATE.match(value):
            raise ValueError
        _date.fromisoformat(value)
    except ValueError:
        raise ApiError(400, "invalid_input", f"{name} must be a date written YYYY-MM-DD", name) from None
    return value


def text_param(args: dict, name: str, limit: int = 120) -> str | None:
    value = args.get(name)
    if value is None or value == "":
        return None
    if len(value) > limit:
        raise ApiError(400, "invalid_input", f"{name} must be at most {limit} characters", name)
    if has_control_character(value):  # stored text never has one; PostgreSQL refuses NUL outright
        raise ApiError(400, "invalid_input", f"{name} must be text without control characters", name)
    return value


def has_control_character(text: str) -> bool:
    """C0 (NUL included), DEL or C1."""
    return any(ord(c) < 32 or 0x7f <= ord(c) <= 0x9f for c in text)


def flag_param(args: dict) -> str | None:
    value = args.get("flag")
    if value is None or value == "":
        return None
    if value not in FLAG_CODES:
        raise ApiError(400, "invalid_input", "flag must be one of " + ", ".join(FLAG_CODES), "flag")
    return value


def int_param(args: dict, name: str, low: int, high: int, default: int | None = None) -> int | None:
    value = args.get(name)
    if value is None or value == "":
        return default
    # ASCII digits only (str.isdigit() also accepts '²', which int() refuses), short enough for int()
    if not (len(value) <= 19 and value.isascii() and value.isdigit()) or not low <= int(value) <= high:
        raise ApiError(400, "invalid_input", f"{name} must be a whole number from {low} to {high}", name)
    return int(value)
