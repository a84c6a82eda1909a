"""One error shape for every failure: ``{"error": {"code", "message", "field"}}``."""

from __future__ import annotations

import json
import logging

from flask import Flask, Response
from sqlalchemy.exc import InterfaceError, OperationalError
from sqlalchemy.exc import TimeoutError as PoolTimeoutError
from werkzeug.exceptions import HTTPException

from slipwise.contract.errors import FieldError
from slipwise.store.errors import (ConflictError, NotFoundError, SchemaError, StoreError, UnavailableError,
                                 ValidationError)

log = logging.getLogger("slipwise.web")

_STORE_STATUS = {ValidationError: 400, NotFoundError: 404, ConflictError: 409}
_HTTP_CODES = {400: "bad_request", 401: "unauthorized", 403: "forbidden", 404: "not_found",
               405: "method_not_allowed", 406: "not_acceptable", 409: "conflict", 413: "body_too_large",
               414: "uri_too_long", 415: "unsupported_media_type", 429: "too_many_attempts",
               431: "headers_too_large", 500: "internal_error", 501: "not_implemented", 503: "unavailable"}


RETRY_AFTER_S = 5
# what SQLite says when it cannot write (file or folder read-only, disk full or failing)
_CANNOT_WRITE = ("readonly", "read-only", "disk is full", "disk i/o error", "write lock")


def unavailable_response(e: Exception) -> Response:
    """503 for a database that is down, read-only or full: nothing of this request was stored."""
    text = str(getattr(e, "orig", None) or e).strip()
    detail = text.splitlines()[0][:200] if text else type(e).__name__
    log.warning("database unavailable: %s", detail)
    if any(s in detail.lower() for s in _CANNOT_WRITE):
        message = ("the database is read-only or full at the moment (or its storage is failing): nothing was "
                   "stored by this request; try again later")
    else:
        message = "the database is not reachable at the moment: nothing was stored by this request; try again later"
    return error_response(503, "unavailable", message, None, {"Retry-After": str(RETRY_AFTER_S)})


class ApiError(Exception):
    """An error the API reports to the caller as is."""

    def __init__(self, status: int, code: str, message: str, field: str | None = None,
                 headers: dict | None = None):
        super().__init__(message)
        self.status, self.code, self.message, self.field = status, code, message, field
        self.headers = headers or {}


def error_response(status: int, code: str, message: str, field: str | None = None,
                   headers: dict | None = None) -> Response:
    body = json.dumps({"error": {"code": code, "message": message, "field": field}}, ensure_ascii=False)
    resp = Response(body, status=status, mimetype="application/json")
    for k, v in (headers or {}).items():
        resp.headers[k] = v
    return resp


def register(app: Flask) -> None:
    @app.errorhandler(ApiError)
    def _api(e: ApiError):
        return error_response(e.status, e.code, e.message, e.field, e.headers)

    @app.errorhandler(StoreError)
    def _store(e: StoreError):
        status = next((s for cls, s in _STORE_STATUS.items() if isinstance(e, cls)), 400)
        return error_response(status, e.code, e.message, e.field)

    @app.errorhandler(FieldError)
    def _field(e: FieldError):
        return error_response(400, e.code, e.message, e.field)

    @app.errorhandler(SchemaError)
    def _schema(e: SchemaError):
        log.error("database schema problem: %s", e)
        return error_response(503, "unavailable", "the database schema does not match this server")

    @app.errorhandler(OperationalError)
    @app.errorhandler(InterfaceError)
    @app.errorhandler(PoolTimeoutError)
    @app.errorhandler(UnavailableError)
    def _unavailable(e: Exception):
        return unavailable_response(e)

    @app.errorhandler(HTTPException)
    def _http(e: HTTPException):
        status = e.code or 500
        message = e.description or e.name
        if status == 413:
            limit = app.config["MAX_CONTENT_LENGTH"]
            message = f"the request body is larger than the limit of {limit} bytes"
        allow = {k: v for k, v in e.get_headers() if k == "Allow"}
        return error_response(status, _HTTP_CODES.get(status, "error"), message, None, allow)

    @app.errorhandler(Exception)
    def _unexpected(e: Exception):
        log.exception("unexpected error")
        return error_response(500, "internal_error", "internal error; nothing was stored by this request")
