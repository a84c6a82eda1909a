"""The cell rules, decided once: what a raw value may look like, as a CSV cell or a JSON value.

One raw value - the text of a CSV cell for ``slipwise analyze``, a JSON string or number for
the API, the text typed on the page - gets the same decision everywhere:

* surrounding white space (:data:`TRIM_CHARS`) is dropped; a value that is then empty is blank;
* a number is ASCII digits with at most one decimal mark, ``.`` or ``,`` ("50,0" is 50.0), an
  optional sign and an optional exponent ("5e1"); "50." and ".5" are numbers;
* "1,500" (one to three digits, a comma, exactly three digits) is refused as ambiguous: a
  thousands separator in one locale, a decimal comma in another; "0,125" is not ambiguous;
* thousands separators ("1 000", "1_000"), other digits ("٥٠"), "inf", "nan" and words are refused;
* a value beyond the float range ("1e400") is infinite and refused as out of range; "-0" is 0;
* a JSON ``true``/``false`` is not a number; a JSON number is taken as it is;
* choices match without regard to case and are stored as declared;
* text: at most ``max_chars`` code points after trimming; controls (C0, DEL, C1) and lone
  surrogates refused everywhere, tab and line breaks too in one-line fields; tags also refuse
  format, separator and private-use characters (:data:`TAG_REFUSED_CATEGORIES`).

The page (``static/js/fieldrules.js``) applies the same rules from ``/fields.json``, which
:mod:`slipwise.contract.page` writes from the declaration; ``tests/contract`` feeds one hostile
table to every entry point.
"""

from __future__ import annotations

import math
import re
import unicodedata
from typing import Any

import numpy as np
import pandas as pd

from .errors import FieldError
from .fields import CHOICE_FIELDS, NUMBER_FIELDS, TEXT_FIELDS, ChoiceField, NumberField, TextField

# ASCII white space, no-break and typographic spaces, line/paragraph separators and the byte order mark:
# what a spreadsheet or a phone keyboard may leave around a value. Written out so that the page's
# JavaScript trims exactly the same characters (its String.trim and Python's str.strip differ).
TRIM_CHARS = ("\t\n\v\f\r \u0085\u00a0\u1680\u2000\u2001\u2002\u2003\u2004\u2005\u2006\u2007\u2008\u2009"
              "\u200a\u2028\u2029\u202f\u205f\u3000")
NUMBER_PATTERN = r"^[+-]?(?:[0-9]+(?:[.,][0-9]*)?|[.,][0-9]+)(?:[eE][+-]?[0-9]+)?$"
AMBIGUOUS_PATTERN = r"^[+-]?[1-9][0-9]{0,2},[0-9]{3}$"
_NUMBER = re.compile(NUMBER_PATTERN)
_AMBIGUOUS = re.compile(AMBIGUOUS_PATTERN)
SHOWN_CHARS = 40   # of a refused value, quoted back in a message
_SMALL = 64        # rows below which per-value Python beats pandas' set-up cost


def _show(value: Any) -> str:
    text = str(value)
    if len(text) > SHOWN_CHARS:
        text = text[:SHOWN_CHARS - 3] + "..."
    return repr(text)


def trim(text: str) -> str:
    return text.strip(TRIM_CHARS)


def is_blank(raw: Any) -> bool:
    """None, a missing cell (NaN as pandas reads one) or text that is empty once trimmed."""
    if raw is None:
        return True
    if isinstance(raw, str):
        return trim(raw) == ""
    return False


class Refusal(Exception):
    """Why a number cell is refused, before any wording: ``kind`` in not_a_number, ambiguous, range, whole."""

    def __init__(self, kind: str, value: Any):
        super().__init__(kind)
        self.kind, self.value = kind, value


def number_or_refusal(spec: NumberField, raw: Any) -> float | int | None:
    """The decision for one non-blank-checked raw number; raises :class:`Refusal` (no wording here)."""
    if isinstance(raw, (bool, np.bool_)):
        raise Refusal("not_a_number", raw)
    if isinstance(raw, (int, float, np.integer, np.floating)):
        try:
            x = float(raw)
        except OverflowError:  # a JSON whole number beyond the float range (10**400)
            x = math.inf if raw > 0 else -math.inf
        if math.isnan(x):
            raise Refusal("not_a_number", raw)
    elif isinstance(raw, str):
        text = trim(raw)
        if not _NUMBER.match(text):
            raise Refusal("not_a_number", raw)
        if _AMBIGUOUS.match(text):
            raise Refusal("ambiguous", raw)
        x = float(text.replace(",", "."))
    else:
        raise Refusal("not_a_number", raw)
    x += 0.0   # -0 is 0
    if not math.isfinite(x) or not spec.low <= x <= spec.high:
        raise Refusal("range", x)
    if spec.integer:
        if x != int(x):
            raise Refusal("whole", x)
        return int(x)
    return x


