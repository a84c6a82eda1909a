"""Readings and reviews: append-only. A correction is a new reading that supersedes the old one.

A submission carries a client-generated ``client_id``. The unique index on
that column is what makes a replay safe: whichever of two racing inserts
loses gets an IntegrityError, and then compares its content with the row
that won (same content -> that row, different -> ConflictError).
"""

from __future__ import annotations

import functools
import hashlib
import json
import math
from dataclasses import dataclass
from typing import Any, Callable, Iterator, Mapping

from sqlalchemy import Connection, bindparam, func, select
from sqlalchemy.exc import IntegrityError

from . import audit
from .database import Database
from .errors import ConflictError, NotFoundError, ValidationError
from .motors import REVISION_FIELDS
from .schema import DECISIONS, motor_revisions, motors, reading_flags, readings, reviews, sites, users
from .types import utcnow

Interpret = Callable[[Mapping[str, Any]], dict]


def _clean(obj: Any) -> Any:
    if isinstance(obj, dict):
        return {str(k): _clean(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_clean(v) for v in obj]
    if hasattr(obj, "item") and not isinstance(obj, (str, bytes)):  # numpy scalar
        obj = obj.item()
    if isinstance(obj, float) and not math.isfinite(obj):
        return None
    return obj


def to_json(obj: Any) -> str:
    """Compact JSON; NaN/inf become null so every stored text is valid JSON."""
    return json.dumps(_clean(obj), separators=(",", ":"), ensure_ascii=False, allow_nan=False)


@dataclass(frozen=True)
class Submission:
    """A validated POST /readings body."""

    client_id: str
    motor_id: int
    supersedes: int | None
    inputs: dict[str, Any]          # reading number fields (None when blank)
    taken_at: str | None            # normalised, None when not given
    taken_date: str
    taken_at_utc: Any

    def content_hash(self, technician_id: int) -> str:
        content = {"client_id": self.client_id, "motor_id": self.motor_id, "supersedes": self.supersedes,
                   "technician_id": technician_id, "taken_at": self.taken_at,
                   "inputs": {k: self.inputs[k] for k in sorted(self.inputs)}}
        return hashlib.sha256(to_json(content).encode("utf-8")).hexdigest()


def engine_record(revision: Mapping[str, Any], tag: str, inputs: Mapping[str, Any], taken_at: str | None) -> dict:
    """The flat nameplate + reading record that the engine interprets."""
    record = {"tag": tag}
    for f in REVISION_FIELDS:
        if f not in ("location", "description"):
            record[f] = revision[f]
    record.update(inputs)
    record["taken_at"] = taken_at
    return record


# --- queries ---------------------------------------------------------------
_tech = users.alias("tech")
_reviewer = users.alias("reviewer")
_superseding = readings.alias("superseding")
_review = reviews.alias("latest_review")


def _reading_select(with_nameplate: bool = False, reading_id=None):
    latest = select(reviews.c.reading_id, func.max(reviews.c.id).label("review_id"))
    if reading_id is not None:  # one reading: do not group the whole reviews table
        latest = latest.where(reviews.c.reading_id == reading_id)
    latest = latest.group_by(reviews.c.reading_id).subquery()
    cols = [readings.c.id, readings.c.client_id, readings.c.motor_id, readings.c.motor_revision_id,
            motor_revisions.c.revision.label("motor_revision"), sites.c.name.label("site"), motors.c.tag,
            _tech.c.username.label("technician"), _tech.c.full_name.label("technician_name"),
            readings.c.taken_at, readings.c.received_at, readings.c.engine_version, readings.c.supersedes_id,
            _superseding.c.id.label("superseded_by"), _review.c.decision, _review.c.comment,
            _review.c.reviewed_at, _reviewer.c.username.label("reviewer"), readings.c.inputs, readings.c.result]
    if with_nameplate:
        cols += [motor_revisions.c[f] for f in REVISION_FIELDS]
    q = (select(*cols).select_from(readings)
            .join(motors, motors.c.id == readings.c.motor_id)
            .join(sites, sites.c.id == motors.c.site_id)
            .join(motor_revisions, motor_revisions.c.id == readings.c.motor_revision_id)
            .join(_tech, _tech.c.id == readings.c.technician_id)
            .outerjoin(_superseding, _superseding.c.supersedes_id == readings.c.id)
            .outerjoin(latest, latest.c.reading_id == readings.c.id)
            .outerjoin(_review, _review.c.id == latest.c.review_id)
            .outerjoin(_reviewer, _reviewer.c.id == _review.c.reviewer_id))
    return q.where(readings.c.id == reading_id) if reading_id is not None else q


def _filtered(q, *, date=None, site=None, technician=None, flag=None, motor_id=None):
    if date:
        q = q.where(readings.c.taken_date == date)
    if site:
        q = q.where(sites.c.name == site)
    if technician:
        q = q.where(_tech.c.username == technician)
    if flag:
        q = q.where(readings.c.id.in_(select(reading_flags.c.reading_id).where(reading_flags.c.flag == flag)))
    if motor_id:
        q = q.where(readings.c.motor_id == motor_id)
    return q.order_by(readings.c.taken_at_utc, readings.c.id)


def _review_dict(row) -> dict | None:
    if row["decision"] is None:
        return None
    return {"decision": row["decision"], "comment": row["comment"], "reviewer": row["reviewer"],
            "reviewed_at": row["reviewed_at"].isoformat()}


def reading_json(row) -> str:
    """One reading as JSON text; the stored inputs and result are spliced in without re-parsing."""
    head = {"id": row["id"], "client_id": row["client_id"], "motor_id": row["motor_id"],
            "motor_revision": row["motor_revision"], "motor_revision_id": row["motor_revision_id"],
            "site": row["site"], "tag": row["tag"], "technician": row["technician"],
            "technician_name": row["technician_name"], "taken_at": row["taken_at"],
            "received_at": row["received_at"].isoformat(), "engine_version": row["engine_version"],
            "supersedes": row["supersedes_id"], "superseded_by": row["superseded_by"],
            "review": _review_dict(row)}
    return (json.dumps(head, ensure_ascii=False, separators=(",", ":"))[:-1]
            + ',"inputs":' + row["inputs"] + ',"result":' + row["result"] + "}")


@functools.lru_cache(maxsize=1)
def _one_reading_select():
    # built once: composing this select costs more than running it
    return _reading_select(reading_id=bindparam("reading_id"))


def get_reading_json(conn: Connection, reading_id: int) -> str:
    """One reading with its whole review history (``reviews``, oldest first)."""
    row = conn.execute(_one_reading_select(), {"reading_id": reading_id}).mappings().first()
    if row is None:
        raise NotFoundError(f"no reading with id {reading_id}", "id")
    history = conn.execute(
        select(reviews.c.decision, reviews.c.comment, reviews.c.reviewed_at, users.c.username.label("reviewer"))
        .join(users, users.c.id == reviews.c.reviewer_id)
        .where(reviews.c.reading_id == reading_id).order_by(reviews.c.id)).mappings().all()
    return (reading_json(row)[:-1] + ',"reviews":'
            + json.dumps([_review_dict(r) for r in history], ensure_ascii=False, separators=(",", ":")) + "}")


def get_reading(conn: Connection, reading_id: int) -> dict:
    return json.loads(get_reading_json(conn, reading_id))


def list_readings_json(conn: Connection, *, limit: int = 100_000, **filters) -> tuple[str, int]:
    """The day's log as a JSON array text and its length."""
    q = _filtered(_reading_select(), **filters).limit(limit)
    parts = [reading_json(r) for r in conn.execute(q).mappings()]
    return "[" + ",".join(parts) + "]", len(parts)


def iter_export_rows(conn: Connection, **filters) -> Iterator[Mapping[str, Any]]:
    """Rows for the CSV record, with the nameplate revision each reading used."""
    q = _filtered(_reading_select(with_nameplate=True), **filters)
    result = conn.execution_options(stream_results=True, yield_per=2000).execute(q).mappings()
    yield from result


def record_for_picture(conn: Connection, reading_id: int) -> tuple[dict, dict]:
    """(engine record, reading summary) for drawing the torque-speed picture of a stored reading."""
    row = conn.execute(select(readings.c.inputs, readings.c.taken_at, readings.c.engine_version, motors.c.tag,
                              *[motor_revisions.c[f] for f in REVISION_FIELDS])
                       .select_from(readings)
                       .join(motors, motors.c.id == readings.c.motor_id)
                       .join(motor_revisions, motor_revisions.c.id == readings.c.motor_revision_id)
                       .where(readings.c.id == reading_id)).mappings().first()
    if row is None:
        raise NotFoundError(f"no reading with id {reading_id}", "id")
    record = engine_record(row, row["tag"], json.loads(row["inputs"]), row["taken_at"])
    return record, {"tag": row["tag"], "taken_at": row["taken_at"], "engine_version": row["engine_version"]}


# --- submission --------------------------------------------------------------
def _existing(conn: Connection, client_id: str):
    return conn.execute(select(readings.c.id, readings.c.content_hash)
                        .where(readings.c.client_id == client_id)).first()


def _replay(conn: Connection, found, digest: str, client_id: str) -> dict:
    if found.content_hash != digest:
        raise ConflictError(f"client_id {client_id} was already used for a different reading (id {found.id}); "
                            "a correction needs a new client_id and supersedes", "client_id")
    return get_reading(conn, found.id)


def submit(db: Database, user: Mapping[str, Any], sub: Submission, interpret: Interpret) -> tuple[dict, bool]:
    """Store and interpret a reading. Returns (reading, created).

    ``created`` is False for a replay of a stored submission. Raises
    ConflictError (same client_id, other content; superseding twice),
    NotFoundError (motor or superseded reading), and whatever ``interpret``
    raises for input it refuses, before anything is written.
    """
    digest = sub.content_hash(user["id"])
    with db.read() as conn:
        found = _existing(conn, sub.client_id)
        if found:
            return _replay(conn, found, digest, sub.client_id), False
        revision = conn.execute(select(motor_revisions, motors.c.tag.label("motor_tag"))
                                .join(motors, motors.c.id == motor_revisions.c.motor_id)
                                .where(motor_revisions.c.motor_id == sub.motor_id)
                                .order_by(motor_revisions.c.revision.desc()).limit(1)).mappings().first()
        if revision is None:
            raise NotFoundError(f"no motor with id {sub.motor_id}", "motor_id")
        if sub.supersedes is not None:
            old = conn.execute(select(readings.c.motor_id).where(readings.c.id == sub.supersedes)).first()
            if old is None:
                raise NotFoundError(f"no reading with id {sub.supersedes} to supersede", "supersedes")
            if old.motor_id != sub.motor_id:
                raise ValidationError(f"reading {sub.supersedes} is of another motor; a correction must be of "
                                      "the same motor", "supersedes")
    result = interpret(engine_record(revision, revision["motor_tag"], sub.inputs, sub.taken_at))
    now = utcnow()
    stored_inputs = dict(sub.inputs)
    stored_inputs["taken_at"] = sub.taken_at
    try:
        with db.write() as conn:
            rid = conn.execute(readings.insert().values(
                client_id=sub.client_id, motor_id=sub.motor_id, motor_revision_id=revision["id"],
                technician_id=user["id"], inputs=to_json(stored_inputs), result=to_json(result),
                engine_version=str(result.get("engine_version") or ""), content_hash=digest,
                taken_at=sub.taken_at or now.isoformat(timespec="seconds"), taken_date=sub.taken_date,
                taken_at_utc=sub.taken_at_utc, received_at=now, supersedes_id=sub.supersedes,
            )).inserted_primary_key[0]
            flags = sorted(set(result.get("flags") or []))
            if flags:
                conn.execute(reading_flags.insert(), [{"reading_id": rid, "flag": f} for f in flags])
            audit.record(conn, user, "reading.supersede" if sub.supersedes else "reading.submit", "reading", rid,
                         {"client_id": sub.client_id, "motor_id": sub.motor_id, "supersedes": sub.supersedes})
            return get_reading(conn, rid), True
    except IntegrityError:
        with db.read() as conn:
            found = _existing(conn, sub.client_id)
            if found:
                return _replay(conn, found, digest, sub.client_id), False
        raise ConflictError(f"reading {sub.supersedes} is already superseded by another reading; "
                            "supersede the newest one", "supersedes") from None


def add_review(db: Database, user: Mapping[str, Any], reading_id: int, decision: str, comment: str) -> dict:
    if decision not in DECISIONS:
        raise ValidationError("decision must be one of " + ", ".join(DECISIONS), "decision")
    if decision != "accepted" and not comment:
        raise ValidationError(f"comment is required for {decision}: text of 1 to 2000 characters", "comment")
    with db.write() as conn:
        if conn.execute(select(readings.c.id).where(readings.c.id == reading_id)).first() is None:
            raise NotFoundError(f"no reading with id {reading_id}", "id")
        now = utcnow()
        review_id = conn.execute(reviews.insert().values(reading_id=reading_id, decision=decision, comment=comment,
                                                         reviewer_id=user["id"], reviewed_at=now)
                                 ).inserted_primary_key[0]
        audit.record(conn, user, "reading.review", "reading", reading_id,
                     {"review_id": review_id, "decision": decision})
    with db.read() as conn:
        return {"id": review_id, "reading_id": reading_id, "decision": decision, "comment": comment,
                "reviewer": user["username"], "reviewed_at": now.isoformat(),
                "reading": get_reading(conn, reading_id)}
