"""A real slipwise server on loopback and Debian's Chromium driven by Playwright.

The server is the Flask app from ``slipwise.web.create_app`` on a temporary SQLite
database, served by werkzeug's threaded HTTP server on a free port in a
thread of this process. Users and a bearer token are created through the
store; the tests then act through the page and check through the HTTP API.

Chromium must be ``/usr/bin/chromium`` (``apt-get install -y chromium``); if it is
missing these tests fail with that message instead of skipping.
"""

from __future__ import annotations

import json
import os
import threading
import urllib.error
import urllib.request
from pathlib import Path

import pytest

CHROMIUM = "/usr/bin/chromium"
ARTIFACTS = Path(__file__).resolve().parents[2] / "test-artifacts"
TABLET = {"width": 800, "height": 1280}
PHONE = {"width": 360, "height": 740}
DESKTOP = {"width": 1920, "height": 1080}
PASSWORDS = {"tess": "tablet-pass-1", "sam": "desk-pass-22"}


class Service:
    def __init__(self, base: str, token: str, tech_token: str, app):
        self.base, self.token, self.tech_token, self.app = base, token, tech_token, app

    def call(self, method: str, path: str, body=None, token: str | None = None):
        """(status, parsed JSON or text) of an API call with the supervisor's bearer token."""
        data = None if body is None else json.dumps(body).encode()
        req = urllib.request.Request(self.base + path, data=data, method=method)
        req.add_header("Authorization", f"Bearer {token or self.token}")
        if data is not None:
            req.add_header("Content-Type", "application/json")
        try:
            with urllib.request.urlopen(req, timeout=30) as resp:
                raw, status, ctype = resp.read(), resp.status, resp.headers.get("Content-Type", "")
        except urllib.error.HTTPError as e:
            raw, status, ctype = e.read(), e.code, e.headers.get("Content-Type", "")
        return status, (json.loads(raw) if "json" in ctype else raw.decode("utf-8"))

    def motor(self, tag: str, site: str = "Harbour pumping station", **nameplate):
        body = {"site": site, "tag": tag, "rated_power_kw": 15, "rated_voltage_v": 400, "rated_current_a": 28.5,
                "rated_frequency_hz": 50, "rated_speed_rpm": 1460, "location": "basement level -2"}
        body.update(nameplate)
        status, motor = self.call("POST", "/api/v1/motors", body)
        assert status == 201, motor
        return motor

    def readings_of(self, motor_id: int) -> list[dict]:
        status, data = self.call("GET", f"/api/v1/readings?motor_id={motor_id}")
        assert status == 200, data
        return data["readings"]


@pytest.fixture(scope="session")
def service(tmp_path_factory):
    import logging

    from werkzeug.serving import make_server

    from slipwise.store import accounts, sqlite_url
    from slipwise.web import create_app

    data = tmp_path_factory.mktemp("slipwise-browser")
    app = create_app({"DATA_DIR": str(data), "DATABASE_URL": sqlite_url(data / "browser.sqlite3"),
                      "SECRET_KEY": "browser-test-secret"})
    db = app.extensions["slipwise"].db
    with db.write() as conn:
        accounts.add_user(conn, "tess", "technician", PASSWORDS["tess"], full_name="Tess Okafor")
        accounts.add_user(conn, "sam", "supervisor", PASSWORDS["sam"], full_name="Sam Lindqvist")
        token = accounts.create_token(conn, "sam", label="browser tests")
        tech_token = accounts.create_token(conn, "tess", label="browser tests")
    logging.getLogger("werkzeug").setLevel(logging.WARNING)
    httpd = make_server("127.0.0.1", 0, app, threaded=True)
    thread = threading.Thread(target=httpd.serve_forever, daemon=True)
    thread.start()
    yield Service(f"http://127.0.0.1:{httpd.server_port}", token, tech_token, app)
    httpd.shutdown()
    thread.join(timeout=10)


