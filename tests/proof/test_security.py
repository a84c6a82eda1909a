"""The security matrix: every route x who is asking, login throttling, cookie flags, security headers.

Who is asking: anonymous; technician and supervisor with a cookie session (CSRF token sent)
and with a bearer token; a supervisor whose session has expired; a supervisor's cookie with a
forged CSRF token, with another user's CSRF token and with none; a forged bearer token; a
malformed Authorization header. Every response of the matrix is also checked for the security
headers, and every refused request for an unchanged store.

"Other site's data": slipwise has no per-site accounts (issue 3: roles only; every signed-in
user sees every site, as a commissioning team works across sites). What remains to prove is
that one site's or one user's data never leaks into or gets written through another's request
(site filters, corrections across motors, another technician's client_id) and that another web
site cannot read or write through a signed-in browser (no CORS grant, CSRF, SameSite cookie).
"""

from __future__ import annotations

import csv
import io
import itertools
import json
import re
import secrets
from dataclasses import dataclass
from datetime import timedelta

import pytest
from sqlalchemy import update

from slipwise.store import accounts
from slipwise.store.schema import sessions
from slipwise.store.types import utcnow
from slipwise.web.auth import ADDRESS_FREE_FAILURES, COOKIE_NAME, USER_FREE_FAILURES
from tests.service.conftest import MOTOR, PASSWORDS, READING, Api, count_rows, make_app, reading_body
from tests.service.conftest import app, database, motor, reading, static_dir, sup, tech  # noqa: F401  (fixtures)
from tests.service.test_roles import ACCESS, RANK  # one route policy for both matrices

TABLES = ("users", "api_tokens", "sessions", "login_throttle", "sites", "motors", "motor_revisions", "readings",
          "reading_flags", "reviews", "audit_log", "site_settings")
WRITES = frozenset({"POST", "PUT", "DELETE"})

# route -> the least role that may use it (the policy of issue 3: technicians submit, see the day's log and
# register the motor in front of them; supervisors also edit nameplates, review, export and read the audit)
POLICY = ACCESS
OK = {"GET": 200, "POST": 201, "PUT": 200, "DELETE": 204}
OK_EXCEPTIONS = {("POST", "/api/v1/interpret"): 200}


@dataclass(frozen=True)
class Who:
    user: str | None = None       # tess (technician) or sue (supervisor)
    via: str = "none"             # none, cookie, bearer
    csrf: str = "own"             # own, forged, other-user, missing (cookie sessions only)
    expired: bool = False         # the cookie session has expired
    bad_auth: str | None = None   # an Authorization header that is not valid

    @property
    def rank(self) -> int:
        if self.expired or self.user is None or self.bad_auth:
            return 0
        return RANK[{"tess": "technician", "sue": "supervisor"}[self.user]]


WHO = {
    "anonymous": Who(),
    "technician cookie": Who("tess", "cookie"),
    "supervisor cookie": Who("sue", "cookie"),
    "technician bearer": Who("tess", "bearer"),
    "supervisor bearer": Who("sue", "bearer"),
    "expired session": Who("sue", "cookie", expired=True),
    "forged CSRF": Who("sue", "cookie", csrf="forged"),
    "another user's CSRF": Who("sue", "cookie", csrf="other-user"),
    "no CSRF header": Who("sue", "cookie", csrf="missing"),
    "forged bearer": Who(bad_auth="Bearer swt_" + "A" * 43),
    "basic auth": Who(bad_auth="Basic c3VlOnN1ZS1wYXNzd29yZC0x"),
}


def expected(who: Who, method: str, rule: str) -> tuple[int, str | None]:
    """(status, error code) for this identity on this route."""
    ok = OK_EXCEPTIONS.get((method, rule), OK[method])
    if not rule.startswith("/api/"):
        return ok, None
    if who.bad_auth:
        return 401, "unauthorized"  # a bad Authorization header is refused on every API route
    need = RANK[POLICY[(method, rule)]]
    if who.rank < need:
        return (401, "unauthorized") if who.rank == 0 else (403, "forbidden")
    cookie_write = who.via == "cookie" and not who.expired and method in WRITES
    if cookie_write and who.csrf != "own" and (method, rule) != ("POST", "/api/v1/session"):
        return 403, "csrf_failed"
    return ok, None


