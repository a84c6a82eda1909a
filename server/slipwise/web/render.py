"""The API's JSON for what the services return: readings, reviews, motors, audit entries.

A reading's stored ``inputs`` and ``result`` are JSON text already; they are
spliced into the response without being parsed and written again, which keeps
the day's log fast. A result stored by an earlier engine is served as it was
given, with the columns added since shown as null (not computed by that engine;
the stored text itself is never rewritten).
"""

from __future__ import annotations

import math

import json
from json.encoder import encode_basestring as _quote
from typing import Any, Iterable, Iterator, Mapping, Sequence

from slipwise.contract import ENGINE_VERSION, READING_FIELDS, RESULT_COLUMNS
from slipwise.services.motors import MotorRecord
from slipwise.services.readings import ReadingRecord, Review
from slipwise.store.motors import REVISION_FIELDS


def _dumps(obj: Any) -> str:
    return json.dumps(obj, ensure_ascii=False, separators=(",", ":"))


def _review(row: Mapping[str, Any], fingerprint_key: str = "fingerprint") -> dict | None:
    if row["decision"] is None:
        return None
    return {"decision": row["decision"], "comment": row["comment"], "reviewer": row["reviewer"],
            "reviewer_name": row.get("reviewer_name") or None, "reviewed_at": row["reviewed_at"].isoformat(),
            "fingerprint": row[fingerprint_key]}


def _value(x: Any) -> str:
    """One JSON value as ``_dumps`` writes it; strings, whole numbers and null without the encoder's set-up
    (the same C string escaper ``json.dumps(ensure_ascii=False)`` uses)."""
    if x is None:
        return "null"
    kind = type(x)
    if kind is str:
        return _quote(x)
    if kind is int:
        return int.__repr__(x)
    return _dumps(x)


def _latest_review_text(row: Mapping[str, Any]) -> str:
    """``_dumps(_review(row, "review_fingerprint"))``, written directly (the day's log writes one per reading)."""
    if row["decision"] is None:
        return "null"
    return (f'{{"decision":{_value(row["decision"])},"comment":{_value(row["comment"])},'
            f'"reviewer":{_value(row["reviewer"])},"reviewer_name":{_value(row.get("reviewer_name") or None)},'
            f'"reviewed_at":{_value(row["reviewed_at"].isoformat())},'
            f'"fingerprint":{_value(row["review_fingerprint"])}}}')


def reading_json(row: Mapping[str, Any]) -> str:
    """One reading row (with its latest review) as a JSON object text.

    Keys in this order: id, client_id, motor_id, motor_revision, motor_revision_id, site, tag, technician,
    technician_name, taken_at, received_at, engine_version, supersedes, superseded_by, fingerprint, review,
    inputs, result. Written as one format string (the day's log writes thousands): the same text as
    ``_dumps`` of the mapping, which ``tests/service/test_day_log_json.py`` checks.
    """
    v = _value
    return (f'{{"id":{v(row["id"])},"client_id":{v(row["client_id"])},"motor_id":{v(row["motor_id"])},'
            f'"motor_revision":{v(row["motor_revision"])},"motor_revision_id":{v(row["motor_revision_id"])},'
            f'"site":{v(row["site"])},"tag":{v(row["tag"])},"technician":{v(row["technician"])},'
            f'"technician_name":{v(row["technician_name"])},"taken_at":{v(row["taken_at"])},'
            f'"received_at":{v(row["received_at"].isoformat())},"engine_version":{v(row["engine_version"])},'
            f'"supersedes":{v(row["supersedes_id"])},"superseded_by":{v(row["superseded_by"])},'
            f'"fingerprint":{v(row["fingerprint"])},"review":{_latest_review_text(row)},'
            f'"inputs":{served_inputs_text(row)},"result":{served_result_text(row)}}}')


def served_inputs_text(row: Mapping[str, Any]) -> str:
    """The stored inputs as the API serves them: every reading field of this release, null where a reading
    stored before the field existed (the sheet's tests, engine 1.2.0) has none."""
    text = row["inputs"]
    if row["engine_version"] == ENGINE_VERSION:
        return text
    inputs = json.loads(text)
    missing = [f for f in READING_FIELDS if f not in inputs]
    return _dumps({**inputs, **{f: None for f in missing}}) if missing else text


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
    return "".join(day_log_chunks(list(rows)))


def day_log_chunks(rows: Sequence[Mapping[str, Any]], per_chunk: int = 500) -> Iterator[str]:
    """The text of :func:`day_log_json` in pieces of ``per_chunk`` readings, for a streamed response: a day of
    thousands of full records (tens of MB) is never copied whole into one string and again into its bytes."""
    yield '{"count":' + str(len(rows)) + ',"readings":['
    for start in range(0, len(rows), per_chunk):
        text = ",".join([reading_json(r) for r in rows[start:start + per_chunk]])
        yield ("," + text) if start else text
    yield "]}"


LISTING_KEYS = ("id", "motor_id", "site", "tag", "technician", "technician_name", "taken_at", "superseded_by",
                "review_decision", "verdict", "load_pct")


def listing_json(rows: Iterable[Mapping[str, Any]], next_url: str | None) -> str:
    """``{"count": n, "readings": [...], "next": url or null}``: the day's listing, a few keys per reading.

    ``flags`` is the stored result's own JSON text of the list, spliced in as it is.
    """
    parts = [_dumps({k: r[k] for k in LISTING_KEYS})[:-1] + ',"flags":' + (r["flags"] or "[]") + "}" for r in rows]
    return ('{"count":' + str(len(parts)) + ',"readings":[' + ",".join(parts) + '],"next":' + _dumps(next_url)
            + "}")


def review_json(review: Review) -> str:
    head = {"id": review.id, "reading_id": review.reading_id, "decision": review.decision,
            "comment": review.comment, "reviewer": review.reviewer, "reviewed_at": review.reviewed_at.isoformat(),
            "fingerprint": review.fingerprint}
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


_CURVE_ARRAYS = ("speed_rpm", "torque_measured_v_nm", "torque_rated_v_nm", "load_torque_nm")
_CURVE_NUMBERS = ("operating_speed_rpm", "operating_torque_nm", "breakdown_speed_rpm", "breakdown_torque_nm",
                  "rated_torque_nm", "sync_speed_rpm", "measured_voltage_v", "rated_voltage_v")


def _num(x, digits: int):
    if x is None:
        return None
    x = float(x)
    return round(x, digits) if math.isfinite(x) else None


def curve_json(curve: Mapping[str, Any], result: Mapping[str, Any], measured_speed_rpm: float) -> str:
    """The torque-speed curves of a stored reading as numbers (N·m and rpm, 3 decimals; null where undefined),
    with the measured speed and the stored result's ``operating_side`` and ``flags`` so the page's caption
    agrees with the findings."""
    out: dict[str, Any] = {k: [_num(v, 3) for v in curve[k]] for k in _CURVE_ARRAYS}
    out.update({k: _num(curve.get(k), 3) for k in _CURVE_NUMBERS})
    out["driven_load"] = curve.get("driven_load")
    out["operating_side"] = result.get("operating_side") or None
    out["measured_speed_rpm"] = _num(measured_speed_rpm, 3)
    out["flags"] = list(result.get("flags") or [])
    return _dumps(out)
