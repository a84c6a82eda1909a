"""Readings and reviews: append-only. A correction is a new reading that supersedes the old one.

Rows in, rows out: the workflow (interpretation, replays, review rules) is in
``slipwise.services.readings`` and the API's JSON in ``slipwise.web.render``.
``inputs`` and ``result`` are stored as JSON text and returned as such, so a
reader can splice them into a response without parsing them.

A submission carries a client-generated ``client_id``. The unique index on
that column is what makes a replay safe: whichever of two racing inserts
loses gets a DuplicateError from :func:`insert_reading`.
"""

from __future__ import annotations

import functools
from datetime import datetime
from typing import Any, Iterable, Iterator, Mapping

import re

from sqlalchemy import Connection, Float, RowMapping, String, and_, bindparam, func, or_, select
from sqlalchemy.ext.compiler import compiles
from sqlalchemy.sql.expression import ColumnElement
from sqlalchemy.exc import IntegrityError

from .errors import DuplicateError
from .motors import REVISION_FIELDS
from .schema import motor_revisions, motors, reading_flags, readings, record_chain, reviews, sites, users


def __getattr__(name: str):
    # Submission moved to the services (it is a parsed request, not a row); old imports keep working
    if name == "Submission":
        from slipwise.services.records import Submission
        return Submission
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")


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
            _tech.c.role.label("technician_role"),
            readings.c.taken_at, readings.c.received_at, readings.c.engine_version, readings.c.supersedes_id,
            _superseding.c.id.label("superseded_by"), _review.c.decision, _review.c.comment,
            _review.c.reviewed_at, _reviewer.c.username.label("reviewer"),
            _reviewer.c.full_name.label("reviewer_name"), _review.c.fingerprint.label("review_fingerprint"),
            readings.c.fingerprint, readings.c.inputs, readings.c.result]
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


def _filtered(q, *, date=None, site=None, technician=None, flag=None, motor_id=None, date_from=None, date_to=None):
    if date:
        q = q.where(readings.c.taken_date == date)
    if date_from:  # ISO dates compare as text
        q = q.where(readings.c.taken_date >= date_from)
    if date_to:
        q = q.where(readings.c.taken_date <= date_to)
    if site:
        q = q.where(sites.c.name == site)
    if technician:
        q = q.where(_tech.c.username == technician)
    if flag:
        q = q.where(readings.c.id.in_(select(reading_flags.c.reading_id).where(reading_flags.c.flag == flag)))
    if motor_id:
        q = q.where(readings.c.motor_id == motor_id)
    return q.order_by(readings.c.taken_at_utc, readings.c.id)


@functools.lru_cache(maxsize=1)
def _one_reading_select():
    # built once: composing this select costs more than running it
    return _reading_select(reading_id=bindparam("reading_id"))


def reading_row(conn: Connection, reading_id: int) -> RowMapping | None:
    """One reading with its motor, site, technician, successor and latest review; None if there is none."""
    return conn.execute(_one_reading_select(), {"reading_id": reading_id}).mappings().first()


@functools.lru_cache(maxsize=1)
def _review_rows_select():
    return (select(reviews.c.id, reviews.c.decision, reviews.c.comment, reviews.c.reviewed_at,
                   users.c.username.label("reviewer"), users.c.full_name.label("reviewer_name"),
                   users.c.role.label("reviewer_role"), reviews.c.fingerprint, reviews.c.chain_position)
            .join(users, users.c.id == reviews.c.reviewer_id)
            .where(reviews.c.reading_id == bindparam("reading_id")).order_by(reviews.c.id))


def review_rows(conn: Connection, reading_id: int) -> list[RowMapping]:
    """Every review of a reading, oldest first: id, decision, comment, reviewed_at, reviewer (username),
    reviewer_name (full name), reviewer_role, fingerprint, chain_position."""
    return conn.execute(_review_rows_select(), {"reading_id": reading_id}).mappings().all()


def open_retake_rows(conn: Connection, *, technician: str | None = None, limit: int = 10_000) -> list[RowMapping]:
    """Readings whose latest review asks for a retake and that no later reading supersedes yet, any day,
    oldest first; ``technician`` (a user name) keeps that technician's own."""
    q = _reading_select().where(_review.c.decision == "retake").where(_superseding.c.id.is_(None))
    if technician:
        q = q.where(_tech.c.username == technician)
    return conn.execute(q.order_by(readings.c.taken_at_utc, readings.c.id).limit(limit)).mappings().all()


