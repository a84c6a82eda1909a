"""GET /api/v1/export.csv: the commissioning record, one row per reading.

Column order (stable; new columns are only ever appended):

1. ``reading_id, client_id, site, tag, location, description, motor_revision``
2. the nameplate fields of the engine's contract except ``tag``, in contract
   order; a name that is also a result column gets the prefix ``nameplate_``
   (``nameplate_poles``, ``nameplate_breakdown_torque_pct``)
3. the reading fields of the contract, in contract order (``taken_at`` last)
4. every result column of the contract, in contract order, written by the
   one commissioning-record writer (:mod:`slipwise.engine.records`, shared
   with ``slipwise analyze``): ``flags`` the codes joined by ``;``,
   ``findings`` the finding texts joined by `` | ``, numbers with the
   decimals of ``RESULT_DECIMALS``
5. ``cautions, technician, technician_name, received_at, supersedes,
   superseded_by, review_decision, review_comment, reviewer, reviewed_at``
   (the latest review)
6. ``reviewer_name`` (the latest reviewer's full name) and ``review_history``:
   every review, oldest first, as ``<reviewed_at UTC> <decision> by <full name>
   (<user name>)[: <comment>]`` joined by `` | `` — a reject and its comment stay
   in the record after a later accept

Filters: ``date`` (one day) or ``date_from``/``date_to`` (inclusive), ``site``,
``technician``, ``flag`` — the day log's own filters. An empty range gives the header row only.

UTF-8, a header row, RFC 4180 quoting, ``\\r\\n`` line ends. Empty cell = not
given / not applicable. Numbers are written as numbers; the nameplate and
reading numbers as they were entered. A text cell starting
with ``=``, ``+``, ``-``, ``@``, tab or carriage return gets a leading ``'``
so a spreadsheet shows it as text instead of running it as a formula (OWASP,
"CSV Injection").
"""

from __future__ import annotations

import csv
import io
import json
from typing import Any, Iterable, Iterator, Mapping

from flask import Blueprint, Response

from slipwise.contract import NAMEPLATE_FIELDS, READING_FIELDS, RESULT_COLUMNS, TEST_FIELDS
from slipwise.engine.records import cautions_cell, neutralise, result_cells
from slipwise.services import readings as services

from .auth import requires
from .params import date_param, flag_param, query, text_param
from .state import state

bp = Blueprint("export", __name__)

_NAMEPLATE = tuple(f for f in NAMEPLATE_FIELDS if f != "tag")
_NAMEPLATE_HEADERS = tuple(("nameplate_" + f) if f in RESULT_COLUMNS else f for f in _NAMEPLATE)
_READING_NUMBERS = tuple(f for f in READING_FIELDS if f != "taken_at" and f not in TEST_FIELDS)
_TAIL = ("cautions", "technician", "technician_name", "received_at", "supersedes", "superseded_by",
         "review_decision", "review_comment", "reviewer", "reviewed_at", "reviewer_name", "review_history")

EXPORT_COLUMNS: tuple[str, ...] = (("reading_id", "client_id", "site", "tag", "location", "description",
                                    "motor_revision") + _NAMEPLATE_HEADERS + _READING_NUMBERS + ("taken_at",)
                                   + TEST_FIELDS + RESULT_COLUMNS + _TAIL)
_ROWS_PER_CHUNK = 1000
__all__ = ["EXPORT_COLUMNS", "export_row", "csv_chunks", "neutralise"]

_ENGINE_AT = EXPORT_COLUMNS.index("engine_version")
# cells outside the result part that can hold free text (the others are numbers, ids or ISO times)
_TEXT_AT = tuple(EXPORT_COLUMNS.index(c) for c in (
    "site", "tag", "location", "description", "instruments", "notes", "technician", "technician_name", "review_comment",
    "reviewer", "reviewer_name", "review_history"))
REVIEW_SEPARATOR = " | "


def review_history_cell(history: Iterable[Mapping[str, Any]]) -> str | None:
    """Every review of a reading, oldest first, in one cell (None when there is none)."""
    parts = []
    for rv in history:
        who = f"{rv['reviewer_name']} ({rv['reviewer']})" if rv["reviewer_name"] else rv["reviewer"]
        at = rv["reviewed_at"].isoformat()
        parts.append(f"{at} {rv['decision']} by {who}" + (f": {rv['comment']}" if rv["comment"] else ""))
    return REVIEW_SEPARATOR.join(parts) or None


def export_row(row: Mapping[str, Any], history: Iterable[Mapping[str, Any]] = ()) -> list[Any]:
    """One CSV row; ``row`` is a mapping from the store's export query, ``history`` its reviews oldest first."""
    loads = json.loads
    iget = loads(row["inputs"]).get
    result = loads(row["result"])
    reviewed = row["reviewed_at"]
    cells = [row["id"], row["client_id"], row["site"], row["tag"], row["location"], row["description"],
             row["motor_revision"], *[row[f] for f in _NAMEPLATE], *[iget(f) for f in _READING_NUMBERS],
             row["taken_at"], *[iget(f) for f in TEST_FIELDS], *result_cells(result), cautions_cell(result), row["technician"],
             row["technician_name"], row["received_at"].isoformat(), row["supersedes_id"], row["superseded_by"],
             row["decision"], row["comment"], row["reviewer"], reviewed.isoformat() if reviewed else None,
             row["reviewer_name"] or None, review_history_cell(history)]
    cells[_ENGINE_AT] = neutralise(row["engine_version"])  # the version that interpreted this row
    for i in _TEXT_AT:
        cells[i] = neutralise(cells[i])
    return cells


def csv_chunks(records: Iterable[tuple[Mapping[str, Any], Iterable[Mapping[str, Any]]]]) -> Iterator[str]:
    """The CSV text in chunks; ``records`` are (row, its reviews oldest first)."""
    buf = io.StringIO()
    writer = csv.writer(buf, lineterminator="\r\n")
    writer.writerow(EXPORT_COLUMNS)
    batch = []
    for row, history in records:
        batch.append(export_row(row, history))
        if len(batch) == _ROWS_PER_CHUNK:
            writer.writerows(batch)
            batch = []
            yield buf.getvalue()
            buf.seek(0)
            buf.truncate()
    writer.writerows(batch)
    yield buf.getvalue()


@bp.get("/export.csv")
@requires("supervisor")
def export_csv():
    args = query(("date", "date_from", "date_to", "site", "technician", "flag"))
    filters = dict(date=date_param(args), date_from=date_param(args, "date_from"),
                   date_to=date_param(args, "date_to"), site=text_param(args, "site"),
                   technician=text_param(args, "technician", 64), flag=flag_param(args))
    # generators: the query runs, and the rows are written, while the response streams
    chunks = csv_chunks(services.export_records(state().db, **filters))

    span = filters["date"] or "_".join(d for d in (filters["date_from"], filters["date_to"]) if d)
    name = "slipwise-record" + (f"-{span}" if span else "") + ".csv"
    resp = Response(chunks, mimetype="text/csv")
    resp.headers["Content-Type"] = "text/csv; charset=utf-8"
    resp.headers["Content-Disposition"] = f'attachment; filename="{name}"'
    return resp