class Client:
    """A test client acting as one identity."""

    def __init__(self, app, who: Who):
        self.client = app.test_client()
        self.headers: dict[str, str] = {}
        db = app.extensions["slipwise"].db
        if who.bad_auth:
            self.headers["Authorization"] = who.bad_auth
        elif who.via == "bearer":
            with db.write() as conn:
                self.headers["Authorization"] = "Bearer " + accounts.create_token(conn, who.user, "matrix")
        elif who.via == "cookie":
            login = self.client.post("/api/v1/session", json={"username": who.user, "password": PASSWORDS[who.user]})
            assert login.status_code == 201
            token = {"own": login.get_json()["csrf_token"], "forged": secrets.token_hex(32), "missing": None,
                     "other-user": Api(app, "tess" if who.user != "tess" else "sue").csrf}[who.csrf]
            if token:
                self.headers["X-CSRF-Token"] = token
            if who.expired:
                with db.write() as conn:
                    conn.execute(update(sessions).values(expires_at=utcnow() - timedelta(seconds=1)))

    def open(self, method, url, **kw):
        headers = {**self.headers, **kw.pop("headers", {})}
        return self.client.open(url, method=method, headers=headers, **kw)


_tags = itertools.count(1)


def request_for(method: str, rule: str, motor: dict, reading: dict) -> tuple[str, dict]:
    url = (rule.replace("<id:motor_id>", str(motor["id"])).replace("<id:reading_id>", str(reading["id"]))
           .replace("<id:site_id>", "1").replace("/static/<path:path>", "/static/app.js")
           .replace("<path:path>", "icons/icon.svg"))
    nameplate = {k: v for k, v in MOTOR.items() if k not in ("site", "location", "description")}
    bodies = {
        ("POST", "/api/v1/session"): {"username": "theo", "password": PASSWORDS["theo"]},
        ("POST", "/api/v1/motors"): {**MOTOR, "tag": f"M-{next(_tags)}"},
        ("PUT", "/api/v1/motors/<id:motor_id>"): {**MOTOR, "rated_current_a": 28.0 + next(_tags) / 100},
        ("POST", "/api/v1/readings"): reading_body(motor["id"]),
        ("POST", "/api/v1/readings/<id:reading_id>/review"): {"decision": "accepted"},
        ("POST", "/api/v1/interpret"): {**nameplate, **READING},
        ("PUT", "/api/v1/sites/<id:site_id>/settings"): {"operating_hours_per_year": 4000},
    }
    return url, ({"json": bodies[(method, rule)]} if (method, rule) in bodies else {})


def store_counts(app) -> dict[str, int]:
    return {t: count_rows(app, t) for t in TABLES}


CSP_DIRECTIVE = re.compile(r"\s*([a-z-]+)\s+([^;]*)")


def assert_security_headers(r) -> None:
    h = r.headers
    csp = h.get("Content-Security-Policy")
    assert csp, (r.status_code, r.request.path)
    directives = dict(CSP_DIRECTIVE.match(part).groups() for part in csp.split(";") if part.strip())
    assert "'unsafe-inline'" not in csp and "'unsafe-eval'" not in csp and "*" not in csp, csp
    assert directives["default-src"] in ("'self'", "'none'"), csp
    assert directives["frame-ancestors"] in ("'none'", "'self'"), csp
    if "script-src" in directives:
        assert directives["script-src"] == "'self'", csp
    assert h.get("X-Content-Type-Options") == "nosniff"
    assert h.get("X-Frame-Options") == "DENY"
    assert h.get("Referrer-Policy") == "no-referrer"
    assert "Access-Control-Allow-Origin" not in h and "Access-Control-Allow-Credentials" not in h
    if r.request.path.startswith("/api/") and r.status_code != 304:
        cache = h.get("Cache-Control", "")
        assert "no-store" in cache or "private" in cache, (r.request.path, cache)  # never in a shared cache


def _matrix():
    for name in WHO:
        for method, rule in POLICY:
            yield pytest.param(name, method, rule, id=f"{name} | {method} {rule}")


def test_every_route_is_in_the_policy(app):
    routes = {(m, r.rule) for r in app.url_map.iter_rules() for m in r.methods - {"HEAD", "OPTIONS"}}
    assert routes == set(POLICY)


@pytest.mark.parametrize("who_name,method,rule", list(_matrix()))
def test_security_matrix(app, motor, reading, who_name, method, rule):
    who = WHO[who_name]
    client = Client(app, who)
    url, kw = request_for(method, rule, motor, reading)
    before = store_counts(app)
    r = client.open(method, url, **kw)
    status, code = expected(who, method, rule)
    assert r.status_code == status, (r.status_code, r.get_data(as_text=True)[:300])
    assert_security_headers(r)
    if code:
        body = r.get_json()
        assert body["error"]["code"] == code and set(body["error"]) == {"code", "message", "field"}
        assert store_counts(app) == before  # a refused request stores nothing
        text = r.get_data(as_text=True)
        assert "PMP-07" not in text and "Harbour" not in text  # and shows no data
        if status == 401:
            assert "WWW-Authenticate" not in r.headers or "Basic" not in r.headers["WWW-Authenticate"]
    if who.expired and rule.startswith("/api/") and POLICY[(method, rule)] != "anyone":
        assert r.status_code == 401  # an expired session is no session