def review_history_rows(conn: Connection, reading_ids: Iterable[int]) -> list[RowMapping]:
    """Every review of the given readings, by reading then oldest first, with the reviewer's full name."""
    ids = list(reading_ids)
    if not ids:
        return []
    return conn.execute(
        select(reviews.c.reading_id, reviews.c.decision, reviews.c.comment, reviews.c.reviewed_at,
               users.c.username.label("reviewer"), users.c.full_name.label("reviewer_name"))
        .join(users, users.c.id == reviews.c.reviewer_id)
        .where(reviews.c.reading_id.in_(ids)).order_by(reviews.c.reading_id, reviews.c.id)).mappings().all()


def reading_rows(conn: Connection, *, limit: int = 100_000, **filters) -> list[RowMapping]:
    """Readings in the order they were taken; filters: date, site, technician, flag, motor_id."""
    return conn.execute(_filtered(_reading_select(), **filters).limit(limit)).mappings().all()


class _JsonMember(ColumnElement):
    """A top-level member of a JSON text column, read by the database (SQLite json_extract, PostgreSQL ->>):
    a number as a number, a list as its JSON text."""

    inherit_cache = True

    def __init__(self, column, key: str, type_):
        if not re.fullmatch(r"[a-z_][a-z0-9_]*", key):
            raise ValueError(f"not a result column name: {key!r}")
        self.column, self.key_name, self.type = column, key, type_


@compiles(_JsonMember, "sqlite")
def _stored_member_sqlite(element, compiler, **kw):
    return f"json_extract({compiler.process(element.column, **kw)}, '$.{element.key_name}')"


@compiles(_JsonMember, "postgresql")
def _stored_member_postgresql(element, compiler, **kw):
    text = f"(CAST({compiler.process(element.column, **kw)} AS json) ->> '{element.key_name}')"
    return f"CAST({text} AS double precision)" if isinstance(element.type, Float) else text


def _listing_select():
    """The day's listing: what a table of the day needs, the verdict, load and flags read out of the stored
    result by the database's own JSON functions (no result is parsed in Python, none is sent whole)."""
    latest = (select(reviews.c.reading_id, func.max(reviews.c.id).label("review_id"))
              .group_by(reviews.c.reading_id).subquery())
    cols = [readings.c.id, readings.c.motor_id, sites.c.name.label("site"), motors.c.tag,
            _tech.c.username.label("technician"), _tech.c.full_name.label("technician_name"), readings.c.taken_at,
            _superseding.c.id.label("superseded_by"), _review.c.decision.label("review_decision"),
            _JsonMember(readings.c.result, "verdict", String()).label("verdict"),
            _JsonMember(readings.c.result, "load_pct", Float()).label("load_pct"),
            _JsonMember(readings.c.result, "flags", String()).label("flags")]
    return (select(*cols).select_from(readings)
            .join(motors, motors.c.id == readings.c.motor_id)
            .join(sites, sites.c.id == motors.c.site_id)
            .join(_tech, _tech.c.id == readings.c.technician_id)
            .outerjoin(_superseding, _superseding.c.supersedes_id == readings.c.id)
            .outerjoin(latest, latest.c.reading_id == readings.c.id)
            .outerjoin(_review, _review.c.id == latest.c.review_id))


def listing_rows(conn: Connection, *, limit: int, after: int | None = None, **filters) -> list[RowMapping]:
    """The day's listing in the order taken, at most ``limit`` rows, starting after reading ``after``.

    ``after`` is the id of the last row of the previous page: the next page starts after its
    (taken_at_utc, id), the listing's order, so each reading is on exactly one page however the
    readings taken before it change. ``flags`` comes back as the stored JSON text of the list.
    """
    q = _listing_select()
    if after is not None:
        at = select(readings.c.taken_at_utc).where(readings.c.id == after).scalar_subquery()
        q = q.where(or_(readings.c.taken_at_utc > at, and_(readings.c.taken_at_utc == at, readings.c.id > after)))
    return conn.execute(_filtered(q, **filters).limit(limit)).mappings().all()


def iter_export_rows(conn: Connection, **filters) -> Iterator[RowMapping]:
    """Rows for the CSV record, with the nameplate revision each reading used (streamed)."""
    q = _filtered(_reading_select(with_nameplate=True), **filters)
    result = conn.execution_options(stream_results=True, yield_per=2000).execute(q).mappings()
    yield from result


def nameplate_row(conn: Connection, reading_id: int) -> RowMapping | None:
    """A reading's stored inputs and result, taken_at, engine_version, tag and the nameplate revision it used."""
    return conn.execute(select(readings.c.inputs, readings.c.result, readings.c.taken_at, readings.c.engine_version, motors.c.tag,
                               *[motor_revisions.c[f] for f in REVISION_FIELDS])
                        .select_from(readings)
                        .join(motors, motors.c.id == readings.c.motor_id)
                        .join(motor_revisions, motor_revisions.c.id == readings.c.motor_revision_id)
                        .where(readings.c.id == reading_id)).mappings().first()


