"""The API's request models (pydantic v2), built from the declaration; their JSON schemas feed the OpenAPI document.

Each field is the declaration's field: pydantic calls :func:`slipwise.contract.cells.parse_value`
for it (so the API applies exactly the cell rules) and shows the schema written here from the
declaration (pydantic cannot see inside a validator). Rules across fields (kW or hp; a comment
for retake; motor_id or the nameplate) are model validators *and* schema clauses, so that the
document admits no request the handler refuses. :func:`parse_body` turns pydantic's errors into
the :class:`FieldError` the web layer answers with ``{"error": {"code", "message", "field"}}``.
"""

from __future__ import annotations

import functools
import re
import unicodedata
import uuid
from datetime import date, datetime, timedelta, timezone
from functools import lru_cache
from typing import Annotated, Any, Mapping

from pydantic import BaseModel, BeforeValidator, ConfigDict, WithJsonSchema, create_model, model_validator
from pydantic import ValidationError as PydanticError

from .cells import TRIM_CHARS, is_blank, parse_text, parse_value, trim
from .errors import FieldError
from .fields import (CHOICE_FIELDS, CURRENT_FIELDS, DECISIONS_NEEDING_COMMENT, MAX_ID, NAMEPLATE_CHOICES, NAMEPLATE_NUMBERS,
                     NUMBER_FIELDS, READING_CHOICES, READING_NUMBERS, READING_TEST_NUMBERS, READING_TEXTS,
                     REVIEW_DECISIONS, TAKEN_AT_HELP, TEST_FIELDS, TEXT_FIELDS)

TAKEN_AT_EARLIEST = datetime(2000, 1, 1, tzinfo=timezone.utc)
TAKEN_AT_AHEAD = timedelta(days=2)   # a tablet clock a little ahead is fine; a year ahead is a typo
# month-day pairs that exist in every year (29 February is left to the handler's calendar check)
_MONTH_DAY = "((0[1-9]|1[0-2])-(0[1-9]|1[0-9]|2[0-8])|(0[13-9]|1[0-2])-(29|30)|(0[13578]|1[02])-31)"
TAKEN_AT_SHAPE = (r"^20[0-9]{2}-(0[1-9]|1[0-2])-(0[1-9]|[12][0-9]|3[01])(T([01][0-9]|2[0-3]):[0-5][0-9]"
                  r"(:[0-5][0-9](\.[0-9]{1,6})?)?(Z|[+-]([01][0-9]|2[0-3]):[0-5][0-9])?)?$")
_SHAPE = re.compile(TAKEN_AT_SHAPE)
UUID_EXAMPLE = "123e4567-e89b-12d3-a456-426614174000"
NAMEPLATE_NAMES = tuple(f.name for f in NAMEPLATE_NUMBERS + NAMEPLATE_CHOICES)
RATED_REQUIRED = tuple(f.name for f in NAMEPLATE_NUMBERS if f.required)
#: The reading's fields in a request: the running reading's numbers, then the sheet's tests (engine 1.2.0).
READING_NAMES = tuple(f.name for f in READING_NUMBERS) + TEST_FIELDS

# Characters as JSON Schema (ECMA-262) character classes: what text fields refuse, what a tag refuses
# (its categories, spelled out for the Basic Multilingual Plane: JSON Schema regexes have no \p{..}).
_CONTROLS = r"\x00-\x08\x0b-\x1f\x7f-\x9f"
_TAG_REFUSED = (r"\x00-\x1f\x7f-\x9f\u00ad\u0600-\u0605\u061c\u06dd\u070f\u0890\u0891\u08e2\u180e\u200b-\u200f"
                r"\u2028-\u202e\u2060-\u2064\u2066-\u206f\ufeff\ufff9-\ufffb\ud800-\uf8ff")
_TRIM_CLASS = "".join(f"\\u{ord(c):04x}" for c in TRIM_CHARS)


@functools.lru_cache(maxsize=4)
def _allowed_class(spec, keep_trim: bool) -> str:
    """The characters a text field allows, as one regex character class of ranges.

    Up to U+FFFF only, as ``\\uXXXX`` ranges: a positive class of those means the same to Python's re, Rust's
    regex and ECMA-262. The handler also takes the characters beyond (an emoji in a tag), except private use;
    the fuzzer's regex translation refuses astral ranges, so the document says that part in words.
    """
    def ok(c: int) -> bool:
        ch = chr(c)
        return (not 0xD800 <= c <= 0xDFFF and unicodedata.category(ch) not in spec.refused_categories
                and ch not in "\t\n" and (keep_trim or ch not in TRIM_CHARS))
    parts, start = [], None
    def written(c: int) -> str:
        return f"\\u{c:04x}" if c <= 0xFFFF else chr(c)
    for c in range(0x20, 0x10001):
        if c <= 0xFFFF and ok(c):
            start = c if start is None else start
        elif start is not None:
            parts.append(written(start) + (f"-{written(c - 1)}" if c - 1 > start else ""))
            start = None
    return "[" + "".join(parts) + "]"


