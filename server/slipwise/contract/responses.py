"""The API's response models (pydantic v2), built from the declaration; their JSON schemas are the OpenAPI
document's response schemas.

The engine's result has one field per :data:`RESULT_COLUMNS` entry, typed by the declaration's column sets
(text, integer, else a number; all nullable), so a column added there reaches the document with no edit here.
The models forbid keys they do not name: ``tests/service/test_response_models.py`` validates every route's real
answer against its documented model, and the fuzzing's schema-conformance check does the same over HTTP, so
the document cannot drift from what the handlers return.
"""

from __future__ import annotations

from datetime import datetime
from typing import Any, Literal, Optional

from pydantic import BaseModel, ConfigDict, Field, create_model
from pydantic.json_schema import models_json_schema

from .fields import (CHOICE_FIELDS, ENERGY_FIELDS, FLAG_CODES, INTEGER_RESULT_COLUMNS, NAMEPLATE_FIELDS, NUMBER_FIELDS,
                     READING_FIELDS, RESULT_COLUMNS, REVIEW_DECISIONS, TAKEN_AT_HELP, TEXT_FIELDS,
                     TEXT_RESULT_COLUMNS, VERDICT_WORDS)

REF_TEMPLATE = "#/components/schemas/{model}"


class _Response(BaseModel):
    # strict: an answer is what the handler wrote, not something pydantic could coerce into shape
    model_config = ConfigDict(extra="forbid", strict=True)


def _declared(name: str) -> tuple[Any, Any]:
    """A nameplate or reading field as a stored record shows it: the declared type, null where not given
    (the sheet's tests, engine 1.2.0, are null in readings stored before them)."""
    kind, text = _declared_type(name)
    return Optional[kind], Field(description=text)


def _declared_type(name: str) -> tuple[Any, str]:
    if name in TEXT_FIELDS:
        return str, TEXT_FIELDS[name].help
    if name in CHOICE_FIELDS:
        spec = CHOICE_FIELDS[name]
        kind: Any = Literal[tuple(spec.choices)]  # type: ignore[valid-type]
        text = spec.help
    else:
        spec = NUMBER_FIELDS[name]
        kind = int if spec.integer else float
        text = (spec.help + "; " if spec.help else "") + f"[{spec.unit or '-'}]"
    return kind, text


def _fields(names) -> dict:
    return {name: _declared(name) for name in names}


# --------------------------------------------------------------------------- the engine's result
class Finding(_Response):
    flag: Optional[str] = Field(description="the flag code the words belong to")
    text: str
    caution: Optional[str] = Field(description="what not to do until the cause is found, where one applies")
    state: Optional[Literal["beyond", "at_limit", "note"]] = Field(
        None, description="beyond: the whole band is past the threshold (a flag); at_limit: the band straddles it "
        "(absent from results stored by engine 1.0.0); note: advice that is not a flag and leaves the verdict as "
        "it is (right_size_candidate, since engine 1.2.0)")


FlagCode = Literal[FLAG_CODES]  # type: ignore[valid-type]


def _column(name: str) -> tuple[Any, Any]:
    if name == "flags":
        return list[FlagCode], Field(description="flag codes raised by this reading")
    if name == "findings":
        return list[Finding], Field(description="the words of each flag: finding and caution")
    kind = str if name in TEXT_RESULT_COLUMNS else int if name in INTEGER_RESULT_COLUMNS else float
    return Optional[kind], ...


Result = create_model(
    "Result", __base__=_Response, __doc__="The engine's result: the contract's columns (units in the names); null "
    "where a value does not apply or could not be estimated.", **{c: _column(c) for c in RESULT_COLUMNS})


# --------------------------------------------------------------------------- readings and reviews
FINGERPRINT_HELP = ("SHA-256 (64 hex digits) of this entry's stored content and the previous entry's fingerprint: "
                    "the record's chain, checked by `slipwise verify`; null only for an entry written outside slipwise")

