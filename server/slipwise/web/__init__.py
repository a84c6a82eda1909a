"""The web service: ``create_app`` builds the Flask application.

Configuration, lowest to highest precedence: defaults below, environment
variables (``DATABASE_URL``; ``SLIPWISE_<KEY>`` for any key, e.g.
``SLIPWISE_DATA_DIR``, ``SLIPWISE_SECRET_KEY``), then ``test_config``.
Nothing is read at import time.
"""

from __future__ import annotations

import json
import logging
import os
import secrets
from pathlib import Path
from typing import Any, Mapping

from flask import Flask, request
from sqlalchemy.exc import OperationalError

from slipwise.store import Database, sqlite_url
from slipwise.store.errors import UnavailableError

from . import auth, errors, export, history, misc, motors, pages, readings, security
from .params import IdConverter, PagePathConverter, ids_in_range
from .state import State

API_PREFIX = "/api/v1"

DEFAULTS: dict[str, Any] = {
    "DATA_DIR": "data",
    "DATABASE_URL": None,          # default: SQLite file slipwise.sqlite3 in DATA_DIR
    "DB_SCHEMA": None,             # PostgreSQL schema to use (search_path); tests give each run its own
    "SECRET_KEY": None,            # default: generated once and kept in DATA_DIR/secret_key
    "THRESHOLDS": None,            # mapping, or path of a JSON file, for slipwise.engine.Thresholds
    "TREND_THRESHOLDS": None,      # issue 11: mapping, JSON text or path, for slipwise.physics.trend.TrendThresholds
    "MAX_CONTENT_LENGTH": 256 * 1024,
    "SESSION_HOURS": 12,           # one shift
    "SESSION_COOKIE_SECURE": False,  # True forces Secure cookies behind a TLS-terminating proxy
    "PROXY_HOPS": 0,               # proxies (load balancers) in front whose X-Forwarded-For/-Proto are trusted
    "AUTO_UPGRADE": True,          # upgrade an older schema at start (a newer one is always refused)
    "STATIC_DIR": None,            # default: static/ at the repository root
}


def _env_config() -> dict[str, Any]:
    out: dict[str, Any] = {}
    if os.environ.get("DATABASE_URL"):
        out["DATABASE_URL"] = os.environ["DATABASE_URL"]
    for key in DEFAULTS:
        value = os.environ.get("SLIPWISE_" + key)
        if value is not None and value != "":
            out[key] = value
    return out


def load_secret(data_dir: Path) -> bytes:
    """The secret kept in the data folder, created (mode 600) on first use."""
    path = data_dir / "secret_key"
    data_dir.mkdir(parents=True, exist_ok=True)
    try:
        fd = os.open(path, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o600)
    except FileExistsError:
        pass
    else:
        with os.fdopen(fd, "w") as f:
            f.write(secrets.token_hex(32))
    return path.read_text().strip().encode("ascii")


def load_thresholds(value: Any):
    if value is None or value == "":
        return None
    from slipwise.engine import thresholds_from_mapping
    if isinstance(value, Mapping):
        return thresholds_from_mapping(dict(value))
    if isinstance(value, str) and value.lstrip().startswith("{"):
        return thresholds_from_mapping(json.loads(value))
    return thresholds_from_mapping(json.loads(Path(value).read_text()))


def load_trend_thresholds(value: Any):
    """Issue 11: the change-from-baseline marks (``TrendThresholds``) with the configured overrides."""
    from slipwise.engine.history import trend_thresholds
    if value is None or value == "":
        return trend_thresholds(None)
    if isinstance(value, str):
        value = json.loads(value if value.lstrip().startswith("{") else Path(value).read_text())
    return trend_thresholds(value)


def resolved_database_url(config: Mapping[str, Any]) -> str:
    return config.get("DATABASE_URL") or sqlite_url(Path(config["DATA_DIR"]) / "slipwise.sqlite3")


def create_app(test_config: Mapping[str, Any] | None = None) -> Flask:
    app = Flask(__name__, static_folder=None)
    app.config.from_mapping(DEFAULTS)
    app.config.update(_env_config())
    if test_config:
        app.config.update(test_config)
    app.config["MAX_CONTENT_LENGTH"] = int(app.config["MAX_CONTENT_LENGTH"])
    app.config["STATIC_DIR"] = str(app.config["STATIC_DIR"] or pages.DEFAULT_STATIC_DIR)
    data_dir = Path(app.config["DATA_DIR"]).resolve()
    secret = app.config["SECRET_KEY"]
    secret = secret.encode("utf-8") if isinstance(secret, str) else (secret or load_secret(data_dir))
    app.config["SECRET_KEY"] = secret

    db = Database(resolved_database_url(app.config), schema=app.config["DB_SCHEMA"] or None)
    st = State(db=db, secret=secret, thresholds=load_thresholds(app.config["THRESHOLDS"]),
               auto_upgrade=app.config["AUTO_UPGRADE"] in (True, "1", "true", "True"))
    try:
        st.ensure_schema()
    except (OperationalError, UnavailableError) as e:
        # down, or unreadable, at start: serve anyway; the API answers 503 until the database is back
        logging.getLogger("slipwise.web").warning("database not usable at start (%s); checking again per request",
                                                  str(getattr(e, "orig", None) or e).strip().splitlines()[0][:200])
    app.extensions["slipwise"] = st
    app.extensions["slipwise_trend"] = load_trend_thresholds(app.config["TREND_THRESHOLDS"])   # issue 11

    hops = int(app.config["PROXY_HOPS"] or 0)
    if hops < 0:
        raise ValueError("PROXY_HOPS must be 0 or more")
    if hops:
        # behind a balancer every request comes from its address: the login throttle's per-address key and
        # Secure cookies need the client's address and scheme, which only the trusted hops may say
        from werkzeug.middleware.proxy_fix import ProxyFix
        app.wsgi_app = ProxyFix(app.wsgi_app, x_for=hops, x_proto=hops)  # type: ignore[method-assign]

    app.url_map.converters["id"] = IdConverter
    app.url_map.converters["path"] = PagePathConverter
    app.url_value_preprocessor(ids_in_range)
    app.url_map.strict_slashes = False
    errors.register(app)
    security.register(app)

    @app.before_request
    def _who():
        if request.path.startswith(API_PREFIX + "/"):
            if request.path not in (API_PREFIX + "/health", API_PREFIX + "/openapi.json"):
                st.ensure_schema()
            auth.load_user()

    for bp in (auth.bp, motors.bp, readings.bp, export.bp, misc.bp, history.bp):   # history: issue 11
        app.register_blueprint(bp, url_prefix=API_PREFIX)
    app.register_blueprint(pages.bp)
    return app
