"""The store: SQLAlchemy Core on SQLite (default) or PostgreSQL, with Alembic migrations.

Modules: ``database`` (connections; the only dialect-aware code), ``schema``
(tables), ``migrations`` (Alembic, run from code; scripts in ``alembic/``), ``accounts``, ``motors``,
``readings``, ``audit`` (the data operations), ``validation`` (request values
to contract types).
"""

from .database import Database, normalise_url, sqlite_url
from .errors import (ConflictError, NotFoundError, SchemaError, SchemaTooNewError, StoreError,
                     ValidationError)
from .migrations import HEAD as SCHEMA_VERSION

__all__ = ["Database", "normalise_url", "sqlite_url", "ConflictError", "NotFoundError", "SchemaError",
           "SchemaTooNewError", "StoreError", "ValidationError", "SCHEMA_VERSION"]
