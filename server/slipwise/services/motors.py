"""Register a motor, revise its nameplate, read motors back. Each call is one transaction."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Mapping

from sqlalchemy import RowMapping

from slipwise.store import audit
from slipwise.store import motors as store
from slipwise.store.database import Database
from slipwise.store.errors import ConflictError, DuplicateError, NotFoundError, ValidationError
from slipwise.store.motors import REVISION_FIELDS
from slipwise.store.schema import REVISION_NAMEPLATE_FIELDS
from slipwise.store.types import utcnow

from .interpretation import check_nameplate


@dataclass(frozen=True)
class MotorRecord:
    """A motor's current revision (``row``) and, when asked for, all its revisions (oldest first)."""

    row: RowMapping
    revisions: list[RowMapping] | None = None


def _actor_id(actor: Mapping[str, Any] | None) -> int | None:
    return actor["id"] if actor else None


def _motor(conn, motor_id: int) -> RowMapping:
    row = store.motor_row(conn, motor_id)
    if row is None:
        raise NotFoundError(f"no motor with id {motor_id}", "motor_id")
    return row


def provisional_bases(rows: list[Mapping[str, Any]], thresholds: Any = None) -> list[dict | None]:
    """The provisional basis of each motor row's nameplate revision (``slipwise.engine.basis``): what the
    page judges a reading with offline. Worked out once per distinct nameplate and thresholds (cached)."""
    from slipwise.engine.basis import provisional_bases as work_out
    return work_out([{f: row[f] for f in REVISION_NAMEPLATE_FIELDS} for row in rows], thresholds)


def list_motors(db: Database, site: str | None = None) -> list[RowMapping]:
    with db.read() as conn:
        return store.motor_rows(conn, site=site)


def get_motor(db: Database, motor_id: int, with_history: bool = False) -> MotorRecord:
    with db.read() as conn:
        row = _motor(conn, motor_id)
        return MotorRecord(row, store.revision_rows(conn, motor_id) if with_history else None)


def register_motor(db: Database, actor: Mapping[str, Any] | None, site: str, tag: str,
                   fields: Mapping[str, Any], thresholds: Any = None) -> RowMapping:
    """Register a motor at revision 1. ``fields``: validated nameplate fields plus location and description.

    Raises ValidationError for a nameplate the engine cannot use, ConflictError when the site has the tag.
    """
    check_nameplate(tag, fields, thresholds)
    now = utcnow()
    with db.write() as conn:
        sid = store.site_id(conn, site, create=True)
        try:
            mid = store.insert_motor(conn, sid, tag, _actor_id(actor), now)
        except DuplicateError:
            raise ConflictError(f"site {site} already has a motor tagged {tag}", "tag") from None
        store.insert_revision(conn, mid, 1, fields, _actor_id(actor), now)
        audit.record(conn, actor, "motor.create", "motor", mid, {"site": site, "tag": tag})
        return store.motor_row(conn, mid)


def revise_motor(db: Database, actor: Mapping[str, Any] | None, motor_id: int, fields: Mapping[str, Any],
                 expected_revision: int | None = None, identity: Mapping[str, Any] | None = None,
                 thresholds: Any = None) -> tuple[MotorRecord, bool]:
    """A new nameplate revision when ``fields`` differ from the current one. Returns (motor with history, changed).

    ``identity``: the site and tag the caller sent, if any; they cannot change
    (ValidationError). ``expected_revision``: the revision the caller edited;
    ConflictError when the motor has moved on since.
    """
    with db.read() as conn:
        current = _motor(conn, motor_id)
    for name in ("site", "tag"):
        if identity and name in identity and identity[name] != current[name]:
            raise ValidationError(f"{name} cannot change (it is {current[name]!r}); register a new motor instead",
                                  name)
    check_nameplate(current["tag"], fields, thresholds)
    with db.write() as conn:
        current = _motor(conn, motor_id)
        if expected_revision is not None and expected_revision != current["revision"]:
            raise ConflictError(f"motor {motor_id} is at revision {current['revision']}, not {expected_revision}; "
                                "reload it and apply the change again", "revision")
        new = {f: fields.get(f) for f in REVISION_FIELDS}
        changed = {f: [current[f], new[f]] for f in REVISION_FIELDS if current[f] != new[f]}
        if changed:
            try:
                store.insert_revision(conn, motor_id, current["revision"] + 1, new, _actor_id(actor), utcnow())
            except DuplicateError:
                raise ConflictError(f"motor {motor_id} was changed by someone else at the same time; reload it",
                                    "revision") from None
            audit.record(conn, actor, "motor.revise", "motor", motor_id,
                         {"revision": current["revision"] + 1, "changed": changed})
        return MotorRecord(_motor(conn, motor_id), store.revision_rows(conn, motor_id)), bool(changed)
