"""The reading services called directly: replays, conflicts, corrections, reviews, interpretation only."""

from __future__ import annotations

import json

import pytest

from slipwise.engine import interpret_one
from slipwise.services import motors, readings
from slipwise.services.records import Submission, engine_record
from slipwise.store.errors import ConflictError, NotFoundError, ValidationError

from .conftest import NAMEPLATE, READING, TAKEN_AT, count_rows, submission


def test_submit_stores_the_engines_result_in_one_row(db, users, motor):
    audited = count_rows(db, "audit_log")
    record, created = readings.submit_reading(db, users["tess"], submission(motor["id"]))
    assert created
    row = record.row
    assert (row["technician"], row["motor_revision"], row["taken_at"]) == ("tess", 1, TAKEN_AT)
    assert record.reviews == []
    # the stored result is the engine's own for this nameplate and reading
    direct = interpret_one(engine_record(NAMEPLATE, "PMP-07", READING, TAKEN_AT))
    stored = json.loads(row["result"])
    # 4 poles at 50 Hz: 1500 rpm synchronous; slip (1500 - 1475) / 1500 (definition of slip)
    assert stored["slip_pct"] == pytest.approx(100 * 25 / 1500)
    assert stored["load_pct"] == pytest.approx(direct["load_pct"], rel=1e-12)
    assert count_rows(db, "readings") == 1
    assert count_rows(db, "reading_flags") == len(set(stored["flags"] or []))
    assert count_rows(db, "audit_log") == audited + 1   # reading.submit


def test_submit_twice_with_the_same_client_id_is_one_row(db, users, motor):
    sub = submission(motor["id"])
    first, created_first = readings.submit_reading(db, users["tess"], sub)
    again, created_again = readings.submit_reading(db, users["tess"], sub)
    assert (created_first, created_again) == (True, False)
    assert dict(again.row) == dict(first.row)
    assert count_rows(db, "readings") == 1


def test_same_client_id_other_content_is_conflict_and_stores_nothing(db, users, motor):
    sub = submission(motor["id"])
    readings.submit_reading(db, users["tess"], sub)
    other = submission(motor["id"], client_id=sub.client_id, speed_rpm=1470.0)
    with pytest.raises(ConflictError) as e:
        readings.submit_reading(db, users["tess"], other)
    assert e.value.field == "client_id"
    # another technician replaying the same client_id is other content too
    with pytest.raises(ConflictError):
        readings.submit_reading(db, users["theo"], sub)
    assert count_rows(db, "readings") == 1


def test_correction_supersedes_once_and_only_on_the_same_motor(db, users, motor):
    old, _ = readings.submit_reading(db, users["tess"], submission(motor["id"]))
    fixed, created = readings.submit_reading(db, users["tess"], submission(motor["id"], supersedes=old.row["id"],
                                                                          speed_rpm=1472.0))
    assert created and fixed.row["supersedes_id"] == old.row["id"]
    assert readings.get_reading(db, old.row["id"]).row["superseded_by"] == fixed.row["id"]
    with pytest.raises(ConflictError) as e:   # a second successor of the same reading
        readings.submit_reading(db, users["tess"], submission(motor["id"], supersedes=old.row["id"]))
    assert e.value.field == "supersedes"
    with pytest.raises(NotFoundError):
        readings.submit_reading(db, users["tess"], submission(motor["id"], supersedes=999_999))
    fan = motors.register_motor(db, users["sue"], "Harbour Mill", "FAN-02", NAMEPLATE)
    with pytest.raises(ValidationError) as e:
        readings.submit_reading(db, users["tess"], submission(fan["id"], supersedes=fixed.row["id"]))
    assert e.value.field == "supersedes"
    assert count_rows(db, "readings") == 2
    # the old reading is kept as it was: evidence is never rewritten
    assert json.loads(readings.get_reading(db, old.row["id"]).row["inputs"])["speed_rpm"] == 1475.0


def test_engine_refusal_and_unknown_motor_store_nothing(db, users, motor):
    audited = count_rows(db, "audit_log")
    # a shaft speed far above synchronous speed for 50 Hz, 4 poles: the engine refuses it
    with pytest.raises(ValidationError) as e:
        readings.submit_reading(db, users["tess"], submission(motor["id"], speed_rpm=3600.0))
    assert e.value.field
    with pytest.raises(NotFoundError) as e:
        readings.submit_reading(db, users["tess"], submission(999_999))
    assert e.value.field == "motor_id"
    assert count_rows(db, "readings") == 0
    assert count_rows(db, "audit_log") == audited


def test_review_states_are_appended_and_the_latest_shows(db, users, motor):
    record, _ = readings.submit_reading(db, users["tess"], submission(motor["id"]))
    rid = record.row["id"]
    assert record.row["decision"] is None
    with pytest.raises(ValidationError) as e:       # a rejection needs its reason
        readings.review_reading(db, users["sue"], rid, "rejected", "")
    assert e.value.field == "comment"
    with pytest.raises(ValidationError) as e:
        readings.review_reading(db, users["sue"], rid, "approved-ish", "")
    assert e.value.field == "decision"
    with pytest.raises(NotFoundError):
        readings.review_reading(db, users["sue"], 999_999, "accepted", "")
    assert count_rows(db, "reviews") == 0
    first = readings.review_reading(db, users["sue"], rid, "rejected", "clamp meter on the wrong phase")
    second = readings.review_reading(db, users["sue"], rid, "accepted", "")
    assert (first.decision, second.decision, second.reviewer) == ("rejected", "accepted", "sue")
    assert second.reading.row["decision"] == "accepted"
    assert [r["decision"] for r in second.reading.reviews] == ["rejected", "accepted"]
    assert count_rows(db, "reviews") == 2


def test_day_log_export_and_interpretation_only(db, users, motor):
    readings.submit_reading(db, users["tess"], submission(motor["id"]))
    readings.submit_reading(db, users["theo"], submission(motor["id"], speed_rpm=1470.0))
    assert len(readings.day_log(db, date="2025-03-14")) == 2
    assert [r["technician"] for r in readings.day_log(db, technician="theo")] == ["theo"]
    assert readings.day_log(db, date="2025-03-15") == []
    assert len(list(readings.export_rows(db, site="Harbour Mill"))) == 2
    before = count_rows(db, "readings")
    by_id = readings.interpret_reading(db, READING, TAKEN_AT, motor_id=motor["id"])
    by_plate = readings.interpret_reading(db, READING, TAKEN_AT, nameplate=NAMEPLATE, tag="PMP-07")
    assert by_id["slip_pct"] == pytest.approx(by_plate["slip_pct"]) == pytest.approx(100 * 25 / 1500)
    with pytest.raises(NotFoundError):
        readings.interpret_reading(db, READING, TAKEN_AT, motor_id=999_999)
    assert count_rows(db, "readings") == before


def test_submission_is_still_importable_from_the_store():
    from slipwise.store.readings import Submission as old_place
    assert old_place is Submission