def test_expired_session_cannot_be_renewed_and_logout_clears_it(app):
    client = Client(app, WHO["expired session"])
    assert client.open("GET", "/api/v1/session").status_code == 401
    assert client.open("GET", "/api/v1/readings").status_code == 401
    r = client.open("DELETE", "/api/v1/session")
    assert r.status_code == 204 and f"{COOKIE_NAME}=;" in r.headers["Set-Cookie"]


# --- other site's data -----------------------------------------------------------------------
def _site_day(app, sup, tech):
    """Two sites with a motor and a reading each."""
    ids = {}
    for site, tag in (("North Works", "N-1"), ("South Works", "S-1")):
        m = sup.post("/api/v1/motors", json={**MOTOR, "site": site, "tag": tag}).get_json()
        r = tech.post("/api/v1/readings", json=reading_body(m["id"])).get_json()
        ids[site] = (m["id"], r["id"])
    return ids


def test_site_filters_never_mix_sites(app, sup, tech):
    ids = _site_day(app, sup, tech)
    for site, (motor_id, reading_id) in ids.items():
        log = tech.get("/api/v1/readings", query_string={"site": site}).get_json()
        assert [r["id"] for r in log["readings"]] == [reading_id] and log["readings"][0]["site"] == site
        motors = tech.get("/api/v1/motors", query_string={"site": site}).get_json()["motors"]
        assert [m["id"] for m in motors] == [motor_id]
        rows = list(csv.DictReader(io.StringIO(sup.get("/api/v1/export.csv", query_string={"site": site})
                                               .get_data(as_text=True))))
        assert [(int(r["reading_id"]), r["site"]) for r in rows] == [(reading_id, site)]
    # a site that does not exist is an empty answer, not everything
    assert tech.get("/api/v1/readings", query_string={"site": "North"}).get_json()["count"] == 0
    assert tech.get("/api/v1/readings", query_string={"site": "North Works' OR '1'='1"}).get_json()["count"] == 0


def test_a_correction_cannot_reach_another_sites_reading(app, sup, tech):
    ids = _site_day(app, sup, tech)
    north_motor, _ = ids["North Works"]
    _, south_reading = ids["South Works"]
    before = store_counts(app)
    r = tech.post("/api/v1/readings", json=reading_body(north_motor, supersedes=south_reading))
    assert r.status_code == 400 and r.get_json()["error"]["field"] == "supersedes"
    assert store_counts(app) == before
    assert tech.get(f"/api/v1/readings/{south_reading}").get_json()["superseded_by"] is None


def test_another_technicians_client_id_is_a_conflict_that_shows_nothing_of_theirs(app, tech, motor):
    theo = Api(app, "theo")
    body = reading_body(motor["id"], speed_rpm=1471.5)
    assert tech.post("/api/v1/readings", json=body).status_code == 201
    before = store_counts(app)
    r = theo.post("/api/v1/readings", json=body)  # the same body, replayed by someone else
    assert r.status_code == 409 and r.get_json()["error"]["field"] == "client_id"
    text = r.get_data(as_text=True)
    assert "1471.5" not in text and "tess" not in text.lower()
    assert store_counts(app) == before


def test_another_web_site_gets_no_cross_origin_access(app, tech, motor):
    evil = {"Origin": "https://other-site.example", "Referer": "https://other-site.example/page"}
    for method, url in (("GET", "/api/v1/readings"), ("GET", "/api/v1/health"), ("POST", "/api/v1/readings")):
        r = tech.client.open(url, method=method, headers=evil, json=reading_body(motor["id"]))
        assert "Access-Control-Allow-Origin" not in r.headers
    # a CORS preflight is answered without any grant, so the browser sends nothing
    pre = tech.client.open("/api/v1/readings", method="OPTIONS",
                           headers={**evil, "Access-Control-Request-Method": "POST",
                                    "Access-Control-Request-Headers": "content-type, x-csrf-token"})
    assert not any(k.startswith("Access-Control-Allow") for k in pre.headers.keys())
    assert_security_headers(pre)
    # what a page elsewhere can send with the user's cookie and without a preflight: a form or text/plain post
    before = store_counts(app)
    for ctype, data in (("application/x-www-form-urlencoded", "motor_id=1&speed_rpm=1475"),
                        ("text/plain", json.dumps(reading_body(motor["id"]))),
                        ("multipart/form-data; boundary=x", "--x--")):
        r = tech.client.post("/api/v1/readings", data=data, headers={**evil, "Content-Type": ctype})
        assert r.status_code in (403, 415), (ctype, r.status_code)
    r = tech.client.post("/api/v1/session", data="username=tess&password=x", headers=evil,
                         content_type="application/x-www-form-urlencoded")
    assert r.status_code == 415
    assert store_counts(app) == before