def _text_schema(name: str, limit: int | None = None) -> dict:
    spec = TEXT_FIELDS[name]
    n = limit or spec.max_chars
    if name == "tag":
        # positive classes of ranges: they mean the same to Python's re, Rust's regex and ECMA-262 (u flag)
        allowed = _allowed_class(spec, keep_trim=True)
        inner = _allowed_class(spec, keep_trim=False)
        pattern = f"^[{_TRIM_CLASS}]*{inner}({allowed}*{inner})?[{_TRIM_CLASS}]*$"
        help_text = (spec.help + "; the pattern lists the characters up to U+FFFF; beyond, any character but "
                     "private use is accepted too (an emoji, say)")
    elif spec.line_pattern:
        # lines of the declared shape (blank lines between them allowed), spaces around the whole
        line = spec.line_pattern.lstrip("^").rstrip("$")
        sp = f"[{_TRIM_CLASS}]*"
        pattern = f"^{sp}({line})?([\\x20\\t]*\\n[\\x20\\t]*({line})?)*{sp}$"
    elif spec.one_line:
        pattern = f"^[^\\x00-\\x1f\\x7f-\\x9f]*[^{_TRIM_CLASS}\\x00-\\x1f\\x7f-\\x9f][^\\x00-\\x1f\\x7f-\\x9f]*$"
    elif spec.required:
        pattern = f"^[^{_CONTROLS}]*[^{_TRIM_CLASS}{_CONTROLS}][^{_CONTROLS}]*$"
    else:
        pattern = f"^[^{_CONTROLS}]*$"
    s = {"type": "string", "maxLength": n, "pattern": pattern,
         "description": f"{help_text if name == 'tag' else spec.help}; "
                        f"{spec.range_text().replace(str(spec.max_chars), str(n))}"}
    if spec.required:
        s["minLength"] = 1
    else:
        s["nullable"] = True
    return s


def number_schema(name: str) -> dict:
    spec = NUMBER_FIELDS[name]
    s: dict[str, Any] = {"type": "integer" if spec.integer else "number", "nullable": not spec.required,
                         "minimum": spec.low, "maximum": spec.high,
                         "description": (spec.help + "; " if spec.help else "") + f"[{spec.unit or '-'}], "
                                        f"{spec.range_text()}; a numeric string is accepted too (a decimal comma "
                                        "as well)"}
    if spec.default is not None:
        s["default"] = spec.default
    return s


def choice_schema(name: str) -> dict:
    spec = CHOICE_FIELDS[name]
    return {"type": "string", "nullable": True, "enum": list(spec.choices) + [None],
            "description": spec.help + ("; " if spec.help else "") + "matched without regard to case"}


def id_schema(nullable: bool = False, description: str = "") -> dict:
    s: dict[str, Any] = {"type": "integer", "minimum": 1, "maximum": MAX_ID}
    if nullable:
        s["nullable"] = True
    if description:
        s["description"] = description
    return s


TAKEN_AT_SCHEMA = {"type": "string", "nullable": True, "maxLength": 40, "pattern": TAKEN_AT_SHAPE,
                   "description": TAKEN_AT_HELP + "; from 2000-01-01 to two days after the time of receipt"}


# --------------------------------------------------------------------------- value parsers
def record_id(name: str, value: Any, required: bool = True) -> int | None:
    if value is None and not required:
        return None
    if isinstance(value, bool) or not isinstance(value, int) or not 1 <= value <= MAX_ID:
        if isinstance(value, str):
            text = trim(value)
            if 0 < len(text) <= 19 and text.isascii() and text.isdigit() and 1 <= int(text) <= MAX_ID:
                return int(text)
        raise FieldError(f"{name} must be a record id: a whole number from 1 to {MAX_ID}", name)
    return value


def client_id(value: Any) -> str:
    if not isinstance(value, str):
        raise FieldError(f"client_id is required: a UUID such as {UUID_EXAMPLE}", "client_id")
    try:
        return str(uuid.UUID(trim(value)))
    except ValueError:
        raise FieldError(f"client_id must be a UUID such as {UUID_EXAMPLE}", "client_id") from None


