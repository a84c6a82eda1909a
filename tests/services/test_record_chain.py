"""The record's chain under concurrent writers: two connections pools (as two server processes would
have) append readings and reviews at once; every entry is chained to exactly one predecessor.

On PostgreSQL (DATABASE_URL set) the writers really overlap and the chain head's SELECT ... FOR UPDATE
is what keeps them apart; on SQLite the write lock serialises them.
"""

from __future__ import annotations

import threading

from slipwise.services import readings
from slipwise.services.evidence import verify_record
from slipwise.store import Database

from .conftest import submission


def test_concurrent_writers_keep_one_chain(db, users, motor):
    first = readings.submit_reading(db, users["tess"], submission(motor["id"]))[0].row["id"]
    pools = [Database(db.url, schema=db.schema) for _ in range(2)]
    errors: list[BaseException] = []
    start = threading.Barrier(4)

    def submit(pool, who):
        try:
            start.wait()
            for i in range(8):
                readings.submit_reading(pool, users[who], submission(motor["id"], current_l2_a=20.0 + i / 10))
        except BaseException as e:  # noqa: BLE001 - reported below
            errors.append(e)

    def review(pool):
        try:
            start.wait()
            for _ in range(8):
                readings.review_reading(pool, users["sue"], first, "retake", "again, with the guard fitted")
        except BaseException as e:  # noqa: BLE001
            errors.append(e)

    threads = [threading.Thread(target=submit, args=(pools[0], "tess")),
               threading.Thread(target=submit, args=(pools[1], "theo")),
               threading.Thread(target=review, args=(pools[0],)),
               threading.Thread(target=review, args=(pools[1],))]
    for t in threads:
        t.start()
    for t in threads:
        t.join(timeout=120)
    for pool in pools:
        pool.dispose()
    assert not errors, errors
    report = verify_record(db)
    assert report.intact, report.broken
    assert (report.readings, report.reviews) == (17, 16)


def test_a_refused_write_leaves_the_chain_as_it_was(db, users, motor):
    stored, _ = readings.submit_reading(db, users["tess"], submission(motor["id"]))
    readings.submit_reading(db, users["tess"], submission(motor["id"], supersedes=stored.row["id"]))
    try:  # a second correction of the same reading: refused inside the write transaction
        readings.submit_reading(db, users["tess"], submission(motor["id"], supersedes=stored.row["id"]))
    except Exception as e:  # noqa: BLE001
        assert "already superseded" in str(e)
    else:
        raise AssertionError("a second successor must be refused")
    readings.review_reading(db, users["sue"], stored.row["id"], "accepted", "")
    report = verify_record(db)
    assert report.intact and (report.readings, report.reviews) == (2, 1), report
