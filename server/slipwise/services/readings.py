"""Submit a reading (idempotent on client_id), review it, read it back, list the day, export, interpret only.

The reading and its engine result are written in one transaction with their
flags and audit row: either all of it is stored and acknowledged, or nothing.
A replay of a stored client_id with the same content returns the stored row;
with other content it is a ConflictError.
"""

from __future__ import annotations

import itertools

import json
from dataclasses import dataclass
from datetime import datetime
from typing import Any, Iterator, Mapping

from sqlalchemy import RowMapping

from slipwise import fingerprint as chain
from slipwise.contract import DECISIONS_NEEDING_COMMENT
from slipwise.store import audit
from slipwise.store import motors as store_motors
from slipwise.store import readings as store
from slipwise.store.database import Database
from slipwise.store.errors import ConflictError, DuplicateError, NotFoundError, ValidationError
from slipwise.store.schema import DECISIONS
from slipwise.store.types import utcnow

from . import sites
from .interpretation import interpret, interpret_together
from .records import Submission, engine_record, to_json


@dataclass(frozen=True)
class ReadingRecord:
    """A stored reading (``row``: the store's reading row, inputs and result as JSON text) and its reviews."""

    row: RowMapping
    reviews: list[RowMapping]


@dataclass(frozen=True)
class Review:
    """One stored review and the reading it judged, as it stands after the review."""

    id: int
    reading_id: int
    decision: str
    comment: str
    reviewer: str
    reviewed_at: datetime
    fingerprint: str
    reading: ReadingRecord


def _record(conn, reading_id: int) -> ReadingRecord:
    row = store.reading_row(conn, reading_id)
    if row is None:
        raise NotFoundError(f"no reading with id {reading_id}", "id")
    return ReadingRecord(row, store.review_rows(conn, reading_id))


def get_reading(db: Database, reading_id: int) -> ReadingRecord:
    with db.read() as conn:
        return _record(conn, reading_id)


def day_log(db: Database, *, limit: int = 100_000, **filters) -> list[RowMapping]:
    """Readings in the order taken; filters: date, site, technician, flag, motor_id (None = any)."""
    with db.read() as conn:
        return store.reading_rows(conn, limit=limit, **filters)


def open_retakes(db: Database, user: Mapping[str, Any]) -> list[RowMapping]:
    """The retakes still asked for, across days: a technician sees the ones asked of them, a supervisor all."""
    with db.read() as conn:
        return store.open_retake_rows(conn, technician=None if user["role"] == "supervisor" else user["username"])


def day_listing(db: Database, *, limit: int, after: int | None = None, **filters) -> tuple[list[RowMapping], bool]:
    """One page of the day's listing (the few columns a table of the day shows) and whether more follow.

    Pages are in the order taken; ``after`` is the id of the last reading of the previous page.
    """
    with db.read() as conn:
        rows = store.listing_rows(conn, limit=limit + 1, after=after, **filters)
    return rows[:limit], len(rows) > limit


def export_rows(db: Database, **filters) -> Iterator[RowMapping]:
    """Rows for the CSV record (date, site filters), streamed inside one read transaction."""
    with db.read() as conn:
        yield from store.iter_export_rows(conn, **filters)


def export_records(db: Database, *, batch: int = 1000, **filters) -> Iterator[tuple[RowMapping, list[RowMapping]]]:
    """(row, every review of it oldest first) for the CSV record, streamed inside one read transaction.

    Filters: date, date_from, date_to, site, technician, flag. The reviews are read a batch of rows at a
    time, so the record keeps a reject and its comment even after a later accept.
    """
    with db.read() as conn:
        rows = store.iter_export_rows(conn, **filters)
        while True:
            chunk = list(itertools.islice(rows, batch))
            if not chunk:
                return
            history: dict[int, list[RowMapping]] = {}
            for rv in store.review_history_rows(conn, [r["id"] for r in chunk]):
                history.setdefault(rv["reading_id"], []).append(rv)
            for r in chunk:
                yield r, history.get(r["id"], [])