def taken_at(value: Any, now: datetime) -> tuple[str | None, str, datetime]:
    """Return (as given, normalised or None; calendar date; UTC instant for ordering).

    A time without an offset is the technician's local clock: its date is the
    date written, and it is ordered as if it were UTC.
    """
    if is_blank(value):
        return None, now.date().isoformat(), now
    latest = now + TAKEN_AT_AHEAD
    message = (f"taken_at must be an ISO 8601 date and time (2024-05-17T09:30:00+02:00) from "
               f"2000-01-01 to {latest.date().isoformat()}")
    if not isinstance(value, str) or len(value) > 40 or not _SHAPE.match(trim(value)):
        raise FieldError(message, "taken_at")
    try:
        t = datetime.fromisoformat(trim(value))
    except ValueError:
        raise FieldError(message, "taken_at") from None
    aware = t if t.tzinfo else t.replace(tzinfo=timezone.utc)
    if not TAKEN_AT_EARLIEST <= aware <= latest:
        raise FieldError(message, "taken_at")
    return t.isoformat(timespec="seconds"), t.date().isoformat(), aware.astimezone(timezone.utc)


def taken_at_schema(today: date) -> dict:
    """taken_at's schema for a document served on ``today``: its pattern admits no date after the last month."""
    years = "|".join(str(y) for y in range(2000, today.year))
    months = "|".join(f"{m:02d}" for m in range(1, today.month))
    this_year = f"|{today.year}-({months})-(0[1-9]|1[0-9]|2[0-8])" if months else ""
    shape = TAKEN_AT_SHAPE.replace(r"^20[0-9]{2}-(0[1-9]|1[0-2])-(0[1-9]|[12][0-9]|3[01])",
                                   f"^(({years})-{_MONTH_DAY}{this_year})")
    return {**TAKEN_AT_SCHEMA, "pattern": shape}


# --------------------------------------------------------------------------- models
def _field(parse, schema: dict, default: Any = None):
    return (Annotated[Any, BeforeValidator(parse), WithJsonSchema(schema)], default)


def _declared(name: str, optional: bool = False):
    schema = number_schema(name) if name in NUMBER_FIELDS else choice_schema(name)
    if optional:
        schema = {**schema, "nullable": True}
        return _field(lambda v, n=name: None if is_blank(v) else parse_value(n, v), schema)
    return _field(lambda v, n=name: parse_value(n, v), schema)


def _text(name: str, limit: int | None = None):
    return _field(lambda v, n=name: parse_text(n, v, limit), _text_schema(name, limit))


class _Body(BaseModel):
    model_config = ConfigDict(extra="forbid", validate_default=True)


def _kw_or_hp(values: Mapping[str, Any]) -> None:
    """Rated output in kW or in hp, not both: two figures on one form that disagree are a typo to ask about."""
    kw, hp = values.get("rated_power_kw"), values.get("rated_power_hp")
    if kw is None and hp is None:
        spec = NUMBER_FIELDS["rated_power_kw"]
        raise FieldError(f"rated_power_kw is required (or rated_power_hp): {spec.range_text()}", "rated_power_kw")
    if kw is not None and hp is not None:
        raise FieldError("give rated_power_kw or rated_power_hp, not both (leave the other blank)", "rated_power_hp")


_NULL = {"nullable": True, "enum": [None]}
KW_OR_HP = [{"required": ["rated_power_kw"], "properties": {"rated_power_kw": {"type": "number"},
                                                             "rated_power_hp": _NULL}},
            {"required": ["rated_power_hp"], "properties": {"rated_power_hp": {"type": "number"},
                                                             "rated_power_kw": _NULL}}]


def _schema_extra(required: tuple[str, ...], description: str = "", **clauses):
    def extra(schema: dict) -> None:
        schema["required"] = list(required)
        schema.pop("title", None)
        if description:
            schema["description"] = description
        schema.update(clauses)
        for prop in schema.get("properties", {}).values():
            prop.pop("title", None)
            if prop.get("default", 0) is None:
                del prop["default"]
    return extra


def _model(name: str, base: type, required: tuple[str, ...], description: str = "", clauses: dict | None = None,
           /, **fields):
    config = ConfigDict(extra="forbid", validate_default=True,
                        json_schema_extra=_schema_extra(required, description, **(clauses or {})))
    base = type(f"_{name}Base", (base,), {"model_config": config})
    return create_model(name, __base__=base, **fields)


