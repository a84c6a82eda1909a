"""Sites and motors. An edited nameplate is a new revision; old revisions stay."""

from __future__ import annotations

from typing import Any, Mapping

from sqlalchemy import Connection, func, select
from sqlalchemy.exc import IntegrityError

from . import audit
from .errors import ConflictError, NotFoundError
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


def _motor_dict(row) -> dict[str, Any]:
    d = {"id": row["id"], "site": row["site"], "tag": row["tag"]}
    for f in REVISION_FIELDS:
        d[f] = row[f]
    d.update(revision=row["revision"], revision_id=row["revision_id"], updated_at=row["updated_at"].isoformat(),
             updated_by=row["updated_by"])
    return d


def list_motors(conn: Connection, site: str | None = None) -> list[dict]:
    q = _motor_select().order_by(sites.c.name, motors.c.tag)
    if site:
        q = q.where(sites.c.name == site)
    return [_motor_dict(r) for r in conn.execute(q).mappings()]


def get_motor(conn: Connection, motor_id: int, with_history: bool = False) -> dict:
    row = conn.execute(_motor_select().where(motors.c.id == motor_id)).mappings().first()
    if row is None:
        raise NotFoundError(f"no motor with id {motor_id}", "motor_id")
    d = _motor_dict(row)
    if with_history:
        q = (select(motor_revisions, users.c.username.label("created_by_name"))
             .outerjoin(users, users.c.id == motor_revisions.c.created_by)
             .where(motor_revisions.c.motor_id == motor_id).order_by(motor_revisions.c.revision))
        d["revisions"] = [
            {"revision": r["revision"], "revision_id": r["id"], "created_at": r["created_at"].isoformat(),
             "created_by": r["created_by_name"], **{f: r[f] for f in REVISION_FIELDS}}
            for r in conn.execute(q).mappings()]
    return d



def create_motor(conn: Connection, actor: dict | None, site: str, tag: str, fields: Mapping[str, Any]) -> dict:
    """``fields``: validated nameplate fields plus location and description."""
    sid = site_id(conn, site, create=True)
    now = utcnow()
    try:
        with conn.begin_nested():
            mid = conn.execute(motors.insert().values(site_id=sid, tag=tag, created_at=now,
                                                      created_by=actor["id"] if actor else None)
                               ).inserted_primary_key[0]
    except IntegrityError:
        raise ConflictError(f"site {site} already has a motor tagged {tag}", "tag") from None
    conn.execute(motor_revisions.insert().values(motor_id=mid, revision=1, created_at=now,
                                                 created_by=actor["id"] if actor else None,
                                                 **{f: fields.get(f) for f in REVISION_FIELDS}))
    audit.record(conn, actor, "motor.create", "motor", mid, {"site": site, "tag": tag})
    return get_motor(conn, mid)


def revise_motor(conn: Connection, actor: dict | None, motor_id: int, fields: Mapping[str, Any],
                 expected_revision: int | None = None) -> tuple[dict, bool]:
    """Add a revision when the fields differ from the current one. Returns (motor, changed)."""
    current = get_motor(conn, motor_id)
    if expected_revision is not None and expected_revision != current["revision"]:
        raise ConflictError(f"motor {motor_id} is at revision {current['revision']}, not {expected_revision}; "
                            "reload it and apply the change again", "revision")
    new = {f: fields.get(f) for f in REVISION_FIELDS}
    changed = {f: [current[f], new[f]] for f in REVISION_FIELDS if current[f] != new[f]}
    if not changed:
        return current, False
    try:
        with conn.begin_nested():
            conn.execute(motor_revisions.insert().values(
                motor_id=motor_id, revision=current["revision"] + 1, created_at=utcnow(),
                created_by=actor["id"] if actor else None, **new))
    except IntegrityError:
        raise ConflictError(f"motor {motor_id} was changed by someone else at the same time; reload it",
                            "revision") from None
    audit.record(conn, actor, "motor.revise", "motor", motor_id,
                 {"revision": current["revision"] + 1, "changed": changed})
    return get_motor(conn, motor_id), True