class Review(_Response):
    decision: Literal[REVIEW_DECISIONS]  # type: ignore[valid-type]
    comment: str
    reviewer: str
    reviewer_name: Optional[str] = Field(None, description="the reviewer's full name")
    reviewed_at: datetime
    fingerprint: Optional[str] = Field(description=FINGERPRINT_HELP)


def _added_later(name: str) -> tuple[Any, Any]:
    """A reading field added after release 2 (issue 11's energy inputs): absent from readings stored before."""
    kind, field = _declared(name)
    return kind, Field(None, description=field.description + "; absent from readings stored before engine 1.2.0")


ReadingInputs = create_model(
    "ReadingInputs", __base__=_Response, __doc__="the reading fields as interpreted",
    **_fields(f for f in READING_FIELDS if f != "taken_at" and f not in ENERGY_FIELDS),
    **{f: _added_later(f) for f in ENERGY_FIELDS},
    taken_at=(Optional[str], Field(description=TAKEN_AT_HELP)))


class Reading(_Response):
    id: int
    client_id: str = Field(json_schema_extra={"format": "uuid"})
    motor_id: int
    motor_revision: int
    motor_revision_id: int
    site: str
    tag: str
    technician: str
    technician_name: str
    taken_at: str
    received_at: datetime
    engine_version: str
    supersedes: Optional[int]
    superseded_by: Optional[int]
    fingerprint: Optional[str] = Field(description=FINGERPRINT_HELP)
    review: Optional[Review] = Field(description="the latest review; null before any")
    reviews: list[Review] = Field(None, description="every review, oldest first (GET /readings/{id} only)")
    inputs: ReadingInputs
    result: Result  # type: ignore[valid-type]


class TorqueSpeedCurve(_Response):
    """The torque-speed picture as numbers: the motor's shaft torque at the measured and at rated voltage
    and the driven load's torque, over speed from standstill to synchronous; null where undefined."""
    speed_rpm: list[Optional[float]]
    torque_measured_v_nm: list[Optional[float]]
    torque_rated_v_nm: list[Optional[float]]
    load_torque_nm: list[Optional[float]]
    operating_speed_rpm: Optional[float]
    operating_torque_nm: Optional[float]
    breakdown_speed_rpm: Optional[float]
    breakdown_torque_nm: Optional[float]
    rated_torque_nm: Optional[float]
    sync_speed_rpm: Optional[float]
    measured_voltage_v: Optional[float]
    rated_voltage_v: Optional[float]
    driven_load: Optional[str]
    operating_side: Optional[str] = Field(description="stable or unstable side of breakdown; null without a point")
    measured_speed_rpm: Optional[float]
    flags: list[str] = Field(description="the stored result's flag codes")


class ReadingList(_Response):
    count: int
    readings: list[Reading]


class ListedReading(_Response):
    """One row of the day's listing: what the table of the day shows; the rest is GET /readings/{id}."""
    id: int
    motor_id: int
    site: str
    tag: str
    technician: str
    technician_name: str
    taken_at: str
    superseded_by: Optional[int]
    review_decision: Optional[Literal[REVIEW_DECISIONS]] = Field(  # type: ignore[valid-type]
        description="the latest review's decision; null before any")
    verdict: Optional[Literal[VERDICT_WORDS]] = Field(  # type: ignore[valid-type]
        description="the result's verdict (null for results stored by engine 1.0.0)")
    load_pct: Optional[float] = Field(description="the result's load_pct [%]")
    flags: list[FlagCode] = Field(description="the result's flag codes")  # type: ignore[valid-type]


class ReadingListing(_Response):
    count: int = Field(description="readings on this page")
    readings: list[ListedReading]
    next: Optional[str] = Field(description="relative URL of the next page; null on the last page")