@pytest.fixture(scope="session")
def browser():
    if not os.path.exists(CHROMIUM):
        pytest.fail(f"{CHROMIUM} is missing: install Debian's Chromium (apt-get install -y chromium); "
                    "the browser tests never download a browser", pytrace=False)
    try:
        from playwright.sync_api import sync_playwright
    except ImportError:
        pytest.fail("playwright is not installed: pip install playwright (never run 'playwright install')",
                    pytrace=False)
    with sync_playwright() as p:
        b = p.chromium.launch(executable_path=CHROMIUM, args=["--disable-gpu", "--disable-quic"])
        yield b
        b.close()


@pytest.fixture
def new_context(browser, service):
    """new_context(viewport) -> a fresh browser context (own cache, service worker and IndexedDB)."""
    made = []

    def make(viewport=TABLET, **kw):
        # the page's "today" and the server's date of a reading sent without taken_at agree in UTC
        kw.setdefault("timezone_id", "UTC")
        ctx = browser.new_context(base_url=service.base, viewport=viewport, accept_downloads=True, **kw)
        ctx.set_default_timeout(15000)
        made.append(ctx)
        return ctx

    yield make
    for c in made:
        c.close()


def shot(page, name: str) -> Path:
    ARTIFACTS.mkdir(exist_ok=True)
    path = ARTIFACTS / f"{name}.png"
    page.screenshot(path=str(path), full_page=True)
    return path


def sign_in(page, username: str):
    page.goto("/")
    page.wait_for_selector("html[data-ready='1']")
    if page.locator("#login-user").count():
        page.fill("#login-user", username)
        page.fill("#login-pass", PASSWORDS[username])
        page.click("button[type=submit]")
    page.wait_for_selector("#tabs:not([hidden])")


def wait_for_worker(page):
    """Wait until the service worker is active and controls the page (reload once if needed)."""
    page.evaluate("navigator.serviceWorker.ready.then(() => true)")
    if not page.evaluate("!!navigator.serviceWorker.controller"):
        page.reload()
        page.wait_for_selector("html[data-ready='1']")
    assert page.evaluate("!!navigator.serviceWorker.controller")


def fill_reading(page, values: dict):
    for name, value in values.items():
        page.fill(f"#rd-{name}", str(value))


def wait_until(page, expression: str, timeout_s: float = 15.0):
    """Poll a JS expression until truthy. (Playwright's wait_for_function evaluates strings with eval,
    which the page's Content-Security-Policy rightly refuses; page.evaluate is not subject to it.)"""
    import time
    end = time.monotonic() + timeout_s
    while True:
        value = page.evaluate(expression)
        if value:
            return value
        if time.monotonic() > end:
            raise AssertionError(f"timed out waiting for: {expression}")
        time.sleep(0.05)


CONTRAST_JS = """(selectors) => {
  // WCAG 2.x relative luminance and contrast ratio (w3.org/TR/WCAG21, "contrast ratio" definition)
  const rgb = (c) => (c.match(/[\\d.]+/g) || []).map(Number);
  const lum = ([r, g, b]) => { const f = (v) => { v /= 255; return v <= 0.03928 ? v / 12.92 : ((v + 0.055) / 1.055) ** 2.4; };
                                return 0.2126 * f(r) + 0.7152 * f(g) + 0.0722 * f(b); };
  const background = (el) => { for (let e = el; e; e = e.parentElement) { const c = rgb(getComputedStyle(e).backgroundColor);
                                 if (c.length === 3 || (c.length === 4 && c[3] > 0.5)) return c.slice(0, 3); }
                               return rgb(getComputedStyle(document.documentElement).backgroundColor).slice(0, 3); };
  const out = {};
  for (const sel of selectors) {
    const ratios = [...document.querySelectorAll(sel)].filter((e) => e.offsetParent && e.textContent.trim()).map((e) => {
      const a = lum(rgb(getComputedStyle(e).color)), b = lum(background(e));
      return (Math.max(a, b) + 0.05) / (Math.min(a, b) + 0.05); });
    out[sel] = ratios.length ? Math.min(...ratios) : null;
  }
  return out;
}"""


def contrast(page, selectors):
    """Lowest WCAG contrast ratio of the visible elements matching each selector."""
    return page.evaluate(CONTRAST_JS, list(selectors))
