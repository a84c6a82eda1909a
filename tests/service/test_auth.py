"""Sessions, CSRF, bearer tokens, password storage, login throttling."""

from __future__ import annotations

import hashlib

from slipwise.store import accounts

from .conftest import PASSWORDS, MOTOR, count_rows


def _login(client, username, password):
    return client.post("/api/v1/session", json={"username": username, "password": password})


def test_login_sets_hardened_cookie_and_returns_csrf(app):
    client = app.test_client()
    r = _login(client, "tess", PASSWORDS["tess"])
    assert r.status_code == 201
    body = r.get_json()
    assert body["user"]["username"] == "tess" and body["user"]["role"] == "technician"
    assert len(body["csrf_token"]) == 64
    cookie = r.headers["Set-Cookie"]
    assert cookie.startswith("slipwise_session=")
    assert "HttpOnly" in cookie and "SameSite=Lax" in cookie and "Secure" not in cookie
    assert client.get("/api/v1/session").get_json()["csrf_token"] == body["csrf_token"]
    # over HTTPS the cookie is Secure and HSTS is sent
    https = app.test_client()
    r = https.post("/api/v1/session", json={"username": "tess", "password": PASSWORDS["tess"]},
                   base_url="https://localhost")
    assert "Secure" in r.headers["Set-Cookie"]
    assert r.headers["Strict-Transport-Security"].startswith("max-age=")


def test_wrong_password_and_unknown_user_look_the_same(app):
    client = app.test_client()
    a = _login(client, "tess", "wrong-password")
    b = _login(client, "nobody", "wrong-password")
    assert a.status_code == b.status_code == 401
    assert a.get_json() == b.get_json()
    assert "Set-Cookie" not in a.headers


def test_logout_ends_session(app, tech):
    assert tech.get("/api/v1/motors").status_code == 200
    assert tech.client.delete("/api/v1/session").status_code == 403  # no CSRF header
    assert tech.delete("/api/v1/session").status_code == 204
    assert tech.get("/api/v1/motors").status_code == 401
    assert count_rows(app, "sessions") == 0


def test_csrf_required_on_cookie_writes(app, sup):
    no_header = sup.client.post("/api/v1/motors", json=MOTOR)
    assert no_header.status_code == 403 and no_header.get_json()["error"]["code"] == "csrf_failed"
    wrong = sup.client.post("/api/v1/motors", json=MOTOR, headers={"X-CSRF-Token": "0" * 64})
    assert wrong.status_code == 403
    assert count_rows(app, "motors") == 0
    assert sup.post("/api/v1/motors", json=MOTOR).status_code == 201
    # a form post (what a cross-site page can send without CORS) is refused before anything else
    form = sup.client.post("/api/v1/session", data={"username": "sue", "password": PASSWORDS["sue"]})
    assert form.status_code == 415


def test_bearer_token_works_without_csrf_and_is_stored_hashed(app):
    db = app.extensions["slipwise"].db
    with db.write() as conn:
        token = accounts.create_token(conn, "sue", "logger")
    client = app.test_client()
    h = {"Authorization": f"Bearer {token}"}
    assert client.post("/api/v1/motors", json=MOTOR, headers=h).status_code == 201
    assert client.get("/api/v1/session", headers=h).get_json()["user"]["username"] == "sue"
    bad = client.get("/api/v1/motors", headers={"Authorization": "Bearer swt_nope"})
    assert bad.status_code == 401
    assert client.get("/api/v1/motors", headers={"Authorization": "Basic abc"}).status_code == 401
    with db.read() as conn:
        stored = conn.exec_driver_sql("SELECT token_hash FROM api_tokens").scalar_one()
    assert stored == hashlib.sha256(token.encode()).hexdigest() and token not in stored


def test_passwords_stored_with_scrypt(app):
    db = app.extensions["slipwise"].db
    with db.read() as conn:
        hashes = [r[0] for r in conn.exec_driver_sql("SELECT password_hash FROM users")]
    assert all(h.startswith("scrypt:") for h in hashes)  # werkzeug's scrypt format since release 3
    assert not any(p in h for h in hashes for p in PASSWORDS.values())
    # the default cost: N = 2**15, r = 8 (32 MiB per hash; RFC 7914 section 2 defines the parameters)
    stored = accounts.hash_password("correct horse battery")
    assert stored.split("$")[0].split(":")[1:4] == ["32768", "8", "1"]
    assert accounts.verify_password("correct horse battery", stored)
    assert not accounts.verify_password("correct horse batterz", stored)
    # RFC 7914 section 12 test vector: scrypt("password", "NaCl", N=1024, r=8, p=16, dkLen=64)
    assert hashlib.scrypt(b"password", salt=b"NaCl", n=1024, r=8, p=16, dklen=64).hex().startswith("fdbabe1c9d3472")


def test_repeated_failures_are_slowed_down(app):
    client = app.test_client()
    for _ in range(accounts_free()):
        assert _login(client, "tess", "wrong-password").status_code == 401
    locked = _login(client, "tess", PASSWORDS["tess"])  # even the right password waits now
    assert locked.status_code == 429
    assert int(locked.headers["Retry-After"]) >= 1
    assert locked.get_json()["error"]["code"] == "too_many_attempts"
    # another account is not locked by tess's failures
    assert _login(client, "theo", PASSWORDS["theo"]).status_code == 201
    # once the wait is over, a success clears the count
    db = app.extensions["slipwise"].db
    with db.write() as conn:
        conn.exec_driver_sql("UPDATE login_throttle SET locked_until = NULL")
    assert _login(client, "tess", PASSWORDS["tess"]).status_code == 201
    with db.read() as conn:
        keys = [r[0] for r in conn.exec_driver_sql("SELECT key FROM login_throttle")]
    assert "user:tess" not in keys


def accounts_free() -> int:
    from slipwise.web.auth import USER_FREE_FAILURES
    return USER_FREE_FAILURES


def test_inactive_session_cookie_is_anonymous(app):
    client = app.test_client()
    client.set_cookie("slipwise_session", "forged-value")
    assert client.get("/api/v1/readings").status_code == 401
