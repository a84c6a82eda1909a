"""Baseline: the schema of release 2 (accounts, sites, motors with revisions, readings, flags, reviews, audit).

Revision 0002 (schema version 2). On a new, empty database it builds release 2's schema with release 2's
own frozen steps (``slipwise.store.legacy_steps``) and the ``schema_version`` table. A database made by
release 2 already has all of this: ``migrations.upgrade`` stamps it at 0002 without running this file.
"""

from __future__ import annotations

from alembic import op
from sqlalchemy import Column, Integer, MetaData, Table

from slipwise.store import legacy_steps

revision = "0002"
down_revision = None
branch_labels = None
depends_on = None


def upgrade() -> None:
    conn = op.get_bind()
    Table("schema_version", MetaData(), Column("version", Integer, nullable=False)).create(conn)
    conn.exec_driver_sql("INSERT INTO schema_version (version) VALUES (0)")
    for step in legacy_steps.STEPS:
        step(conn)
    conn.exec_driver_sql(f"UPDATE schema_version SET version = {int(revision)}")


def downgrade() -> None:
    raise NotImplementedError("slipwise does not downgrade a schema")
