"""Exceptions raised by the store; the web layer and the CLI translate them."""

from __future__ import annotations

from slipwise.contract.errors import FieldError


class StoreError(Exception):
    """Base class: a request the store refuses, with the field it concerns."""

    code = "store_error"

    def __init__(self, message: str, field: str | None = None):
        super().__init__(message)
        self.message = message
        self.field = field


class NotFoundError(StoreError):
    code = "not_found"


class ConflictError(StoreError):
    code = "conflict"


class ValidationError(StoreError, FieldError):
    """A value refused by the store itself (the contract's refusals are :class:`FieldError`)."""

    code = "invalid_input"


class DuplicateError(ConflictError):
    """An insert met a unique index (a replayed client_id, a tag taken, a reading superseded twice).

    The caller decides what the duplicate means; nothing of the transaction is kept.
    """


class UnavailableError(Exception):
    """The database cannot be reached, or cannot write now (read-only, full, failing disk).

    Nothing of the request was stored; the caller may try again later.
    """


class SchemaError(Exception):
    """The database schema cannot be used by this version of slipwise."""


class SchemaTooNewError(SchemaError):
    """The database was written by a newer slipwise; refuse to touch it."""
