"""Parsing of the contract's cells: CSV text or JSON values into typed columns.

The one place where a cell is accepted or refused. Each kind of column has one
entry point: :func:`number_column` (numbers with range, whole-number and
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

_CONTROL = "".join(chr(c) for c in range(32)) + "\x7f"
_SMALL = 64          # row count below which per-value Python beats pandas' set-up cost


class InputError(ValueError):
    """A reading or nameplate that cannot be interpreted, naming the field."""

    def __init__(self, field: str, message: str):
        super().__init__(message)
        self.field = field
        self.message = message


class Parsed(dict):
    """Parsed columns by contract name, plus derived values."""


def column(cols: Mapping[str, Any], name: str, n: int):
    """Column ``name`` of ``cols`` as an array of ``n`` values (None when absent)."""
    value = cols.get(name)
    if value is None:
        return None
    if isinstance(value, pd.Series):
        value = value.to_numpy()
    arr = value if isinstance(value, np.ndarray) else np.asarray(value, dtype=object)
    if arr.ndim == 0:
        arr = np.full(n, arr.item(), dtype=object)
    return arr




class RowErrors:
    """First error per row: message and field."""

    def __init__(self, n: int):
        self.message = np.full(n, "", dtype=object)
        self.field = np.full(n, "", dtype=object)
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




def _show(value) -> str:
    text = str(value)
    if len(text) > 40:
        text = text[:37] + "..."
    return repr(text)


def _to_float(raw, n: int, name: str, errors: RowErrors):
    if raw is None:
        return np.full(n, np.nan)
    arr = np.asarray(raw)
    if arr.dtype.kind in "fiu":
        return arr.astype(float, copy=True)
    if arr.dtype.kind == "b":
        errors.add(np.ones(n, dtype=bool), name, lambda i: f"{name}: {_show(arr[i])} is not a number")
        return np.full(n, np.nan)
    # text or mixed: decide per distinct value (few of them in practice); a few rows
    # (one API record) go straight through without pandas
    if n <= _SMALL:
        codes, uniques = np.arange(n), list(arr)
        codes = np.array([-1 if v is None or (isinstance(v, float) and math.isnan(v)) else i
                          for i, v in enumerate(arr)], dtype=np.int64)
    else:
        codes, uniques = pd.factorize(pd.Series(arr, dtype=object), use_na_sentinel=True)
    values = np.full(len(uniques), np.nan)
    bad_u = np.zeros(len(uniques), dtype=bool)
    for k, v in enumerate(uniques):
        if isinstance(v, (bool, np.bool_)):
            bad_u[k] = True
            continue
        if isinstance(v, (int, float, np.integer, np.floating)):
            values[k] = float(v)
            continue
        text = str(v).strip()
        if text == "":
            continue
        try:
            x = float(text)
        except ValueError:
            bad_u[k] = True
            continue
        if math.isnan(x):
            bad_u[k] = True        # "nan" typed as text is not a reading
        else:
            values[k] = x
    out = np.append(values, np.nan)[codes]          # code -1 (missing) picks the trailing NaN
    bad = np.append(bad_u, False)[codes]
    errors.add(bad, name, lambda i: f"{name}: {_show(arr[i])} is not a number")
    return out




def _check_range(values, spec: C.NumberField, errors: RowErrors):
    with np.errstate(invalid="ignore"):
        outside = ~np.isnan(values) & ((values < spec.low) | (values > spec.high) | ~np.isfinite(values))
    errors.add(outside, spec.name,
               lambda i: f"{spec.name} = {values[i]:g} is outside the allowed range {spec.range_text()}")
    if spec.integer:
        frac = ~np.isnan(values) & np.isfinite(values) & (values != np.round(values))
        errors.add(frac, spec.name, lambda i: f"{spec.name} = {values[i]:g} must be a whole number "
                                              f"({spec.range_text()})")
    if spec.required:
        errors.add(np.isnan(values), spec.name, lambda i: f"{spec.name} is required ({spec.range_text()})")




def number_column(spec: C.NumberField, cols: Mapping[str, Any], n: int, errors: RowErrors):
    """One numeric contract field: parsed, defaulted and range-checked [the field's unit]."""
    values = _to_float(column(cols, spec.name, n), n, spec.name, errors)
    if spec.default is not None:
        values = np.where(np.isnan(values), spec.default, values)
    _check_range(values, spec, errors)
    return values


def number_columns(specs, cols: Mapping[str, Any], n: int, errors: RowErrors, into: dict) -> None:
    """Numeric contract fields, stored in ``into`` under their names."""
    for spec in specs:
        into[spec.name] = number_column(spec, cols, n, errors)


def text_column(raw, n: int):
    """Stripped text per row ("" for blank), decided per distinct value."""
    if raw is None:
        return np.full(n, "", dtype=object)
    if n <= _SMALL:
        return np.array(["" if v is None or (isinstance(v, float) and math.isnan(v)) else str(v).strip()
                         for v in np.asarray(raw, dtype=object)], dtype=object)
    codes, uniques = pd.factorize(pd.Series(np.asarray(raw, dtype=object), dtype=object), use_na_sentinel=True)
    clean = np.array(["" if (isinstance(v, float) and math.isnan(v)) else str(v).strip() for v in uniques] + [""],
                     dtype=object)
    return clean[codes]          # code -1 (missing) picks the trailing ""




def choice_column(raw, n: int, spec: C.ChoiceField, errors: RowErrors, upper: bool):
    """A choice field normalised to its case ("" for blank or refused)."""
    text = text_column(raw, n)
    uniq, inv = np.unique(text.astype(str), return_inverse=True)
    norm_u = np.array([t.upper() if upper else t.lower() for t in uniq], dtype=object)
    bad_u = (norm_u != "") & ~np.isin(norm_u, spec.choices)
    norm = norm_u[inv].astype(object)
    bad = bad_u[inv]
    errors.add(bad, spec.name, lambda i: f"{spec.name}: {_show(text[i])} is not allowed; use {spec.range_text()}")
    norm[bad] = ""
    return norm


def tag_column(raw, n: int, errors: RowErrors):
    """The motor tag: required, 1 to ``TAG_MAX_CHARS`` printable characters."""
    tag = text_column(raw, n)
    errors.add(tag == "", "tag", lambda i: f"tag is required (1 to {C.TAG_MAX_CHARS} characters)")
    errors.add(np.array([len(t) > C.TAG_MAX_CHARS for t in tag], dtype=bool), "tag",
               lambda i: f"tag is {len(tag[i])} characters long; the allowed length is 1 to {C.TAG_MAX_CHARS}")
    errors.add(np.array([any(ch in _CONTROL for ch in t) for t in tag], dtype=bool), "tag",
               lambda i: "tag contains control characters; use printable text only")
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
