"""The page's files from static/, and the security headers on every response."""

from __future__ import annotations

from slipwise.web.security import CONTENT_SECURITY_POLICY

from .conftest import make_app


def test_page_files(anon):
    r = anon.get("/")
    assert r.status_code == 200 and b"slipwise test page" in r.data
    assert r.headers["Content-Type"].startswith("text/html")
    sw = anon.get("/sw.js")
    assert sw.status_code == 200 and sw.headers["Cache-Control"] == "no-cache"
    assert "javascript" in sw.headers["Content-Type"]
    assert anon.get("/static/app.js").data == anon.get("/app.js").data == b"console.log('app');\n"
    assert anon.get("/icons/icon.svg").status_code == 200


def test_path_traversal_is_refused(anon):
    for url in ("/static/../secret.txt", "/../secret.txt", "/static/%2e%2e/secret.txt", "/%2e%2e/secret.txt",
                "/static/..%2fsecret.txt", "/static//etc/passwd", "/static/icons/../../secret.txt"):
        r = anon.get(url)
        assert r.status_code == 404, url
        assert b"not for the web" not in r.data


def test_missing_static_folder_is_404(database, tmp_path):
    app = make_app(database, tmp_path, tmp_path / "no-such-folder")
    client = app.test_client()
    for url in ("/", "/sw.js", "/static/app.js", "/app.js"):
        r = client.get(url)
        assert r.status_code == 404, url
        assert r.get_json()["error"]["code"] == "not_found"
    app.extensions["slipwise"].db.dispose()


def test_security_headers_on_every_response(app, anon, tech, reading):
    responses = [anon.get("/"), anon.get("/sw.js"), anon.get("/api/v1/health"), anon.get("/api/v1/motors"),
                 anon.get("/nope"), anon.post("/api/v1/health"), tech.get("/api/v1/readings"),
                 tech.post("/api/v1/readings", data="x" * 300_000, content_type="application/json"),
                 anon.get("/api/v1/openapi.json")]
    for r in responses:
        assert r.headers["Content-Security-Policy"] == CONTENT_SECURITY_POLICY, r.status
        assert r.headers["X-Content-Type-Options"] == "nosniff"
        assert r.headers["X-Frame-Options"] == "DENY"
        assert r.headers["Referrer-Policy"] == "no-referrer"
    assert "'unsafe-inline'" not in CONTENT_SECURITY_POLICY and "script-src 'self'" in CONTENT_SECURITY_POLICY
    svg = tech.get(f"/api/v1/readings/{reading['id']}/torque-speed.svg")
    assert "script" not in svg.headers["Content-Security-Policy"] and "default-src 'none'" in svg.headers[
        "Content-Security-Policy"]
    assert responses[2].headers["Cache-Control"] == "no-store"
    assert [r.status_code for r in responses[4:6]] == [404, 405]
    assert responses[7].status_code == 413
