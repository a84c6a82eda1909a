"""Parsing of the contract's cells: CSV text or JSON values into typed columns.

What a cell may look like is decided once, by the contract (``slipwise.contract``:
``parse_column``, the same rules as the API and the page); this module applies
them to the engine's columns and adds defaults and required-ness. Each kind of
column has one entry point: :func:`number_column` (numbers with range, whole-number and
required checks), :func:`choice_column` (a value from a fixed list),
:func:`text_column` (stripped text) and :func:`tag_column` (the motor tag).
Errors are collected per row in :class:`RowErrors` (the first error of a row
wins), so a batch reports every bad row instead of stopping at the first.
"""

from __future__ import annotations

import math
from typing import Any, Mapping, Sequence

import numpy as np
import pandas as pd

from .. import contract as C
from ..contract import is_blank, parse_column, trim



class InputError(ValueError):
    """A reading or nameplate that cannot be interpreted, naming the field."""

    def __init__(self, field: str, message: str):
        super().__init__(message)
        self.field = field
        self.message = message


class Parsed(dict):
    """Parsed columns by contract name, plus derived values."""


def filled(n: int, value, dtype=object) -> np.ndarray:
    """``n`` copies of ``value``: ``np.full``'s result, several times faster for text (object) arrays."""
    out = np.empty(n, dtype=dtype)
    out.fill(value)
    return out


def column(cols: Mapping[str, Any], name: str, n: int):
    """Column ``name`` of ``cols`` as an array of ``n`` values (None when absent)."""
    value = cols.get(name)
    if value is None:
        return None
    if isinstance(value, pd.Series):
        value = value.to_numpy()
    arr = value if isinstance(value, np.ndarray) else np.asarray(value, dtype=object)
    if arr.ndim == 0:
        arr = filled(n, arr.item())
    return arr




class RowErrors:
    """First error per row: message and field."""

    def __init__(self, n: int):
        self.message = filled(n, "")
        self.field = filled(n, "")
        self.bad = np.zeros(n, dtype=bool)

    def add(self, bad, field: str, make_message):
        new = np.asarray(bad, dtype=bool) & ~self.bad
        if not new.any():
            return
        for i in np.flatnonzero(new):
            self.message[i] = make_message(i)
            self.field[i] = field
        self.bad |= new

    def take(self, index) -> "RowErrors":
        out = RowErrors(0)
        out.message, out.field, out.bad = self.message[index], self.field[index], self.bad[index]
        return out

    @property
    def ok(self):
        return ~self.bad




def _cells(field: str, raw, n: int, errors: RowErrors):
    """Values of one contract field by the contract's cell rules; refusals recorded per row."""
    values, messages = parse_column(field, raw, wording="cell")
    refused = messages.astype(bool)     # a message is non-empty text where the cell is refused
    errors.add(refused, field, lambda i: messages[i])
    return values


def number_column(spec: C.NumberField, cols: Mapping[str, Any], n: int, errors: RowErrors):
    """One numeric contract field: parsed, defaulted and range-checked [the field's unit]."""
    raw = column(cols, spec.name, n)
    values = np.full(n, np.nan) if raw is None else _cells(spec.name, raw, n, errors)
    if spec.default is not None:
        values = np.where(np.isnan(values), spec.default, values)
    if spec.required:
        errors.add(np.isnan(values), spec.name, lambda i: f"{spec.name} is required ({spec.range_text()})")
    return values


def number_columns(specs, cols: Mapping[str, Any], n: int, errors: RowErrors, into: dict) -> None:
    """Numeric contract fields, stored in ``into`` under their names."""
    for spec in specs:
        into[spec.name] = number_column(spec, cols, n, errors)


def text_column(raw, n: int):
    """Trimmed text per row ("" for blank): a field that is carried, not judged (``taken_at``)."""
    if raw is None:
        return filled(n, "")
    # decided per distinct value: a batch of a million readings holds few distinct times per site
    codes, uniques = C.distinct_values(raw)
    clean = np.array(["" if is_blank(v) or (isinstance(v, float) and math.isnan(v)) else trim(str(v))
                      for v in uniques] + [""], dtype=object)
    return clean[codes]          # code -1 (missing) picks the trailing ""


def choice_column(raw, n: int, spec: C.ChoiceField, errors: RowErrors, upper: bool = False):
    """A choice field as its declared code ("" for blank or refused); any letter case is accepted."""
    if raw is None:
        return filled(n, "")
    return _cells(spec.name, raw, n, errors)


def tag_column(raw, n: int, errors: RowErrors):
    """The motor tag by the contract's text rules: required, visible characters, one line."""
    tag = filled(n, "") if raw is None else _cells("tag", raw, n, errors)
    errors.add(tag == "", "tag", lambda i: f"tag is required (1 to {C.TAG_MAX_CHARS} characters)")
    return tag


def records_to_columns(records: Sequence[Mapping[str, Any]]) -> dict:
    """Contract columns (object arrays) from a list of records; other keys are ignored."""
    names = set()
    for r in records:
        names.update(r.keys())
    return {k: np.array([r.get(k) for r in records], dtype=object) for k in names if k in C.INPUT_FIELDS}



def column_length(cols: Mapping[str, Any]) -> int:
    """Common length of the columns (1 when every value is a scalar)."""
    lengths = {len(v) for v in cols.values() if np.ndim(v) > 0}
    if len(lengths) > 1:
        raise ValueError("columns differ in length")
    return lengths.pop() if lengths else 1



def float_or_nan(value) -> float:
    try:
        return float(value)
    except (TypeError, ValueError):
        return math.nan
