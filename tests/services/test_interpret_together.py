"""Readings interpreted together (one engine call for the submissions of the same moment) get exactly the
result and the error each gets alone (``services.interpretation.interpret_together``)."""

from __future__ import annotations

import csv
import threading
from pathlib import Path

import pytest

from slipwise.services import interpretation as I
from slipwise.services.records import to_json
from slipwise.store.errors import ValidationError

SAMPLES = Path(__file__).resolve().parents[2] / "field_samples"


def _demo_records() -> list[dict]:
    """The demo scenario's readings (invented data) joined to their motors' nameplates, as CSV text cells: mains
    and drives, several nameplates, readings with and without the sheet's tests, readings refused."""
    with open(SAMPLES / "motors.csv", newline="", encoding="utf-8") as fh:
        plates = {row["tag"]: row for row in csv.DictReader(fh)}
    with open(SAMPLES / "readings.csv", newline="", encoding="utf-8") as fh:
        rows = list(csv.DictReader(fh))
    records = []
    for row in rows:
        plate = {k: v for k, v in plates[row["tag"]].items() if k not in ("site", "location", "description")}
        records.append({**plate, **{k: v for k, v in row.items() if k != "technician"}})
    return records


RECORDS = _demo_records()


def _answer(p):
    return ("error", p.error.field, p.error.message) if p.error is not None else ("result", to_json(p.result))


def _alone(record):
    try:
        return ("result", to_json(I.interpret(record)))
    except ValidationError as e:
        return ("error", e.field, e.message)


def test_the_demo_has_enough_readings_to_mean_something():
    assert len(RECORDS) >= 20
    assert len({r["tag"] for r in RECORDS}) >= 5


@pytest.mark.parametrize("size", [2, 3, 7, len(RECORDS)])
def test_rows_interpreted_together_are_each_as_alone(size):
    alone = [_alone(r) for r in RECORDS]
    # the demo holds readings the engine refuses too (a belt pulley's speed, a power factor typed as %)
    assert sum(a[0] == "error" for a in alone) >= 1 and sum(a[0] == "result" for a in alone) >= 20
    for start in range(0, len(RECORDS), size):
        batch = [I._Pending(r, None) for r in RECORDS[start:start + size]]
        I._run(batch)
        assert [_answer(p) for p in batch] == alone[start:start + size]


def test_a_refused_reading_among_others_gets_its_own_error_and_the_others_their_results():
    bad = {**RECORDS[0], "speed_rpm": "-5"}
    with pytest.raises(ValidationError) as alone:
        I.interpret(bad)
    assert alone.value.field == "speed_rpm"
    batch = [I._Pending(r, None) for r in (RECORDS[1], bad, RECORDS[2])]
    I._run(batch)
    assert _answer(batch[1]) == ("error", "speed_rpm", alone.value.message)
    assert _answer(batch[0]) == _alone(RECORDS[1]) and _answer(batch[2]) == _alone(RECORDS[2])


def test_other_thresholds_or_fields_are_not_mixed():
    from slipwise.engine import Thresholds
    strict = Thresholds(overloaded_pct=50.0)
    short = {k: v for k, v in RECORDS[3].items() if k != "notes"}
    batch = [I._Pending(RECORDS[3], None), I._Pending(RECORDS[3], strict), I._Pending(short, None)]
    I._run(batch)
    assert _answer(batch[0]) == _alone(RECORDS[3])
    assert _answer(batch[1]) == ("result", to_json(I.interpret(RECORDS[3], strict)))
    assert _answer(batch[2]) == _alone(short)


def test_threads_at_once_each_get_their_own_answer():
    expected = [_alone(r) for r in RECORDS]
    bad = {**RECORDS[0], "frequency_hz": "0"}
    expected_bad = _alone(bad)
    assert expected_bad[0] == "error"
    jobs = [(r, e) for r, e in zip(RECORDS, expected)] * 3 + [(bad, expected_bad)] * 4
    got: list = [None] * len(jobs)
    start = threading.Barrier(8)

    def work(k):
        start.wait()
        for i in range(k, len(jobs), 8):
            try:
                got[i] = ("result", to_json(I.interpret_together(jobs[i][0])))
            except ValidationError as e:
                got[i] = ("error", e.field, e.message)

    threads = [threading.Thread(target=work, args=(k,)) for k in range(8)]
    for t in threads:
        t.start()
    for t in threads:
        t.join(120)
    assert not any(t.is_alive() for t in threads)
    assert got == [e for _, e in jobs]
    assert not I._together._busy and not I._together._waiting
