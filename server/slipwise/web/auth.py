"""Who is asking: cookie sessions (with CSRF) for the page, bearer tokens for scripts."""

from __future__ import annotations

import dataclasses

import functools
import math
from datetime import timedelta

from flask import Blueprint, current_app, g, jsonify, request

from slipwise.engine import Thresholds
from slipwise.store import accounts

from .errors import ApiError
from .params import has_control_character

from .security import CSRF_HEADER, csrf_ok, csrf_token, json_body
from .state import state

COOKIE_NAME = "slipwise_session"
ROLE_RANK = {"technician": 1, "supervisor": 2}
WRITE_METHODS = frozenset({"POST", "PUT", "PATCH", "DELETE"})
USER_FREE_FAILURES = 5
ADDRESS_FREE_FAILURES = 20

bp = Blueprint("auth", __name__)


def load_user() -> None:
    """Set g.user (dict or None) and g.auth ('bearer', 'cookie' or None) for this request."""
    g.user, g.auth, g.session_token = None, None, None
    header = request.headers.get("Authorization", "")
    if header:
        scheme, _, token = header.partition(" ")
        if scheme.lower() != "bearer" or not token.strip():
            raise ApiError(401, "unauthorized", "the Authorization header must be 'Bearer <token>'")
        with state().db.read() as conn:
            user = accounts.user_for_token(conn, token.strip())
        if user is None:
            raise ApiError(401, "unauthorized", "the bearer token is not valid")
        g.user, g.auth = user, "bearer"
        return
    token = request.cookies.get(COOKIE_NAME)
    if token:
        with state().db.read() as conn:
            user = accounts.user_for_session(conn, token)
        if user is not None:
            g.user, g.auth, g.session_token = user, "cookie", token


def requires(role: str):
    """Allow the view to users of ``role`` or above; check CSRF on cookie-authenticated writes."""
    rank = ROLE_RANK[role]

    def wrap(view):
        @functools.wraps(view)
        def inner(*args, **kwargs):
            if g.get("user") is None:
                raise ApiError(401, "unauthorized", "log in first (POST /api/v1/session) or send a bearer token")
            if ROLE_RANK[g.user["role"]] < rank:
                raise ApiError(403, "forbidden", f"this needs the {role} role; you are a {g.user['role']}")
            if g.auth == "cookie" and request.method in WRITE_METHODS:
                check_csrf()
            return view(*args, **kwargs)

        inner.required_role = role
        return inner
    return wrap


def check_csrf() -> None:
    if not csrf_ok(state().secret, g.session_token, request.headers.get(CSRF_HEADER)):
        raise ApiError(403, "csrf_failed", f"the {CSRF_HEADER} header is missing or wrong; "
                                           "use the csrf_token from POST or GET /api/v1/session")


def _thresholds() -> dict:
    """The flag thresholds this service applies (the page draws its load bar with them)."""
    return dataclasses.asdict(state().thresholds or Thresholds())


def _session_body(user: dict, token: str, expires_at=None) -> dict:
    body = {"user": user, "csrf_token": csrf_token(state().secret, token), "thresholds": _thresholds()}
    if expires_at is not None:
        body["expires_at"] = expires_at.isoformat()
    return body


@bp.post("/session")
def login():
    body = json_body()
    username, password = body.get("username"), body.get("password")
    # (control characters: no username has one, and PostgreSQL refuses a NUL in a query)
    if not isinstance(username, str) or not username or len(username) > 64 or has_control_character(username):
        raise ApiError(400, "invalid_input", "username is required: text of 1 to 64 characters without control "
                                             "characters", "username")
    if not isinstance(password, str) or not password or len(password) > accounts.PASSWORD_MAX_CHARS:
        raise ApiError(400, "invalid_input",
                       f"password is required: text of 1 to {accounts.PASSWORD_MAX_CHARS} characters", "password")
    extra = set(body) - {"username", "password"}
    if extra:
        name = sorted(extra)[0][:60]
        raise ApiError(400, "invalid_input", f"unknown field {name!r}; allowed fields: password, username", name)
    keys = {"user:" + username.lower(): USER_FREE_FAILURES,
            "address:" + (request.remote_addr or "unknown"): ADDRESS_FREE_FAILURES}
    db = state().db
    with db.read() as conn:
        wait = accounts.throttle_wait_seconds(conn, list(keys))
    if wait > 0:
        seconds = max(1, math.ceil(wait))
        raise ApiError(429, "too_many_attempts", f"too many failed logins; try again in {seconds} s",
                       headers={"Retry-After": str(seconds)})
    with db.read() as conn:
        user = accounts.authenticate(conn, username, password)
    if user is None:
        with db.write() as conn:
            accounts.register_failure(conn, keys)
        raise ApiError(401, "unauthorized", "the username or password is wrong")
    lifetime = timedelta(hours=float(current_app.config["SESSION_HOURS"]))
    with db.write() as conn:
        accounts.clear_failures(conn, ["user:" + username.lower()])
        token, expires_at = accounts.create_session(conn, user, lifetime)
    resp = jsonify(_session_body(user, token, expires_at))
    resp.status_code = 201
    resp.set_cookie(COOKIE_NAME, token, max_age=int(lifetime.total_seconds()), httponly=True, samesite="Lax",
                    secure=request.is_secure or bool(current_app.config["SESSION_COOKIE_SECURE"]), path="/")
    return resp


@bp.get("/session")
@requires("technician")
def whoami():
    if g.auth == "cookie":
        return jsonify(_session_body(g.user, g.session_token))
    return jsonify({"user": g.user, "csrf_token": None, "thresholds": _thresholds()})


@bp.delete("/session")
def logout():
    if g.get("auth") == "cookie":
        check_csrf()
        with state().db.write() as conn:
            accounts.end_session(conn, g.session_token)
    resp = current_app.response_class(status=204)
    resp.delete_cookie(COOKIE_NAME, path="/", httponly=True, samesite="Lax",
                       secure=request.is_secure or bool(current_app.config["SESSION_COOKIE_SECURE"]))
    return resp