class _NameplateBody(_Body):
    @model_validator(mode="after")
    def _power(self):
        _kw_or_hp(self.__dict__)
        return self


class _ReviewBody(_Body):
    @model_validator(mode="after")
    def _comment(self):
        if self.decision in DECISIONS_NEEDING_COMMENT and not self.comment:
            raise FieldError(f"comment is required for {self.decision}: text of 1 to "
                             f"{TEXT_FIELDS['comment'].max_chars} characters", "comment")
        return self


class _InterpretBody(_Body):
    @model_validator(mode="after")
    def _motor_or_nameplate(self):
        values = self.__dict__
        given = [k for k in NAMEPLATE_NAMES if values.get(k) is not None]
        if values.get("motor_id") is not None:
            if given:
                raise FieldError("give motor_id or the nameplate fields, not both", given[0])
            return self
        for name in RATED_REQUIRED:
            if values.get(name) is None:
                spec = NUMBER_FIELDS[name]
                raise FieldError(f"{name} is required: a number from {spec.range_text()}", name)
        _kw_or_hp(values)
        return self


def _decision(value: Any) -> str:
    if not isinstance(value, str) or value not in REVIEW_DECISIONS:
        raise FieldError("decision must be one of " + ", ".join(REVIEW_DECISIONS), "decision")
    return value


def _nameplate(optional: bool = False) -> dict:
    return {name: _declared(name, optional) for name in NAMEPLATE_NAMES}


def _readings() -> dict:
    return {name: (_text(name) if name in TEXT_FIELDS else _declared(name)) for name in READING_NAMES}


_NAMEPLATE_REQUIRED = tuple(f.name for f in NAMEPLATE_NUMBERS if f.required)
_READING_REQUIRED = tuple(f.name for f in READING_NUMBERS if f.required)
# the engine needs at least one line current (its message names current_l1_a)
ONE_CURRENT = [{"required": [n], "properties": {n: {"type": "number"}}} for n in CURRENT_FIELDS]
_ANY_NAMEPLATE = {"properties": {n: _NULL for n in NAMEPLATE_NAMES}}
_NO_MOTOR = {"properties": {"motor_id": _NULL}}

MotorInput = _model(
    "MotorInput", _NameplateBody, ("site", "tag") + _NAMEPLATE_REQUIRED,
    "rated_power_kw or rated_power_hp is required as well", {"anyOf": KW_OR_HP},
    site=_text("site"), tag=_text("tag"), location=_text("location"), description=_text("description"),
    **_nameplate())
MotorUpdate = _model(
    "MotorUpdate", _NameplateBody, _NAMEPLATE_REQUIRED,
    "the whole nameplate (a blank field becomes blank); site and tag cannot change; a changed nameplate "
    "becomes a new revision; rated_power_kw or rated_power_hp is required as well", {"anyOf": KW_OR_HP},
    site=_field(lambda v: v, {"type": "string", "readOnly": True,
                              "description": "as registered: it cannot change (a different value gives 400)"}),
    tag=_field(lambda v: v, {"type": "string", "readOnly": True,
                             "description": "as registered: it cannot change (a different value gives 400)"}),
    location=_text("location"), description=_text("description"),
    revision=_field(lambda v: record_id("revision", v, required=False),
                    id_schema(description="the revision being edited; 409 when it is no longer the current one")),
    **_nameplate())
ReadingInput = _model(
    "ReadingInput", _Body, ("client_id", "motor_id") + _READING_REQUIRED,
    "a reading of a registered motor; at least one line current is required as well", {"anyOf": ONE_CURRENT},
    client_id=_field(client_id, {"type": "string", "format": "uuid",
                                 "description": "generated by the client; a replay with the same content returns "
                                                "the stored record (200), other content gives 409"}),
    motor_id=_field(lambda v: record_id("motor_id", v), id_schema()),
    supersedes=_field(lambda v: record_id("supersedes", v, required=False),
                      id_schema(True, "id of the reading this one corrects (same motor)")),
    **_readings(), taken_at=_field(lambda v: v, TAKEN_AT_SCHEMA))
ReviewInput = _model(
    "ReviewInput", _ReviewBody, ("decision",), "",
    {"anyOf": [{"properties": {"decision": {"type": "string", "enum": ["accepted"]}}},
               {"required": ["comment"],
                "properties": {"comment": {"type": "string", "minLength": 1,
                                           "pattern": _text_schema("comment")["pattern"].replace(
                                               "]*$", "]*[^" + _TRIM_CLASS + _CONTROLS + "][^" + _CONTROLS + "]*$",
                                               1)}}}]},
    decision=_field(_decision, {"type": "string", "enum": list(REVIEW_DECISIONS)}),
    comment=_text("comment"))
