"""``slipwise analyze``: interpret a readings file in batch.

Exit status: 0 when every row was interpreted, 1 when some rows carry an
``error``, 2 for a usage error (missing file, unknown column, bad option).
"""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path

import numpy as np
import pandas as pd

from . import contract as C
from .engine import InputError, interpret_columns, thresholds_from_mapping
from .engine.findings import findings_text
from .engine.records import cautions_cell, neutralise, result_column

#: Columns carried through from the input untouched (site records, notes).
PASSTHROUGH_COLUMNS = ("site", "location", "description", "technician", "notes", "reading_ref")
_TEXT_INPUTS = {"tag", "design", "supply", "driven_load", "taken_at"} | set(PASSTHROUGH_COLUMNS)


class UsageError(Exception):
    """Bad invocation or unusable file: exit status 2."""


def add_analyze_parser(subparsers) -> argparse.ArgumentParser:
    """Register ``analyze`` on an argparse subparsers object."""
    parser = subparsers.add_parser(
        "analyze", help="interpret a CSV of readings (nameplate columns in it or in --motors)",
        description="Interpret every reading of a CSV file: synchronous speed and slip, load by three "
                    "methods with a band, efficiency, supply quality, breakdown margin and flags.")
    parser.add_argument("readings", help="CSV file of readings (contract column names)")
    parser.add_argument("-o", "--output", help="file to write (default: standard output)")
    parser.add_argument("--motors", help="CSV file of nameplates joined on the tag column")
    parser.add_argument("--format", choices=("csv", "json"), default="csv",
                        help="csv (default) or json (one JSON object per line)")
    parser.add_argument("--threshold", action="append", default=[], metavar="NAME=VALUE",
                        help="override a flag threshold, e.g. underloaded_pct=30 (repeatable)")
    parser.add_argument("--findings-legend", metavar="FILE",
                        help="write each row's findings and cautions as a short key (F1, F2, ...) and each "
                             "key's texts once, in FILE (CSV: key, flags, limit_flags, findings, cautions); "
                             "a large batch's output then stays small")
    parser.set_defaults(func=run_analyze)
    return parser


def _read_csv(path: str, what: str) -> pd.DataFrame:
    file = Path(path)
    if not file.is_file():
        raise UsageError(f"{what} file not found: {path}")
    try:
        frame = pd.read_csv(file, keep_default_na=False, na_values=[""],
                            dtype={c: str for c in _TEXT_INPUTS}, encoding="utf-8-sig")
    except (pd.errors.ParserError, pd.errors.EmptyDataError, UnicodeDecodeError) as exc:
        raise UsageError(f"{what} file {path} is not a readable CSV: {exc}") from None
    unknown = [c for c in frame.columns if c not in C.INPUT_FIELDS and c not in PASSTHROUGH_COLUMNS]
    if unknown:
        raise UsageError(f"unknown column(s) in {path}: {', '.join(map(str, unknown))}; allowed columns are "
                         f"the contract's fields ({', '.join(C.INPUT_FIELDS)}) and {', '.join(PASSTHROUGH_COLUMNS)}")
    if "tag" not in frame.columns:
        raise UsageError(f"{path} has no tag column")
    return frame


def _join_motors(readings: pd.DataFrame, motors: pd.DataFrame) -> tuple[pd.DataFrame, np.ndarray]:
    dup = motors["tag"][motors["tag"].duplicated()].unique()
    if len(dup):
        raise UsageError(f"motors file lists tag(s) more than once: {', '.join(map(str, dup[:5]))}")
    nameplate_cols = [c for c in motors.columns if c != "tag"]
    clash = [c for c in nameplate_cols if c in readings.columns and c in C.NAMEPLATE_FIELDS]
    left = readings.drop(columns=clash)
    merged = left.merge(motors, on="tag", how="left", indicator=True, validate="many_to_one")
    missing = (merged.pop("_merge") == "left_only").to_numpy()
    return merged, missing


def _thresholds(pairs):
    values = {}
    for pair in pairs:
        if "=" not in pair:
            raise UsageError(f"--threshold takes NAME=VALUE, got {pair!r}")
        name, value = pair.split("=", 1)
        values[name.strip()] = value.strip()
    try:
        return thresholds_from_mapping(values)
    except InputError as exc:
        raise UsageError(f"--threshold {exc.field}: {exc.message}") from None


