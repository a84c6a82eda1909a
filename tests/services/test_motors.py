"""The motor services called directly: register, revise (a new revision only on change), refusals."""

from __future__ import annotations

import pytest

from slipwise.services import motors
from slipwise.store.errors import ConflictError, NotFoundError, ValidationError

from .conftest import NAMEPLATE, count_rows


def test_register_makes_revision_one(db, users, motor):
    assert (motor["site"], motor["tag"], motor["revision"], motor["updated_by"]) == ("Harbour Mill", "PMP-07", 1,
                                                                                   "sue")
    assert (count_rows(db, "motors"), count_rows(db, "motor_revisions")) == (1, 1)
    with pytest.raises(ConflictError) as e:
        motors.register_motor(db, users["sue"], "Harbour Mill", "PMP-07", NAMEPLATE)
    assert e.value.field == "tag"
    assert (count_rows(db, "motors"), count_rows(db, "motor_revisions")) == (1, 1)


def test_nameplate_the_engine_cannot_use_is_refused_before_writing(db, users):
    audited = count_rows(db, "audit_log")
    # 1600 rpm is above the 1500 rpm synchronous speed of the slowest pole count that fits 50 Hz and 1460 rpm
    with pytest.raises(ValidationError) as e:
        motors.register_motor(db, users["sue"], "Harbour Mill", "PMP-08", {**NAMEPLATE, "rated_speed_rpm": 1600.0})
    assert e.value.field == "rated_speed_rpm"
    assert count_rows(db, "motors") == 0 and count_rows(db, "audit_log") == audited


def test_revise_adds_a_revision_only_when_something_changed(db, users, motor):
    same, changed = motors.revise_motor(db, users["sue"], motor["id"], NAMEPLATE)
    assert not changed and same.row["revision"] == 1 and len(same.revisions) == 1
    new, changed = motors.revise_motor(db, users["sue"], motor["id"], {**NAMEPLATE, "rated_current_a": 29.0},
                                       expected_revision=1)
    assert changed and new.row["revision"] == 2 and new.row["rated_current_a"] == 29.0
    assert [r["rated_current_a"] for r in new.revisions] == [28.5, 29.0]
    with pytest.raises(ConflictError) as e:      # edited from revision 1, but the motor is at 2
        motors.revise_motor(db, users["sue"], motor["id"], {**NAMEPLATE, "rated_current_a": 30.0},
                            expected_revision=1)
    assert e.value.field == "revision"
    with pytest.raises(ValidationError) as e:
        motors.revise_motor(db, users["sue"], motor["id"], NAMEPLATE, identity={"tag": "PMP-99"})
    assert e.value.field == "tag"
    with pytest.raises(NotFoundError):
        motors.revise_motor(db, users["sue"], 999_999, NAMEPLATE)
    assert count_rows(db, "motor_revisions") == 2
    assert motors.get_motor(db, motor["id"]).revisions is None
    assert [m["tag"] for m in motors.list_motors(db, site="Harbour Mill")] == ["PMP-07"]