def picture_record(db: Database, reading_id: int) -> tuple[dict, dict]:
    """(engine record, {tag, taken_at, engine_version, result}) for the torque-speed picture of a stored reading.

    ``result`` is the stored result: the picture draws its points, not a new interpretation's.
    """
    with db.read() as conn:
        row = store.nameplate_row(conn, reading_id)
    if row is None:
        raise NotFoundError(f"no reading with id {reading_id}", "id")
    record = engine_record(row, row["tag"], json.loads(row["inputs"]), row["taken_at"])
    return record, {"tag": row["tag"], "taken_at": row["taken_at"], "engine_version": row["engine_version"],
                    "result": json.loads(row["result"])}


@dataclass(frozen=True)
class CertificateRecord:
    """What a reading's certificate prints: the reading with every review (full names, fingerprints), the
    nameplate revision it used (``nameplate``), and the engine record its picture is drawn from."""

    reading: ReadingRecord
    nameplate: RowMapping
    engine_record: dict
    history: Any = None   # ``history.MotorHistory`` of the visits up to this reading (issue 11)


def certificate_record(db: Database, reading_id: int, trend_thresholds: Any = None) -> CertificateRecord:
    """Everything one reading's certificate needs, read in one transaction.

    The motor's history stops at this reading and, once signed off, at what was known at the sign-off
    (``history.history_until``): a signed certificate stays the same file when later visits are stored.
    """
    from .history import history_until
    with db.read() as conn:
        reading = _record(conn, reading_id)
        plate = store.nameplate_row(conn, reading_id)
        sign_off = next((r["reviewed_at"] for r in reading.reviews if r["decision"] == "accepted"), None)
        history = history_until(conn, reading.row, plate, sign_off, trend_thresholds)
    record = engine_record(plate, plate["tag"], json.loads(plate["inputs"]), plate["taken_at"])
    return CertificateRecord(reading, plate, record, history)


def interpret_reading(db: Database, inputs: Mapping[str, Any], taken_at: str | None, *,
                      motor_id: int | None = None, nameplate: Mapping[str, Any] | None = None,
                      tag: str = "(untagged)", thresholds: Any = None) -> dict:
    """The engine's result for a reading of a registered motor (``motor_id``) or of a given ``nameplate``.

    Nothing is stored.
    """
    if motor_id is not None:
        with db.read() as conn:
            motor = store_motors.motor_row(conn, motor_id)
            site = sites.defaults_for_motor(conn, motor_id)   # issue 11: the site's energy defaults
        if motor is None:
            raise NotFoundError(f"no motor with id {motor_id}", "motor_id")
        record = engine_record(motor, motor["tag"], sites.with_site_defaults(inputs, site), taken_at)
    else:
        record = engine_record(nameplate or {}, tag, inputs, taken_at)
    return interpret(record, thresholds)


def _chained(conn, values: dict, content) -> dict:
    """``values`` with their place in the record's chain and their fingerprint; the chain's head advanced.

    Called inside the write transaction that inserts the entry: the head stays locked until it commits,
    and a rollback leaves the chain as it was.
    """
    length, head = store.lock_chain_head(conn)
    values = {**values, "chain_position": length + 1}
    values["fingerprint"] = chain.fingerprint(content(values), head)
    store.advance_chain_head(conn, length + 1, values["fingerprint"])
    return values


def _replay(conn, found, digest: str, client_id: str) -> ReadingRecord:
    if found.content_hash != digest:
        raise ConflictError(f"client_id {client_id} was already used for a different reading (id {found.id}); "
                            "a correction needs a new client_id and supersedes", "client_id")
    return _record(conn, found.id)


def _read_before(db: Database, sub: Submission, digest: str):
    """(the stored reading when ``sub`` replays one, else None; the motor's latest revision; its site's
    settings), read in one transaction before the engine runs. Raises what ``submit_reading`` documents."""
    with db.read() as conn:
        found = store.by_client_id(conn, sub.client_id)
        if found:
            return _replay(conn, found, digest, sub.client_id), None, None
        revision = store_motors.latest_revision(conn, sub.motor_id)
        if revision is None:
            raise NotFoundError(f"no motor with id {sub.motor_id}", "motor_id")
        site = sites.defaults_for_motor(conn, sub.motor_id)   # issue 11: the site's energy defaults
        if sub.supersedes is not None:
            old_motor = store.motor_of(conn, sub.supersedes)
            if old_motor is None:
                raise NotFoundError(f"no reading with id {sub.supersedes} to supersede", "supersedes")
            if old_motor != sub.motor_id:
                raise ValidationError(f"reading {sub.supersedes} is of another motor; a correction must be of "
                                      "the same motor", "supersedes")
    return None, revision, site