# Statements run on every submission are built once: composing one (and its cache key) costs more than
# running it on SQLite. Their values go in as bound parameters.
_BY_CLIENT_ID = select(readings.c.id, readings.c.content_hash).where(readings.c.client_id == bindparam("client_id"))
_MOTOR_OF = select(readings.c.motor_id).where(readings.c.id == bindparam("reading_id"))
_INSERT_READING = readings.insert()
_INSERT_FLAGS = reading_flags.insert()
_LOCK_HEAD = select(record_chain.c.length, record_chain.c.head).where(record_chain.c.id == 1).with_for_update()
_ADVANCE_HEAD = (record_chain.update().where(record_chain.c.id == 1)
                 .values(length=bindparam("new_length"), head=bindparam("new_head")))


def by_client_id(conn: Connection, client_id: str):
    """(id, content_hash) of the reading stored under ``client_id``, or None."""
    return conn.execute(_BY_CLIENT_ID, {"client_id": client_id}).first()


def motor_of(conn: Connection, reading_id: int) -> int | None:
    """The motor id of a reading, or None when there is no such reading."""
    return conn.execute(_MOTOR_OF, {"reading_id": reading_id}).scalar()


# --- writes --------------------------------------------------------------------
def insert_reading(conn: Connection, values: Mapping[str, Any], flags: Iterable[str] = ()) -> int:
    """Insert one reading row and its flag rows in the caller's transaction; returns its id.

    ``values`` are the columns of ``readings`` (``inputs`` and ``result`` as
    JSON text). Raises DuplicateError when ``client_id`` is taken or the
    superseded reading already has a successor; the caller's transaction is
    then unusable and must be rolled back.
    """
    try:
        rid = conn.execute(_INSERT_READING, dict(values)).inserted_primary_key[0]
    except IntegrityError:
        raise DuplicateError("a reading with this client_id, or superseding this reading, is stored",
                             "client_id") from None
    flags = sorted(set(flags))
    if flags:
        conn.execute(_INSERT_FLAGS, [{"reading_id": rid, "flag": f} for f in flags])
    return rid


def insert_review(conn: Connection, values: Mapping[str, Any]) -> int:
    """Append one review row (``values``: the columns of ``reviews``); returns its id."""
    return conn.execute(reviews.insert().values(**values)).inserted_primary_key[0]


# --- the record's chain -------------------------------------------------------------
def lock_chain_head(conn: Connection) -> tuple[int, str | None]:
    """(length, last fingerprint) of the record's chain, locked until the caller's transaction ends.

    PostgreSQL: ``SELECT ... FOR UPDATE`` on the one row, so a second writer waits here until the
    first commits and then reads the head the first wrote. SQLite: write transactions begin with
    ``BEGIN IMMEDIATE`` and hold the database's one write lock already (no FOR UPDATE in SQLite).
    """
    row = conn.execute(_LOCK_HEAD).first()
    if row is None:  # only a database whose migration was interrupted by hand could lack it
        raise RuntimeError("the record_chain row is missing: run `slipwise db upgrade`")
    return int(row.length), row.head


def advance_chain_head(conn: Connection, length: int, head: str) -> None:
    """Record the chain's new length and last fingerprint (after ``lock_chain_head`` in this transaction)."""
    conn.execute(_ADVANCE_HEAD, {"new_length": length, "new_head": head})


def chain_head(conn: Connection) -> tuple[int, str | None] | None:
    """(length, last fingerprint) as stored, without a lock; None when the row is missing."""
    row = conn.execute(select(record_chain.c.length, record_chain.c.head).where(record_chain.c.id == 1)).first()
    return None if row is None else (int(row.length), row.head)


def iter_chain_readings(conn: Connection) -> Iterator[RowMapping]:
    """Every reading row (all columns), by chain position (NULL positions first), streamed."""
    q = select(readings).order_by(readings.c.chain_position.is_not(None), readings.c.chain_position, readings.c.id)
    yield from conn.execution_options(stream_results=True, yield_per=2000).execute(q).mappings()


def chain_reviews(conn: Connection) -> list[RowMapping]:
    """Every review row (all columns), by chain position (NULL positions first)."""
    return conn.execute(select(reviews).order_by(reviews.c.chain_position.is_not(None), reviews.c.chain_position,
                                                 reviews.c.id)).mappings().all()
