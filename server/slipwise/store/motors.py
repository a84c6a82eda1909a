"""Sites and motors. An edited nameplate is a new revision; old revisions stay.

Rows in, rows out: the rules (a nameplate the engine can use, a revision only
when something changed, optimistic locking) are in ``slipwise.services.motors``.
"""

from __future__ import annotations

from datetime import datetime
from typing import Any, Mapping

from sqlalchemy import Connection, RowMapping, bindparam, func, select
from sqlalchemy.exc import IntegrityError

from .errors import DuplicateError
from .schema import REVISION_NAMEPLATE_FIELDS, motor_revisions, motors, sites, users
from .types import utcnow

REVISION_FIELDS = REVISION_NAMEPLATE_FIELDS + ("location", "description")


def site_id(conn: Connection, name: str, create: bool = False) -> int | None:
    row = conn.execute(select(sites.c.id).where(sites.c.name == name)).first()
    if row:
        return row[0]
    if not create:
        return None
    try:
        with conn.begin_nested():
            return conn.execute(sites.insert().values(name=name, created_at=utcnow())).inserted_primary_key[0]
    except IntegrityError:
        return conn.execute(select(sites.c.id).where(sites.c.name == name)).scalar_one()



def _latest_revision_ids():
    return (select(motor_revisions.c.motor_id, func.max(motor_revisions.c.revision).label("revision"))
            .group_by(motor_revisions.c.motor_id).subquery())


def _motor_select():
    latest = _latest_revision_ids()
    return (select(motors.c.id, motors.c.tag, sites.c.name.label("site"),
                   motor_revisions.c.id.label("revision_id"), motor_revisions.c.revision,
                   *[motor_revisions.c[f] for f in REVISION_FIELDS],
                   motor_revisions.c.created_at.label("updated_at"), users.c.username.label("updated_by"))
            .select_from(motors)
            .join(sites, sites.c.id == motors.c.site_id)
            .join(latest, latest.c.motor_id == motors.c.id)
            .join(motor_revisions, (motor_revisions.c.motor_id == motors.c.id)
                  & (motor_revisions.c.revision == latest.c.revision))
            .outerjoin(users, users.c.id == motor_revisions.c.created_by))


def motor_rows(conn: Connection, site: str | None = None) -> list[RowMapping]:
    """Every motor with its current revision, by site and tag."""
    q = _motor_select().order_by(sites.c.name, motors.c.tag)
    if site:
        q = q.where(sites.c.name == site)
    return conn.execute(q).mappings().all()


def motor_row(conn: Connection, motor_id: int) -> RowMapping | None:
    """One motor with its current revision (id, tag, site, revision_id, revision, fields, updated_at/by)."""
    return conn.execute(_motor_select().where(motors.c.id == motor_id)).mappings().first()


def revision_rows(conn: Connection, motor_id: int) -> list[RowMapping]:
    """Every revision of a motor, oldest first, with ``created_by_name``."""
    q = (select(motor_revisions, users.c.username.label("created_by_name"))
         .outerjoin(users, users.c.id == motor_revisions.c.created_by)
         .where(motor_revisions.c.motor_id == motor_id).order_by(motor_revisions.c.revision))
    return conn.execute(q).mappings().all()


# built once (every submission runs it): composing a select costs more than running it on SQLite
_LATEST_REVISION = (select(motor_revisions, motors.c.tag.label("motor_tag"))
                    .join(motors, motors.c.id == motor_revisions.c.motor_id)
                    .where(motor_revisions.c.motor_id == bindparam("motor_id"))
                    .order_by(motor_revisions.c.revision.desc()).limit(1))


def latest_revision(conn: Connection, motor_id: int) -> RowMapping | None:
    """The current revision row of a motor plus ``motor_tag``; None when there is no such motor."""
    return conn.execute(_LATEST_REVISION, {"motor_id": motor_id}).mappings().first()


def insert_motor(conn: Connection, site: int, tag: str, created_by: int | None, created_at: datetime) -> int:
    """Insert a motor row; DuplicateError when the site already has the tag (the transaction stays usable)."""
    try:
        with conn.begin_nested():
            return conn.execute(motors.insert().values(site_id=site, tag=tag, created_at=created_at,
                                                       created_by=created_by)).inserted_primary_key[0]
    except IntegrityError:
        raise DuplicateError(f"the site already has a motor tagged {tag}", "tag") from None


def insert_revision(conn: Connection, motor_id: int, revision: int, fields: Mapping[str, Any],
                    created_by: int | None, created_at: datetime) -> int:
    """Insert revision ``revision`` of a motor; DuplicateError when that number exists already."""
    try:
        with conn.begin_nested():
            return conn.execute(motor_revisions.insert().values(
                motor_id=motor_id, revision=revision, created_at=created_at, created_by=created_by,
                **{f: fields.get(f) for f in REVISION_FIELDS})).inserted_primary_key[0]
    except IntegrityError:
        raise DuplicateError(f"motor {motor_id} already has revision {revision}", "revision") from None
