"""${message}

Revision ${up_revision} (schema version ${int(up_revision)}), after ${down_revision}.
Written ${create_date}.

Rules (DEVELOPERS.md, "Adding a migration"): never edit a released revision; keep every row; never
rewrite a stored result (readings.result, engine_version, content_hash); use op.batch_alter_table so
SQLite can follow; define the tables you touch here, frozen, instead of importing schema.py.
"""

from __future__ import annotations

import sqlalchemy as sa
from alembic import op
${imports if imports else ""}

revision = ${repr(up_revision)}
down_revision = ${repr(down_revision)}
branch_labels = None
depends_on = None


def upgrade() -> None:
    ${upgrades if upgrades else "pass"}


def downgrade() -> None:
    # slipwise upgrades only; restore the backup taken before the upgrade to go back
    raise NotImplementedError("slipwise does not downgrade a schema")