# --- login throttling -----------------------------------------------------------------------
def _login(client, username, password, address="127.0.0.1"):
    return client.post("/api/v1/session", json={"username": username, "password": password},
                       environ_base={"REMOTE_ADDR": address})


def test_login_throttling_per_user_doubles_and_clears(app):
    client = app.test_client()
    for _ in range(USER_FREE_FAILURES - 1):
        assert _login(client, "tess", "wrong-password").status_code == 401
    last_free = _login(client, "tess", "wrong-password")
    assert last_free.status_code == 401  # the failure that starts the lock is still answered as wrong
    locked = _login(client, "tess", PASSWORDS["tess"])  # now even the right password waits
    assert locked.status_code == 429 and "Set-Cookie" not in locked.headers
    assert locked.get_json()["error"]["code"] == "too_many_attempts"
    assert_security_headers(locked)
    db = app.extensions["slipwise"].db
    waits = [int(locked.headers["Retry-After"])]
    for _ in range(3):  # each further failure after a lock doubles the next lock
        with db.write() as conn:
            conn.exec_driver_sql("UPDATE login_throttle SET locked_until = NULL")
        assert _login(client, "tess", "wrong-password").status_code == 401
        waits.append(int(_login(client, "tess", PASSWORDS["tess"]).headers["Retry-After"]))
    assert waits == [1, 2, 4, 8]
    # other users are not locked by tess's failures
    assert _login(client, "theo", PASSWORDS["theo"]).status_code == 201
    with db.write() as conn:
        conn.exec_driver_sql("UPDATE login_throttle SET locked_until = NULL")
    assert _login(client, "tess", PASSWORDS["tess"]).status_code == 201  # a success clears tess's count
    assert _login(client, "tess", "wrong-password").status_code == 401
    assert _login(client, "tess", PASSWORDS["tess"]).status_code == 201


def test_login_throttling_per_address_stops_password_spraying(app):
    client = app.test_client()
    for i in range(ADDRESS_FREE_FAILURES):  # one guess each at many names from one address
        assert _login(client, f"guess{i}", "Summer2025!", address="10.9.8.7").status_code == 401
    r = _login(client, "theo", PASSWORDS["theo"], address="10.9.8.7")
    assert r.status_code == 429 and int(r.headers["Retry-After"]) >= 1
    assert _login(client, "theo", PASSWORDS["theo"], address="10.9.8.8").status_code == 201


def test_failed_logins_tell_nothing(app):
    client = app.test_client()
    wrong = _login(client, "tess", "wrong-password")
    unknown = _login(client, "nobody-here", "wrong-password")
    assert wrong.status_code == unknown.status_code == 401
    assert wrong.get_json() == unknown.get_json()
    assert "Set-Cookie" not in wrong.headers and "Set-Cookie" not in unknown.headers


# --- cookie flags -----------------------------------------------------------------------------
def _cookie_attributes(header: str) -> tuple[str, dict[str, str]]:
    first, *attrs = [p.strip() for p in header.split(";")]
    name, _, value = first.partition("=")
    assert name == COOKIE_NAME
    return value, {a.partition("=")[0].lower(): a.partition("=")[2] for a in attrs}


@pytest.mark.parametrize("scheme", ["http", "https"])
def test_session_cookie_flags(app, scheme):
    client = app.test_client()
    r = client.post("/api/v1/session", json={"username": "sue", "password": PASSWORDS["sue"]},
                    base_url=f"{scheme}://localhost")
    assert r.status_code == 201
    (header,) = r.headers.getlist("Set-Cookie")
    value, attrs = _cookie_attributes(header)
    assert "httponly" in attrs
    assert attrs["samesite"] == "Lax"
    assert attrs["path"] == "/"
    assert "domain" not in attrs  # host-only
    assert int(attrs["max-age"]) == 12 * 3600
    assert ("secure" in attrs) == (scheme == "https")
    if scheme == "https":
        assert r.headers["Strict-Transport-Security"].startswith("max-age=")
    assert len(value) >= 40
    with app.extensions["slipwise"].db.read() as conn:  # the database keeps only a hash of it
        stored = [row[0] for row in conn.exec_driver_sql("SELECT token_hash FROM sessions")]
    assert value not in stored and accounts.token_hash(value) in stored
    out = client.delete("/api/v1/session", headers={"X-CSRF-Token": r.get_json()["csrf_token"]},
                        base_url=f"{scheme}://localhost")
    assert out.status_code == 204
    cleared, attrs = _cookie_attributes(out.headers["Set-Cookie"])
    assert cleared == "" and "httponly" in attrs and attrs["samesite"] == "Lax"
    assert ("secure" in attrs) == (scheme == "https")


