"""Site settings (issue 11): each site's default running hours, energy price and visit interval.

Revision 0004 (schema version 4), after 0003 (the fingerprint columns).
Written 2026-12-03 20:24:50.684986.

Rules (DEVELOPERS.md, "Adding a migration"): never edit a released revision; keep every row; never
rewrite a stored result (readings.result, engine_version, content_hash); use op.batch_alter_table so
SQLite can follow; define the tables you touch here, frozen, instead of importing schema.py.
"""

from __future__ import annotations

import sqlalchemy as sa
from alembic import op

from slipwise.store.types import UTCDateTime


revision = '0004'
down_revision = '0003'
branch_labels = None
depends_on = None


def upgrade() -> None:
    # append-only: each change of a site's defaults is a new row, the latest row per site is in force
    op.create_table(
        "site_settings",
        sa.Column("id", sa.Integer, primary_key=True),
        sa.Column("site_id", sa.Integer, sa.ForeignKey("sites.id"), nullable=False),
        sa.Column("operating_hours_per_year", sa.Float),
        sa.Column("energy_price_per_kwh", sa.Float),
        sa.Column("visit_interval_months", sa.Integer, nullable=False),
        sa.Column("set_at", UTCDateTime, nullable=False),
        sa.Column("set_by", sa.Integer, sa.ForeignKey("users.id")),
    )
    op.create_index("ix_site_settings_site_id", "site_settings", ["site_id"])


def downgrade() -> None:
    # slipwise upgrades only; restore the backup taken before the upgrade to go back
    raise NotImplementedError("slipwise does not downgrade a schema")