#: Columns of the legend ``--findings-legend`` writes.
LEGEND_COLUMNS = ("key", "flags", "limit_flags", "findings", "cautions")


def analyze_frame(frame: pd.DataFrame, thresholds=None, missing_motor=None) -> pd.DataFrame:
    """Input frame plus every result column, in contract order."""
    return _analyze(frame, thresholds, missing_motor, keyed=False)[0]


def analyze_frame_keyed(frame: pd.DataFrame, thresholds=None, missing_motor=None) -> tuple[pd.DataFrame, pd.DataFrame]:
    """:func:`analyze_frame` with ``findings`` and ``cautions`` as a key per row, and the legend of the keys.

    A key (``F1``, ``F2``, ... in the order the rows first raise it) stands for one distinct pair of
    findings and cautions texts; a row without findings keeps both cells blank, a row with findings but
    no caution a blank ``cautions``. The legend has one row per key: :data:`LEGEND_COLUMNS`, the
    texts exactly as the default output writes them in every row.
    """
    return _analyze(frame, thresholds, missing_motor, keyed=True)


def _analyze(frame: pd.DataFrame, thresholds, missing_motor, keyed: bool):
    cols = {c: frame[c].to_numpy() for c in frame.columns if c in C.INPUT_FIELDS}
    out = interpret_columns(cols, thresholds)
    # cautions per distinct combination of flags (as the findings), blank for a row not interpreted
    combo_cautions = np.array([cautions_cell({"findings": f}) for f in out["_combination_findings"]] + [""],
                              dtype=object)
    legend = None
    if keyed:
        legend, combo_keys, combo_caution_keys = _legend(out, combo_cautions[:-1])
        out["findings"] = combo_keys[out["_combination"]]
        combo_cautions = combo_caution_keys
    result = _columns_frame({c: out[c] for c in C.RESULT_COLUMNS})
    cautions = combo_cautions[out["_combination"]]
    if missing_motor is not None and missing_motor.any():
        idx = np.flatnonzero(missing_motor)
        for c in C.RESULT_COLUMNS:
            if c in C.TEXT_RESULT_COLUMNS:
                result.loc[idx, c] = ""
            else:
                result.loc[idx, c] = np.nan
        result.loc[idx, "error"] = [f"tag {frame['tag'].iloc[i]!r} is not in the motors file" for i in idx]
        result.loc[idx, "error_field"] = "tag"
        result.loc[idx, "engine_version"] = C.ENGINE_VERSION
        cautions[idx] = ""
    result["poles"] = _whole_numbers(result["poles"].to_numpy(dtype=float))
    keep = frame.drop(columns=[c for c in frame.columns if c in result.columns or c == "cautions"])
    # the result columns stay last; the cautions (as in the export) come just before them
    keep = keep.reset_index(drop=True).assign(cautions=cautions)
    return pd.concat([keep, result], axis=1), legend


def _whole_numbers(values: np.ndarray):
    """Floats holding whole numbers (NaN blank) as pandas' nullable Int64."""
    blank = np.isnan(values)
    whole = np.where(blank, 0.0, values)
    if np.array_equal(whole, np.trunc(whole)):
        return pd.arrays.IntegerArray(whole.astype(np.int64), blank)
    return pd.array(np.where(blank, None, values), dtype="Int64")   # refuses a fraction, as it always did


def _legend(out: dict, combo_cautions: np.ndarray):
    """(legend frame, findings key per combination, cautions key per combination) for
    :func:`analyze_frame_keyed`; each per-combination array ends with "" for a row not interpreted."""
    count = len(combo_cautions)
    combo_keys = np.full(count + 1, "", dtype=object)
    caution_keys = np.full(count + 1, "", dtype=object)
    # the first row of each combination gives its flag cells
    combos, first = np.unique(out["_combination"], return_index=True)
    first_row = dict(zip(combos.tolist(), first.tolist()))
    keys: dict = {}
    legend = {name: [] for name in LEGEND_COLUMNS}
    for k in range(count):
        text, caution = findings_text(out["_combination_findings"][k]), combo_cautions[k]
        if not text and not caution:
            continue
        key = keys.get((text, caution))
        if key is None:
            key = keys[(text, caution)] = f"F{len(keys) + 1}"
            i = first_row[k]
            for name, value in (("key", key), ("flags", out["flags"][i]), ("limit_flags", out["limit_flags"][i]),
                                ("findings", neutralise(text)), ("cautions", caution)):
                legend[name].append(value)
        combo_keys[k] = key
        caution_keys[k] = key if caution else ""
    return pd.DataFrame(legend, columns=list(LEGEND_COLUMNS), dtype=object), combo_keys, caution_keys