def test_secure_cookie_behind_a_tls_proxy(database, tmp_path, static_dir):
    proxied = make_app(database, tmp_path, static_dir, SESSION_COOKIE_SECURE=True)
    with proxied.extensions["slipwise"].db.write() as conn:
        accounts.add_user(conn, "sue", "supervisor", PASSWORDS["sue"], scrypt_n=2 ** 10)
    r = proxied.test_client().post("/api/v1/session", json={"username": "sue", "password": PASSWORDS["sue"]})
    assert "secure" in _cookie_attributes(r.headers["Set-Cookie"])[1]
    proxied.extensions["slipwise"].db.dispose()


# --- security headers on every response, errors and static files included ---------------------
def test_security_headers_on_errors_and_static_files(app, tech, reading, monkeypatch):
    c = app.test_client()
    static = c.get("/static/app.js")
    responses = {
        "page": c.get("/"), "service worker": c.get("/sw.js"), "static file": static,
        "file at the root": c.get("/app.js"), "icon": c.get("/icons/icon.svg"),
        "static 304": c.get("/static/app.js", headers={"If-None-Match": static.headers["ETag"]}),
        "static HEAD": c.head("/static/app.js"),
        "missing file": c.get("/static/nothing.js"), "traversal": c.get("/static/../secret.txt"),
        "page POST": c.post("/"), "API 404": c.get("/api/v1/nothing"), "API 405": c.delete("/api/v1/readings"),
        "OPTIONS": c.open("/api/v1/motors", method="OPTIONS"),
        "400": tech.post("/api/v1/readings", json={"motor_id": "x"}),
        "401": c.get("/api/v1/readings"), "403": tech.get("/api/v1/audit"),
        "404 record": tech.get("/api/v1/readings/987654"),
        "413": tech.post("/api/v1/readings", data=b" " * (app.config["MAX_CONTENT_LENGTH"] + 1),
                         content_type="application/json"),
        "415": tech.post("/api/v1/readings", data="x", content_type="text/plain"),
        "picture": tech.get(f"/api/v1/readings/{reading['id']}/torque-speed.svg"),
        "HTTPS": c.get("/api/v1/health", base_url="https://localhost"),
    }
    responses["picture 304"] = tech.get(f"/api/v1/readings/{reading['id']}/torque-speed.svg",
                                        headers={"If-None-Match": responses["picture"].headers["ETag"]})
    for _ in range(USER_FREE_FAILURES):
        _login(c, "theo", "wrong-password")
    responses["429"] = _login(c, "theo", "wrong-password")

    def broken():
        raise RuntimeError("a bug")
    monkeypatch.setitem(app.view_functions, "misc.health", broken)
    responses["500"] = c.get("/api/v1/health")
    statuses = {name: r.status_code for name, r in responses.items()}
    assert statuses == {"page": 200, "service worker": 200, "static file": 200, "file at the root": 200,
                        "icon": 200, "static 304": 304, "static HEAD": 200, "missing file": 404, "traversal": 404,
                        "page POST": 405, "API 404": 404, "API 405": 405, "OPTIONS": 200, "400": 400, "401": 401,
                        "403": 403, "404 record": 404, "413": 413, "415": 415, "picture": 200, "HTTPS": 200,
                        "picture 304": 304, "429": 429, "500": 500}
    for name, r in responses.items():
        try:
            assert_security_headers(r)
        except AssertionError as e:
            raise AssertionError(f"{name}: {e}") from None
    assert responses["500"].get_json()["error"]["code"] == "internal_error"
    assert "a bug" not in responses["500"].get_data(as_text=True) and "Traceback" not in responses["500"].get_data(
        as_text=True)
    assert responses["HTTPS"].headers["Strict-Transport-Security"].startswith("max-age=")
    # the picture needs no inline style: its policy is the strictest one
    picture = responses["picture"]
    assert picture.headers["Content-Security-Policy"].startswith("default-src 'none'")
    assert b"style=" not in picture.data and b"<style" not in picture.data and b"<script" not in picture.data
