"""The store: SQLAlchemy Core on SQLite (default) or PostgreSQL, with Alembic migrations.

Modules: ``database`` (connections; the only dialect-aware code), ``schema``
(tables), ``migrations`` (Alembic, run from code; scripts in ``alembic/``), ``accounts``, ``motors``,
``readings``, ``audit`` (the data operations). Request values are checked before
they reach the store, by the contract (``slipwise.contract``).
"""

from .database import Database, normalise_url, sqlite_url
from .errors import (ConflictError, NotFoundError, SchemaError, SchemaTooNewError, StoreError,
                     ValidationError)
from .migrations import HEAD as SCHEMA_VERSION

__all__ = ["Database", "normalise_url", "sqlite_url", "ConflictError", "NotFoundError", "SchemaError",
           "SchemaTooNewError", "StoreError", "ValidationError", "SCHEMA_VERSION"]
