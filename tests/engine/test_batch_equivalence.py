"""A batch gives every row what that row alone gives: chunking, the thread pool, the sheet's tests
judged only on the rows that carry one and the result frame must not change a single value.

The rows are the demo day of ``field_samples/plant_day.csv`` (invented readings with every flag, the
sheet's tests on some rows, two deliberate typos) and the same rows without their tests.
"""

from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from slipwise import contract as C
from slipwise.cli_analyze import _read_csv, analyze_frame
from slipwise.engine import clear_caches, interpret_columns, pipeline

SAMPLES = Path(__file__).resolve().parents[2] / "field_samples"
TEST_FIELDS = [s.name for s in C.READING_TEST_NUMBERS] + [s.name for s in C.READING_CHOICES] + ["instruments"]


@pytest.fixture(scope="module")
def batch() -> pd.DataFrame:
    day = _read_csv(str(SAMPLES / "plant_day.csv"), "readings")
    bare = day.copy()
    for name in TEST_FIELDS:
        if name in bare.columns:
            bare[name] = np.nan if bare[name].dtype.kind == "f" else None
    # interleaved: rows with tests, rows without, as a day's file mixes them
    mixed = pd.concat([day, bare]).sort_index(kind="stable").reset_index(drop=True)
    assert mixed[[c for c in TEST_FIELDS if c in mixed.columns]].notna().any(axis=1).sum() >= 5
    return mixed


def same(a, b) -> bool:
    a, b = np.asarray(a), np.asarray(b)
    if a.dtype.kind == "f" or b.dtype.kind == "f":
        return bool(np.array_equal(a.astype(float), b.astype(float), equal_nan=True))
    return bool(np.array_equal(a.astype(object), b.astype(object)))


def test_batch_in_small_chunks_equals_each_row_alone(batch, monkeypatch):
    cols = {c: batch[c].to_numpy() for c in batch.columns if c in C.INPUT_FIELDS}
    monkeypatch.setattr(pipeline, "CHUNK_ROWS", 5)      # many chunks on the pool, a few rows each
    clear_caches()
    whole = interpret_columns(cols)
    for i in range(len(batch)):
        alone = interpret_columns({c: v[i:i + 1] for c, v in cols.items()})
        for col in C.RESULT_COLUMNS:
            assert same(whole[col][i:i + 1], alone[col]), (i, col, whole[col][i], alone[col][0])


def test_frame_holds_the_engine_values(batch):
    cols = {c: batch[c].to_numpy() for c in batch.columns if c in C.INPUT_FIELDS}
    clear_caches()
    out = interpret_columns(cols)
    frame = analyze_frame(batch)
    for col in C.RESULT_COLUMNS:
        values = frame[col].to_numpy(dtype=float, na_value=np.nan) if col == "poles" else frame[col].to_numpy()
        assert same(values, out[col]), col
    # text columns keep the type the pandas constructor gives them
    assert frame["findings"].dtype == pd.DataFrame({"x": out["findings"]})["x"].dtype


def test_reading_without_tests_alone_is_the_same_whichever_motor_was_judged_first(batch):
    """One reading at a time (a submission) reuses the judged pattern of a row without tests; it must not
    matter which motor's row made it: each bare row alone, the pattern made cold by that very row, equals
    the same row alone after every other motor's bare row has gone before it."""
    from slipwise.engine import sheet
    cols = {c: batch[c].to_numpy() for c in batch.columns if c in C.INPUT_FIELDS}
    has = np.array([batch.loc[i, [c for c in TEST_FIELDS if c in batch.columns]].notna().any()
                    for i in range(len(batch))])
    bare = [i for i in range(len(batch)) if not has[i]]
    assert len(bare) >= 20
    warm = {}
    for i in reversed(bare):                  # the pattern kept from the last motor of the day
        warm[i] = interpret_columns({c: v[i:i + 1] for c, v in cols.items()})
    assert sheet._UNTESTED, "a row without tests keeps its judged pattern"
    for i in bare:
        clear_caches()                        # cold: this row judges its own pattern
        cold = interpret_columns({c: v[i:i + 1] for c, v in cols.items()})
        for col in C.RESULT_COLUMNS:
            assert same(cold[col], warm[i][col]), (i, col, cold[col][0], warm[i][col][0])
