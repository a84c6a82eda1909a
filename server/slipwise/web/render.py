"""The API's JSON for what the services return: readings, reviews, motors, audit entries.

A reading's stored ``inputs`` and ``result`` are JSON text already; they are
spliced into the response without being parsed and written again, which keeps
the day's log fast. A result stored by an earlier engine is served as it was
given, with the columns added since shown as null (not computed by that engine;
the stored text itself is never rewritten).
"""

from __future__ import annotations

import json
from typing import Any, Iterable, Mapping

from slipwise.contract import ENGINE_VERSION, RESULT_COLUMNS
from slipwise.services.motors import MotorRecord
from slipwise.services.readings import ReadingRecord, Review
from slipwise.store.motors import REVISION_FIELDS


def _dumps(obj: Any) -> str:
    return json.dumps(obj, ensure_ascii=False, separators=(",", ":"))


def _review(row: Mapping[str, Any]) -> dict | None:
    if row["decision"] is None:
        return None
    return {"decision": row["decision"], "comment": row["comment"], "reviewer": row["reviewer"],
            "reviewed_at": row["reviewed_at"].isoformat()}


def reading_json(row: Mapping[str, Any]) -> str:
    """One reading row (with its latest review) as a JSON object text."""
    head = {"id": row["id"], "client_id": row["client_id"], "motor_id": row["motor_id"],
            "motor_revision": row["motor_revision"], "motor_revision_id": row["motor_revision_id"],
            "site": row["site"], "tag": row["tag"], "technician": row["technician"],
            "technician_name": row["technician_name"], "taken_at": row["taken_at"],
            "received_at": row["received_at"].isoformat(), "engine_version": row["engine_version"],
            "supersedes": row["supersedes_id"], "superseded_by": row["superseded_by"],
            "review": _review(row)}
    return _dumps(head)[:-1] + ',"inputs":' + row["inputs"] + ',"result":' + served_result_text(row) + "}"


def served_result_text(row: Mapping[str, Any]) -> str:
    """The stored result as the API serves it: every column of this release, null where the engine
    that made the result did not compute it."""
    text = row["result"]
    if row["engine_version"] == ENGINE_VERSION:
        return text
    result = json.loads(text)
    missing = [c for c in RESULT_COLUMNS if c not in result]
    if not missing:
        return text
    return _dumps({**result, **{c: None for c in missing}})


def reading_record_json(record: ReadingRecord) -> str:
    """One reading with its whole review history (``reviews``, oldest first)."""
    return reading_json(record.row)[:-1] + ',"reviews":' + _dumps([_review(r) for r in record.reviews]) + "}"


def day_log_json(rows: Iterable[Mapping[str, Any]]) -> str:
    """``{"count": n, "readings": [...]}``."""
    parts = [reading_json(r) for r in rows]
    return '{"count":' + str(len(parts)) + ',"readings":[' + ",".join(parts) + "]}"


def review_json(review: Review) -> str:
    head = {"id": review.id, "reading_id": review.reading_id, "decision": review.decision,
            "comment": review.comment, "reviewer": review.reviewer, "reviewed_at": review.reviewed_at.isoformat()}
    return _dumps(head)[:-1] + ',"reading":' + reading_record_json(review.reading) + "}"


def motor_dict(row: Mapping[str, Any], basis: Mapping[str, Any] | None = None) -> dict[str, Any]:
    """A motor's current revision: id, site, tag, the revision fields, revision, revision_id, updated_at/by,
    and the revision's provisional basis (``services.motors.provisional_bases``)."""
    d = {"id": row["id"], "site": row["site"], "tag": row["tag"]}
    for f in REVISION_FIELDS:
        d[f] = row[f]
    d.update(revision=row["revision"], revision_id=row["revision_id"], updated_at=row["updated_at"].isoformat(),
             updated_by=row["updated_by"], provisional_basis=basis)
    return d


def motor_record_dict(record: MotorRecord, basis: Mapping[str, Any] | None = None) -> dict[str, Any]:
    """A motor, with ``revisions`` (oldest first) when the record holds them."""
    d = motor_dict(record.row, basis)
    if record.revisions is not None:
        d["revisions"] = [
            {"revision": r["revision"], "revision_id": r["id"], "created_at": r["created_at"].isoformat(),
             "created_by": r["created_by_name"], **{f: r[f] for f in REVISION_FIELDS}}
            for r in record.revisions]
    return d


def audit_entry_dict(row: Mapping[str, Any]) -> dict[str, Any]:
    return {"id": row["id"], "at": row["at"].isoformat(), "actor": row["actor"], "action": row["action"],
            "object_type": row["object_type"], "object_id": row["object_id"], "detail": json.loads(row["detail"])}