class ReviewCreated(_Response):
    id: int
    reading_id: int
    decision: Literal[REVIEW_DECISIONS]  # type: ignore[valid-type]
    comment: str
    reviewer: str
    reviewed_at: datetime
    fingerprint: Optional[str] = Field(description=FINGERPRINT_HELP)
    reading: Reading


# --------------------------------------------------------------------------- motors
_NAMEPLATE = _fields(f for f in NAMEPLATE_FIELDS if f != "tag")
_PLACE = {"location": (str, ...), "description": (str, ...)}



class CircuitParameters(_Response):
    """The fitted per-phase equivalent circuit (equivalent star, referred to the stator; physics.circuit)."""

    r1_ohm: float
    x1_ohm: float
    r2_ohm: float = Field(description="rotor resistance at zero slip [ohm]")
    x2_ohm: float
    xm_ohm: float
    rc_ohm: Optional[float] = Field(description="core-loss resistance [ohm]; null where no core loss is modelled")
    r2_rise: float = Field(description="deep-bar rise k of R2(s) = R2 (1 + k s^2) [-]")
    rated_frequency_hz: float
    poles: float


class ProvisionalBasis(_Response):
    """What the page needs to judge a reading of this motor while offline, worked out by the engine once per
    nameplate revision (slipwise.engine.basis): the rated point as derived, the fitted circuit and its no-load
    current, the rated loss split, the breakdown torque band, the starting torques, the thresholds in force and
    the reading fields' defaults. The page's rules (static/js/verdict.js) are checked against the engine's."""

    version: int = Field(description="layout of this object")
    engine_version: str
    poles: float
    sync_rated_rpm: float
    rated_slip: float = Field(description="[pu]")
    rated_speed_rpm: float
    rated_kw: float
    rated_voltage_v: float
    rated_current_a: float
    rated_frequency_hz: float
    efficiency_used: float = Field(description="rated efficiency, given or assumed [pu]")
    supply: str
    design: str
    driven_load: str
    is_nema: bool
    service_factor: float
    service_factor_given: bool
    no_load_current_a: float = Field(description="the fitted circuit's no-load current at rated voltage and frequency")
    saturation_exponents: dict[str, list[float]] = Field(
        description="k of I0 / I0r = flux^k (central, low, high) above and below rated flux")
    losses_w: dict[str, float] = Field(description="rated-point core, friction_windage and stator losses [W]")
    fixed_loss_band: list[float] = Field(description="multipliers bounding the fixed losses [-]")
    breakdown_torque_pct: float = Field(description="breakdown torque at rated voltage [% of rated torque]")
    breakdown_torque_low_pct: float = Field(description="its lowest credible value [% of rated torque]")
    circuit: CircuitParameters
    locked_rotor_torque_pct: float
    breakaway_share: float = Field(description="breakaway torque of the driven load over its running torque [-]")
    needs_breakaway: bool
    thresholds: dict[str, float]
    reading_defaults: dict[str, float]


Motor = create_model(
    "Motor", __base__=_Response, __doc__="a motor with its current nameplate revision",
    id=(int, ...), site=(str, ...), tag=(str, ...), **_PLACE, **_NAMEPLATE,
    revision=(int, ...), revision_id=(int, ...), updated_at=(datetime, ...), updated_by=(Optional[str], ...),
    provisional_basis=(Optional[ProvisionalBasis], Field(
        description="for judging readings offline (the page caches it with the motor list); null where the "
                    "engine cannot use the nameplate")))
MotorRevision = create_model(
    "MotorRevision", __base__=_Response, __doc__="one nameplate revision, as written then",
    **_PLACE, **_NAMEPLATE, revision=(int, ...), revision_id=(int, ...), created_at=(datetime, ...),
    created_by=(Optional[str], ...))
MotorDetail = create_model(
    "MotorDetail", __base__=Motor, __doc__="a motor with every nameplate revision, oldest first",
    revisions=(list[MotorRevision], ...))  # type: ignore[valid-type]