def number_message(spec: NumberField, refusal: Refusal) -> str:
    """The API's wording (public since 1.0; tests pin it)."""
    name, rng = spec.name, spec.range_text()
    if refusal.kind == "not_a_number":
        return f"{name} must be a number from {rng}, not {_show(refusal.value)}"
    if refusal.kind == "ambiguous":
        return (f"{name} must be a number from {rng}; {_show(refusal.value)} is ambiguous (a thousands "
                f"separator or a decimal comma?): write it without the separator, or with a decimal point")
    if refusal.kind == "range":
        return f"{name} must be from {rng}, not {refusal.value:g}"
    return f"{name} must be a whole number from {rng}"


def cell_message(spec: NumberField, refusal: Refusal) -> str:
    """The CSV report's wording (public since 1.0 in ``slipwise analyze``'s error column)."""
    name, rng = spec.name, spec.range_text()
    if refusal.kind == "not_a_number":
        return f"{name}: {_show(refusal.value)} is not a number"
    if refusal.kind == "ambiguous":
        return (f"{name}: {_show(refusal.value)} is ambiguous (a thousands separator or a decimal comma?); "
                f"write it without the separator, or with a decimal point ({rng})")
    if refusal.kind == "range":
        return f"{name} = {refusal.value:g} is outside the allowed range {rng}"
    return f"{name} = {refusal.value:g} must be a whole number ({rng})"


def parse_number(name: str, raw: Any) -> float | int | None:
    spec = NUMBER_FIELDS[name]
    if is_blank(raw):
        if spec.required:
            raise FieldError(f"{name} is required: a number from {spec.range_text()}", name)
        return None
    try:
        return number_or_refusal(spec, raw)
    except Refusal as r:
        raise FieldError(number_message(spec, r), name) from None


def choice_or_none(spec: ChoiceField, text: str) -> str | None:
    """The declared code ``text`` matches without regard to case, or None."""
    folded = text.casefold()
    return next((c for c in spec.choices if c.casefold() == folded), None)


def parse_choice(name: str, raw: Any) -> str | None:
    spec = CHOICE_FIELDS[name]
    if is_blank(raw):
        if spec.required:
            raise FieldError(f"{name} is required: {spec.range_text()}", name)
        return None
    code = choice_or_none(spec, trim(raw)) if isinstance(raw, str) else None
    if code is None:
        raise FieldError(f"{name} must be {spec.range_text()}", name)
    return code


def refused_character(spec: TextField, text: str) -> str | None:
    """The first character the field refuses, or None."""
    for c in text:
        if unicodedata.category(c) in spec.refused_categories and not (not spec.one_line and c in "\t\n"):
            return c
        if spec.one_line and c in "\t\n":
            return c
    return None


def text_message(spec: TextField, text: str | None = None, bad: str | None = None) -> str:
    name, n = spec.name, spec.max_chars
    if bad is not None and spec.name == "tag":
        return (f"tag must be 1 to {n} visible characters on one line; U+{ord(bad):04X} is a control, "
                "invisible, direction-changing or private-use character")
    if bad is not None:
        line = "one line of " if spec.one_line else "text of "
        return f"{name} must be {line}at most {n} characters, without control characters"
    if spec.required and not text:
        return f"{name} is required: {spec.range_text()}"
    return f"{name} must be {spec.range_text()}" if spec.required else f"{name} must be text of at most {n} characters"


def parse_text(name: str, raw: Any, max_chars: int | None = None) -> str:
    """Trimmed text ('' for blank) by the field's rules; ``max_chars`` narrows the declared limit."""
    spec = TEXT_FIELDS[name]
    if max_chars is not None:
        spec = TextField(**{**spec.__dict__, "max_chars": max_chars})
    if is_blank(raw):
        if spec.required:
            raise FieldError(text_message(spec, ""), name)
        return ""
    if not isinstance(raw, str):
        raise FieldError(text_message(spec, None), name)
    text = trim(raw)
    bad = refused_character(spec, text)
    if bad is not None:
        raise FieldError(text_message(spec, text, bad), name)
    if len(text) > spec.max_chars:
        raise FieldError(text_message(spec, text), name)
    if spec.line_pattern:
        text_lines(spec, text)
    return text


LINE_SPACE = " \t"


def text_lines(spec: TextField, text: str) -> list[tuple[str, ...]]:
    """The non-blank lines of a field with a ``line_pattern``, split at ``;`` and trimmed.

    Raises :class:`FieldError` naming the field and the line when one does not match, or when a
    date in it does not exist (``2025-02-30``).
    """
    import datetime as _dt

    pattern = re.compile(spec.line_pattern)
    out = []
    for k, line in enumerate(text.split("\n"), start=1):
        line = line.strip(LINE_SPACE)
        if not line:
            continue
        m = pattern.match(line)
        parts = tuple(p.strip(LINE_SPACE) for p in line.split(";"))
        ok = m is not None
        if ok and spec.name == "instruments":
            try:
                _dt.date.fromisoformat(parts[2])
            except ValueError:
                ok = False
        if not ok:
            raise FieldError(f"{spec.name}: line {k} ({_show(line)}) must be {spec.help.split(': ', 1)[-1]}",
                             spec.name)
        out.append(parts)
    return out


