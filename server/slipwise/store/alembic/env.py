"""Alembic environment: migrate the connection slipwise hands in, inside its locked transaction.

``slipwise.store.migrations.upgrade`` opens the write transaction (``BEGIN IMMEDIATE`` on SQLite, an
advisory lock on PostgreSQL), puts the connection in ``config.attributes["connection"]`` and calls
``alembic.command.upgrade``; every pending revision then runs in that one transaction, so a failure
leaves the database as it was and two servers starting together migrate once.
"""

from __future__ import annotations

from alembic import context

from slipwise.store.schema import metadata

config = context.config
connection = config.attributes.get("connection")
if connection is None or context.is_offline_mode():
    raise RuntimeError("slipwise migrations run through slipwise.store.migrations.upgrade "
                       "(`slipwise db upgrade`), with a connection it has locked")

sqlite = connection.dialect.name == "sqlite"
context.configure(
    connection=connection,
    target_metadata=metadata,
    render_as_batch=True,  # SQLite cannot ALTER most things: batch mode recreates the table
    version_table_schema=config.attributes.get("schema"),  # the per-site PostgreSQL schema, if any
    transaction_per_migration=False,
)

with context.begin_transaction():
    context.run_migrations()

if sqlite:
    # batch operations copy a table, drop the old one and rename the copy, which SQLite allows only
    # with foreign-key enforcement off (Database.migration turns it off): check every reference here
    broken = connection.exec_driver_sql("PRAGMA foreign_key_check").fetchall()
    if broken:
        raise RuntimeError(f"a migration left rows whose foreign keys point nowhere: {broken[:5]}")