class MotorList(_Response):
    count: int
    motors: list[Motor]  # type: ignore[valid-type]


# --------------------------------------------------------------------------- accounts, health, audit, errors
class User(_Response):
    id: int
    username: str
    full_name: str
    role: Literal["technician", "supervisor"]
    active: bool
    created_at: datetime


class Session(_Response):
    user: User
    csrf_token: Optional[str] = Field(description="send as X-CSRF-Token on writes (null with a bearer token)")
    expires_at: datetime = Field(None, description="when the session ends (cookie sessions)")
    thresholds: dict[str, float] = Field(description="flag thresholds in force (see slipwise.engine.Thresholds)")


class Health(_Response):
    status: Literal["ok", "unavailable"]
    engine_version: str
    schema_version: int = Field(None, description="absent when the database is down")
    database: Literal["sqlite", "postgresql"] = Field(None, description="absent when the database is down")


class AuditEntry(_Response):
    id: int
    at: datetime
    actor: str
    action: str
    object_type: str
    object_id: Optional[int]
    detail: dict[str, Any]


class AuditList(_Response):
    count: int
    entries: list[AuditEntry]


class ErrorDetail(_Response):
    code: str = Field(description="machine-readable, e.g. invalid_input, not_found")
    message: str = Field(description="for people: names the field and allowed range")
    field: Optional[str]


class Error(_Response):
    error: ErrorDetail


# --------------------------------------------------------------------------- issue 11: history and sites
class SiteSettings(_Response):
    operating_hours_per_year: Optional[float] = Field(description="default running hours a year [h]; null: none")
    energy_price_per_kwh: Optional[float] = Field(description="default energy price [currency/kWh]; null: none")
    visit_interval_months: int = Field(description="a visit older than this is overdue [months]")
    set_at: Optional[datetime] = Field(description="when these settings were written; null: never set (defaults)")
    set_by: Optional[str]


class Site(_Response):
    id: int
    name: str
    settings: SiteSettings


class SiteList(_Response):
    count: int
    sites: list[Site]


class Change(_Response):
    code: Literal["insulation_falling", "polarization_index_falling", "winding_unbalance_rising",
                  "vibration_rising", "load_drifting", "current_unbalance_rising"]
    text: str
    caution: str


class Visit(_Response):
    """One reading of the motor with its key results (null where its engine gave none or nothing was measured)."""
    reading_id: int
    taken_at: str
    taken_date: str
    engine_version: str
    technician: str
    review: Optional[Literal[REVIEW_DECISIONS]] = Field(  # type: ignore[valid-type]
        description="the latest review decision; null before any")
    supersedes: Optional[int]
    superseded_by: Optional[int]
    baseline: bool = Field(description="the first accepted reading not superseded: what later visits are compared with")
    load_pct: Optional[float]
    load_low_pct: Optional[float]
    load_high_pct: Optional[float]
    load_state: Optional[str]
    current_unbalance_pct: Optional[float]
    voltage_unbalance_pct: Optional[float]
    efficiency_pct: Optional[float]
    breakdown_margin: Optional[float]
    breakdown_margin_low: Optional[float]
    insulation_resistance_40c_mohm: Optional[float]
    polarization_index: Optional[float]
    winding_resistance_unbalance_pct: Optional[float]
    vibration_zone: Optional[str]
    vibration_velocity_mm_s: Optional[float]
    verdict: Optional[str]
    input_power_kw: Optional[float]
    annual_energy_kwh: Optional[float]
    right_size_rated_kw: Optional[float]
    right_size_savings_kwh: Optional[float]
    changes: list[Change] = Field(description="change-from-baseline findings of this visit")


class MotorHistory(_Response):
    motor_id: int
    site: str
    tag: str
    location: str
    description: str
    visit_interval_months: int
    baseline_reading_id: Optional[int]
    last_visit: Optional[str] = Field(description="date of the last reading, YYYY-MM-DD")
    next_visit_due: Optional[str] = Field(description="last visit plus the site's interval, YYYY-MM-DD")
    overdue: bool
    count: int
    visits: list[Visit]