InterpretInput = _model(
    "InterpretInput", _InterpretBody, ("frequency_hz", "speed_rpm"),
    "a nameplate (as for MotorInput, without site) or motor_id, plus a reading (at least one line current)",
    {"allOf": [{"anyOf": ONE_CURRENT}], "anyOf": [{"required": ["motor_id"],
                "properties": {"motor_id": {"type": "integer"}, **_ANY_NAMEPLATE["properties"]}},
               {"required": list(_NAMEPLATE_REQUIRED), **_NO_MOTOR,
                "properties": {**_NO_MOTOR["properties"], **{n: {"type": "number"} for n in _NAMEPLATE_REQUIRED}},
                "anyOf": KW_OR_HP}]},
    motor_id=_field(lambda v: record_id("motor_id", v, required=False), id_schema(True)),
    tag=_field(lambda v: None if is_blank(v) else parse_text("tag", v), {**_text_schema("tag"), "nullable": True}),
    **_nameplate(optional=True), **_readings(), taken_at=_field(lambda v: v, TAKEN_AT_SCHEMA))
Login = _model(
    "Login", _Body, ("username", "password"),
    username=_field(lambda v: v, {"type": "string", "minLength": 1, "maxLength": TEXT_FIELDS["username"].max_chars,
                                  "pattern": "^[^\\x00-\\x1f\\x7f-\\x9f]*$"}),
    password=_field(lambda v: v, {"type": "string", "minLength": 1, "maxLength": 1024}))
REQUEST_MODELS = {m.__name__: m for m in (Login, MotorInput, MotorUpdate, ReadingInput, ReviewInput, InterpretInput)}


def request_schema(model: type[BaseModel], today: date | None = None) -> dict:
    """The model's JSON schema as OpenAPI 3.0 reads it (taken_at's pattern bounded by ``today``)."""
    schema = model.model_json_schema()
    if today is not None and "taken_at" in schema.get("properties", {}):
        schema["properties"]["taken_at"] = taken_at_schema(today)
    return schema


def parse_body(model: type[BaseModel], body: Mapping[str, Any]) -> dict:
    """The body checked by ``model``: a dict of parsed values, or the first :class:`FieldError`.

    The first error is an unknown field if there is one, else the first field in the model's order.
    """
    try:
        return model.model_validate(dict(body)).__dict__.copy()
    except PydanticError as e:
        errors = e.errors(include_url=False)
        extra = sorted(str(err["loc"][0])[:60] for err in errors if err["type"] == "extra_forbidden")
        if extra:
            allowed = ", ".join(sorted(model.model_fields))
            raise FieldError(f"unknown field {extra[0]!r}; allowed fields: {allowed}", extra[0]) from None
        for err in errors:
            cause = (err.get("ctx") or {}).get("error")
            if isinstance(cause, FieldError):
                raise FieldError(cause.message, cause.field) from None
        err = errors[0]
        field = str(err["loc"][0]) if err["loc"] else None
        raise FieldError(f"{field}: {err['msg']}", field) from None


def nameplate_values(row: Mapping[str, Any]) -> dict:
    """The nameplate fields of a row that is not a request body (a demo CSV row), by the same rules."""
    out = {name: parse_value(name, row.get(name)) for name in NAMEPLATE_NAMES}
    _kw_or_hp(out)
    return out


def reading_values(row: Mapping[str, Any]) -> dict:
    """The reading's fields of a row that is not a request body, by the same rules."""
    return given_reading({name: parse_value(name, row.get(name)) for name in READING_NAMES})


def given_reading(values: Mapping[str, Any]) -> dict:
    """A parsed reading as stored: every reading field, None where blank (text too)."""
    return {name: (values.get(name) if values.get(name) != "" else None) for name in READING_NAMES}


# --------------------------------------------------------------------------- issue 11: site settings
SiteSettingsInput = _model(
    "SiteSettingsInput", _Body, (),
    "a site's defaults: a reading that leaves operating_hours_per_year or energy_price_per_kwh blank takes the "
    "site's value (a value on the reading overrides it); a visit older than visit_interval_months is overdue. "
    "The whole set is written as a new entry (a blank field means no default; the interval 12 months)",
    None,
    **{name: _declared(name, optional=True)
       for name in ("operating_hours_per_year", "energy_price_per_kwh", "visit_interval_months")})
REQUEST_MODELS["SiteSettingsInput"] = SiteSettingsInput