def _columns_frame(columns: dict) -> pd.DataFrame:
    """A frame holding the given 1-d numpy arrays as they are (no copy into a 2-d block)."""
    make = getattr(getattr(pd.api, "internals", None), "create_dataframe_from_blocks", None)
    arrays = list(columns.values())
    n = len(arrays[0]) if arrays else 0
    if make is None or not all(isinstance(a, np.ndarray) and a.ndim == 1 and len(a) == n for a in arrays):
        return pd.DataFrame(columns)
    # numbers as they are; text as the constructor would infer it (pandas' string type where it has one)
    blocks = [(a.reshape(1, -1) if a.dtype != object else _text_array(a), np.array([j]))
              for j, a in enumerate(arrays)]
    return make(blocks, index=pd.RangeIndex(n), columns=pd.Index(list(columns)))


def _text_array(values: np.ndarray):
    """An object array of str as the type pandas' constructor infers for it, wrapping it without a copy
    where that type is pandas' own string array (checked: every value text), else as the constructor does."""
    dtype = pd.Series(np.array(["x"], dtype=object)).dtype
    string_array = getattr(pd.arrays, "StringArray", None)
    if string_array is not None and isinstance(dtype, pd.StringDtype) and dtype.storage == "python" \
            and pd.api.types.infer_dtype(values, skipna=False) == "string":
        try:
            return string_array(values, dtype=dtype)
        except (TypeError, ValueError):
            pass
    return pd.Series(values, copy=False).array


def _csv_frame(frame: pd.DataFrame) -> pd.DataFrame:
    """The frame as CSV text: result cells by the commissioning-record writer, input cells neutralised."""
    text = frame.astype(object).where(frame.notna(), None)
    cells = pd.DataFrame({c: result_column(c, text[c].to_numpy()) for c in C.RESULT_COLUMNS}, index=text.index,
                         dtype=object)
    inputs = text.drop(columns=list(C.RESULT_COLUMNS)).map(_input_cell)
    return pd.concat([inputs, cells], axis=1)


def _input_cell(value):
    """An input cell as read: numbers in their shortest form (no float noise), text neutralised."""
    if isinstance(value, float):
        return f"{value:.15g}"
    return neutralise(value)


def _write(frame: pd.DataFrame, output, fmt: str) -> None:
    if fmt == "csv":
        _csv_frame(frame).to_csv(output, index=False, lineterminator="\n")
        return
    for record in frame.to_dict(orient="records"):
        clean = {}
        for key, value in record.items():
            if isinstance(value, float) and not np.isfinite(value):
                value = None
            elif value is pd.NA:
                value = None
            elif isinstance(value, (np.integer,)):
                value = int(value)
            if key == "flags":
                value = [c for c in (value or "").split(";") if c]
            clean[key] = value
        output.write(json.dumps(clean, ensure_ascii=False) + "\n")


def run_analyze(args) -> int:
    try:
        thresholds = _thresholds(args.threshold)
        readings = _read_csv(args.readings, "readings")
        missing = None
        if args.motors:
            readings, missing = _join_motors(readings, _read_csv(args.motors, "motors"))
        result, legend = _analyze(readings, thresholds, missing, keyed=bool(args.findings_legend))
        if legend is not None:
            try:
                legend.to_csv(args.findings_legend, index=False, lineterminator="\n", encoding="utf-8")
            except OSError as exc:
                raise UsageError(f"cannot write {args.findings_legend}: {exc.strerror}") from None
        if args.output:
            try:
                with open(args.output, "w", encoding="utf-8", newline="") as fh:
                    _write(result, fh, args.format)
            except OSError as exc:
                raise UsageError(f"cannot write {args.output}: {exc.strerror}") from None
        else:
            _write(result, sys.stdout, args.format)
    except UsageError as exc:
        print(f"slipwise analyze: {exc}", file=sys.stderr)
        return 2
    errors = (result["error"].fillna("") != "").sum()
    total = len(result)
    flagged = (result["flags"].fillna("") != "").sum()
    print(f"{total} readings: {total - errors} interpreted ({flagged} with flags), {errors} with errors",
          file=sys.stderr)
    return 1 if errors else 0