def submit_reading(db: Database, user: Mapping[str, Any], sub: Submission,
                   thresholds: Any = None) -> tuple[ReadingRecord, bool]:
    """Interpret and store a reading. Returns (reading, created).

    ``created`` is False for a replay of a stored submission. Raises
    ConflictError (same client_id, other content; superseding twice),
    NotFoundError (motor or superseded reading), ValidationError (a correction
    of another motor; input the engine refuses), before anything is written.
    """
    digest = sub.content_hash(user["id"])
    replayed, revision, site = _read_before(db, sub, digest)
    if replayed is not None:
        return replayed, False
    # a blank energy input takes the site's default; the value used is stored with the inputs
    used_inputs = sites.with_site_defaults(sub.inputs, site)
    # readings submitted at the same moment share one engine call (the same result as each alone)
    result = interpret_together(engine_record(revision, revision["motor_tag"], used_inputs, sub.taken_at),
                                thresholds)
    now = utcnow()
    stored_inputs = dict(used_inputs)
    stored_inputs["taken_at"] = sub.taken_at
    try:
        with db.write() as conn:  # one transaction: the reading, its result, its flags, its audit row
            values = dict(
                client_id=sub.client_id, motor_id=sub.motor_id, motor_revision_id=revision["id"],
                technician_id=user["id"], inputs=to_json(stored_inputs), result=to_json(result),
                engine_version=str(result.get("engine_version") or ""), content_hash=digest,
                taken_at=sub.taken_at or now.isoformat(timespec="seconds"), taken_date=sub.taken_date,
                taken_at_utc=sub.taken_at_utc, received_at=now, supersedes_id=sub.supersedes)
            rid = store.insert_reading(conn, _chained(conn, values, chain.reading_content),
                                       result.get("flags") or ())
            audit.record(conn, user, "reading.supersede" if sub.supersedes else "reading.submit", "reading", rid,
                         {"client_id": sub.client_id, "motor_id": sub.motor_id, "supersedes": sub.supersedes})
            # read back as stored; a reading inserted in this transaction has no review yet (a review
            # needs the reading committed, and the write lock is ours until then)
            row = store.reading_row(conn, rid)
            return ReadingRecord(row, []), True
    except DuplicateError:
        with db.read() as conn:  # a racing twin won: a replay, or a second successor of the same reading
            found = store.by_client_id(conn, sub.client_id)
            if found:
                return _replay(conn, found, digest, sub.client_id), False
        raise ConflictError(f"reading {sub.supersedes} is already superseded by another reading; "
                            "supersede the newest one", "supersedes") from None


def review_reading(db: Database, user: Mapping[str, Any], reading_id: int, decision: str, comment: str) -> Review:
    """Append a supervisor's review. A decision other than accepted needs a comment."""
    if decision not in DECISIONS:
        raise ValidationError("decision must be one of " + ", ".join(DECISIONS), "decision")
    if decision in DECISIONS_NEEDING_COMMENT and not comment:
        raise ValidationError(f"comment is required for {decision}: text of 1 to 2000 characters", "comment")
    with db.write() as conn:
        if store.motor_of(conn, reading_id) is None:
            raise NotFoundError(f"no reading with id {reading_id}", "id")
        now = utcnow()
        values = dict(reading_id=reading_id, decision=decision, comment=comment, reviewer_id=user["id"],
                      reviewed_at=now)
        values = _chained(conn, values, chain.review_content)
        review_id = store.insert_review(conn, values)
        audit.record(conn, user, "reading.review", "reading", reading_id,
                     {"review_id": review_id, "decision": decision})
    with db.read() as conn:
        return Review(review_id, reading_id, decision, comment, user["username"], now, values["fingerprint"],
                      _record(conn, reading_id))