class SiteMotor(_Response):
    motor_id: int
    tag: str
    location: str
    description: str
    last_visit: Optional[str]
    next_visit_due: Optional[str]
    overdue: bool
    last_reading_id: Optional[int] = Field(description="the last reading that stands (not superseded, not sent back)")
    verdict: Optional[str]
    review: Optional[str]
    changes: list[str] = Field(description="change codes of the last reading that stands")
    input_power_kw: Optional[float]
    annual_energy_kwh: Optional[float]
    right_size_rated_kw: Optional[float]
    right_size_savings_kwh: Optional[float]


class SiteOverview(_Response):
    site: Site
    by_verdict: dict[str, int] = Field(description="motors per last verdict (never_read: no reading yet)")
    overdue: list[SiteMotor] = Field(description="motors whose next visit is past, oldest visit first")
    right_sizing: list[SiteMotor] = Field(description="right-sizing candidates, largest yearly savings first")
    motors: list[SiteMotor] = Field(description="every motor of the site, by last verdict (act first), then tag")


RESPONSE_MODELS = {m.__name__: m for m in (Error, Session, Motor, MotorDetail, MotorList, Reading, ReadingList,
                                           TorqueSpeedCurve, ReadingListing, ReviewCreated, Result, Health, AuditList,
                                           Site, SiteList, MotorHistory, SiteOverview)}   # issue 11: the last four


# --------------------------------------------------------------------------- JSON Schema -> OpenAPI 3.0
def _openapi30(node: Any) -> Any:
    """Pydantic's JSON Schema (2020-12) in OpenAPI 3.0's words: ``anyOf [X, null]`` becomes ``X`` with
    ``nullable`` (a ``$ref`` wrapped in ``allOf``), titles and null defaults go."""
    if isinstance(node, list):
        return [_openapi30(v) for v in node]
    if not isinstance(node, dict):
        return node
    out = {k: (_openapi30(v) if k != "properties" else {n: _openapi30(p) for n, p in v.items()})
           for k, v in node.items() if k != "title" and not (k == "default" and v is None)}
    options = out.get("anyOf")
    if options and {"type": "null"} in options and len(options) == 2:
        (inner,) = [o for o in options if o != {"type": "null"}]
        del out["anyOf"]
        inner = {"allOf": [inner]} if "$ref" in inner else dict(inner)
        if "enum" in inner:
            inner["enum"] = [*inner["enum"], None]
        out = {**inner, **out, "nullable": True}
    if "const" in out:
        out["enum"] = [out.pop("const")]
    return out


# written in place where used rather than as components of their own (a reader sees the nested shape at once)
INLINE = ("ErrorDetail", "ReadingInputs", "MotorRevision", "AuditEntry", "SiteSettings", "Change")


def _inline(node: Any, defs: dict) -> Any:
    if isinstance(node, list):
        return [_inline(v, defs) for v in node]
    if not isinstance(node, dict):
        return node
    name = node.get("$ref", "").rsplit("/", 1)[-1]
    if name in INLINE:
        return {**_inline(defs[name], defs), **{k: v for k, v in node.items() if k != "$ref"}}
    return {k: _inline(v, defs) for k, v in node.items()}


def response_schemas() -> dict[str, dict]:
    """Every response model's schema and those it refers to, keyed by name, for ``components/schemas``.

    Pydantic's ``$defs`` are hoisted: the references already point at ``#/components/schemas/``.
    """
    _, top = models_json_schema([(m, "validation") for m in RESPONSE_MODELS.values()], ref_template=REF_TEMPLATE)
    defs = {name: _openapi30(schema) for name, schema in top["$defs"].items()}
    return {name: _inline(schema, defs) for name, schema in defs.items() if name not in INLINE}