def instrument_list(text: str | None) -> list[tuple[str, str, str]]:
    """``(name, serial, calibration due date as YYYY-MM-DD)`` of each line of an ``instruments`` value."""
    if not text:
        return []
    return [tuple(p) for p in text_lines(TEXT_FIELDS["instruments"], trim(text))]  # type: ignore[misc]


def parse_value(field: str, raw: Any) -> Any:
    """One raw value (CSV cell text or JSON value) of a declared input field -> its value (None/'' for blank).

    Raises :class:`FieldError` naming the field and the allowed range.
    """
    if field in NUMBER_FIELDS:
        return parse_number(field, raw)
    if field in CHOICE_FIELDS:
        return parse_choice(field, raw)
    if field in TEXT_FIELDS:
        return parse_text(field, raw)
    raise KeyError(f"{field} is not a declared input field")


# --------------------------------------------------------------------------- vectorised
def distinct_values(raw) -> tuple[np.ndarray, list]:
    """(code per row, distinct values in order of first appearance): code -1 for a missing cell (None or NaN).

    ``pandas.factorize``'s answer; below :data:`_SMALL` rows (one API record) a dict gives it
    without pandas' set-up cost, which is most of a single reading's parsing time.
    """
    arr = raw if isinstance(raw, np.ndarray) else np.asarray(raw, dtype=object)
    if arr.dtype.kind in "iub" and len(arr) > _SMALL:
        codes, uniques = pd.factorize(arr)           # whole numbers (codes, bit masks): no object copy
        return codes, uniques.tolist()
    if arr.dtype != object:
        arr = arr.astype(object)
    if len(arr) <= _SMALL:
        # one API record or a short file: a dict beats pandas' set-up cost
        index: dict = {}
        codes = np.array([-1 if v is None or (isinstance(v, float) and math.isnan(v))
                          else index.setdefault((type(v), v), len(index)) for v in arr], dtype=np.int64)
        return codes, [v for _, v in index]
    codes, uniques = pd.factorize(pd.Series(arr, dtype=object), use_na_sentinel=True)
    return codes, list(uniques)


def parse_column(field: str, raw, wording: str = "cell") -> tuple[np.ndarray, np.ndarray]:
    """A column of raw cells -> (values, error message per row, '' where fine).

    Numbers come back as float (NaN for blank or refused), choices and text as object arrays
    ('' for blank or refused). Each distinct value is decided once by the scalar rules above,
    so a column of 10**6 repeated cells costs a few distinct decisions. ``wording`` is ``cell``
    (``slipwise analyze``'s report) or ``api``. Required-ness and defaults are the caller's (a
    blank is not an error here), as in the engine's column parsers.
    """
    n = len(raw)
    messages = np.empty(n, dtype=object)
    messages.fill("")            # np.full's object path is several times slower on a long column
    if field in NUMBER_FIELDS:
        spec = NUMBER_FIELDS[field]
        arr = np.asarray(raw)
        if arr.dtype.kind in "fiu" and not spec.integer:
            values = arr.astype(float, copy=True) + 0.0
            with np.errstate(invalid="ignore"):
                bad = ~np.isnan(values) & (~np.isfinite(values) | (values < spec.low) | (values > spec.high))
            word = cell_message if wording == "cell" else number_message
            for i in np.flatnonzero(bad):
                messages[i] = word(spec, Refusal("range", values[i]))
            values[bad] = np.nan
            return values, messages
        codes, uniques = distinct_values(arr)
        out_u, msg_u = np.full(len(uniques) + 1, np.nan), np.full(len(uniques) + 1, "", dtype=object)
        word = cell_message if wording == "cell" else number_message
        for k, v in enumerate(uniques):
            if isinstance(v, (float, np.floating)) and math.isnan(v) or is_blank(v):
                continue
            try:
                out_u[k] = number_or_refusal(spec, v)
            except Refusal as r:
                msg_u[k] = word(spec, r)
        return out_u[codes], msg_u[codes]
    codes, uniques = distinct_values(raw)
    out_u, msg_u = np.full(len(uniques) + 1, "", dtype=object), np.full(len(uniques) + 1, "", dtype=object)
    for k, v in enumerate(uniques):
        if isinstance(v, (float, np.floating)) and math.isnan(v) or is_blank(v):
            continue
        try:
            value = parse_value(field, v if isinstance(v, str) else str(v))
        except FieldError as e:
            if field in CHOICE_FIELDS and wording == "cell":
                spec = CHOICE_FIELDS[field]
                msg_u[k] = f"{field}: {_show(trim(str(v)))} is not allowed; use {spec.range_text()}"
            else:
                msg_u[k] = e.message
            continue
        out_u[k] = "" if value is None else value
    return out_u[codes], msg_u[codes]
