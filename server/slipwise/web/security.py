"""Security headers on every response, CSRF tokens, request-body helpers."""

from __future__ import annotations

import hashlib
import hmac
import json
from typing import Any

from flask import Flask, request

from .errors import ApiError

# Only the page's own origin: no inline script or style, no plug-ins, no framing.
CONTENT_SECURITY_POLICY = ("default-src 'self'; script-src 'self'; style-src 'self'; img-src 'self'; "
                           "connect-src 'self'; font-src 'self'; manifest-src 'self'; worker-src 'self'; "
                           "object-src 'none'; base-uri 'self'; form-action 'self'; frame-ancestors 'none'")
# The picture (its styles are presentation attributes, see picture.py) loads and runs nothing.
SVG_CONTENT_SECURITY_POLICY = "default-src 'none'; frame-ancestors 'self'"

CSRF_HEADER = "X-CSRF-Token"


def csrf_token(secret: bytes, session_token: str) -> str:
    return hmac.new(secret, b"csrf:" + session_token.encode("utf-8"), hashlib.sha256).hexdigest()


def csrf_ok(secret: bytes, session_token: str, sent: str | None) -> bool:
    return bool(sent) and hmac.compare_digest(csrf_token(secret, session_token), sent)


def json_body() -> dict[str, Any]:
    """The request body as a JSON object, or a 4xx naming what is wrong."""
    if not request.is_json:
        raise ApiError(415, "unsupported_media_type", "send the body as JSON with Content-Type: application/json")
    raw = request.get_data(cache=True)
    try:
        data = json.loads(raw.decode("utf-8"))
    except (ValueError, UnicodeDecodeError, RecursionError):
        raise ApiError(400, "invalid_json", "the body is not valid UTF-8 JSON") from None
    if not isinstance(data, dict):
        raise ApiError(400, "invalid_json", "the body must be a JSON object")
    if b"\\u" in raw and _has_lone_surrogate(data):
        raise ApiError(400, "invalid_json", "the body holds an unpaired UTF-16 surrogate escape (\\ud800 to "
                                            "\\udfff alone), which is no character")
    return data


def _has_lone_surrogate(data: Any) -> bool:
    """True when a string of the parsed body (key or value) cannot be written as UTF-8.

    Only a ``\\u`` escape can produce one (the raw body is valid UTF-8); left in, it
    broke the database write or the error message that quoted it (500).
    """
    try:
        json.dumps(data, ensure_ascii=False).encode("utf-8")
    except UnicodeEncodeError:
        return True
    return False


def register(app: Flask) -> None:
    @app.after_request
    def _headers(resp):
        h = resp.headers
        h.setdefault("Content-Security-Policy", CONTENT_SECURITY_POLICY)
        h.setdefault("X-Content-Type-Options", "nosniff")
        h.setdefault("X-Frame-Options", "DENY")
        h.setdefault("Referrer-Policy", "no-referrer")
        h.setdefault("Cross-Origin-Opener-Policy", "same-origin")
        h.setdefault("Cross-Origin-Resource-Policy", "same-origin")
        h.setdefault("Permissions-Policy", "camera=(), microphone=(), geolocation=(), payment=(), usb=()")
        if request.is_secure:
            h.setdefault("Strict-Transport-Security", "max-age=31536000")
        if request.path.startswith("/api/"):
            h.setdefault("Cache-Control", "no-store")
        return resp
