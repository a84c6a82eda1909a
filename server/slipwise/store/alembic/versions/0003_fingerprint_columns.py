"""fingerprint columns

Revision 0003 (schema version 3), after 0002.

Every stored reading and review (an acceptance is the sign-off) gets a ``fingerprint``: the SHA-256 of
its content and the previous entry's fingerprint (``slipwise.fingerprint``), and a ``chain_position``
numbering readings and reviews together in the order they were stored. The one-row table
``record_chain`` holds the chain's length and its last fingerprint; writers lock it to append.

Rows stored before this revision are chained here in the order they were received (readings by
``received_at``, reviews by ``reviewed_at``; a reading before a review at the same instant; then by id).
Nothing stored is rewritten: ``inputs``, ``result``, ``engine_version`` and ``content_hash`` are read,
fingerprinted as they are, and left alone.

Rules (DEVELOPERS.md, "Adding a migration"): never edit a released revision; keep every row; never
rewrite a stored result (readings.result, engine_version, content_hash); use op.batch_alter_table so
SQLite can follow; define the tables you touch here, frozen, instead of importing schema.py.
"""

from __future__ import annotations

import sqlalchemy as sa
from alembic import op

from slipwise import fingerprint as chain
from slipwise.store.types import UTCDateTime

revision = '0003'
down_revision = '0002'
branch_labels = None
depends_on = None

_meta = sa.MetaData()
# the columns read or written here, as they are at this revision (frozen)
_readings = sa.Table(
    "readings", _meta,
    sa.Column("id", sa.Integer, primary_key=True),
    *[sa.Column(name, sa.Integer) for name in ("motor_id", "motor_revision_id", "technician_id",
                                               "supersedes_id", "chain_position")],
    *[sa.Column(name, sa.Text) for name in ("client_id", "inputs", "result", "engine_version", "content_hash",
                                            "taken_at", "taken_date", "fingerprint")],
    sa.Column("taken_at_utc", UTCDateTime), sa.Column("received_at", UTCDateTime),
)
_reviews = sa.Table(
    "reviews", _meta,
    sa.Column("id", sa.Integer, primary_key=True),
    sa.Column("reading_id", sa.Integer), sa.Column("reviewer_id", sa.Integer),
    sa.Column("decision", sa.Text), sa.Column("comment", sa.Text), sa.Column("reviewed_at", UTCDateTime),
    sa.Column("fingerprint", sa.Text), sa.Column("chain_position", sa.Integer),
)
_record_chain = sa.Table(
    "record_chain", _meta,
    sa.Column("id", sa.Integer, primary_key=True),
    sa.Column("length", sa.Integer, nullable=False),
    sa.Column("head", sa.String(64)),
    sa.CheckConstraint("id = 1", name="ck_record_chain_one_row"),
)


def upgrade() -> None:
    conn = op.get_bind()
    for table in ("readings", "reviews"):
        with op.batch_alter_table(table) as batch:
            batch.add_column(sa.Column("fingerprint", sa.String(64)))
            batch.add_column(sa.Column("chain_position", sa.Integer))
    op.create_index("ux_readings_chain_position", "readings", ["chain_position"], unique=True)
    op.create_index("ux_reviews_chain_position", "reviews", ["chain_position"], unique=True)
    _record_chain.create(conn)

    entries = [(r.received_at, 0, r.id, dict(r._mapping)) for r in conn.execute(sa.select(_readings))]
    entries += [(r.reviewed_at, 1, r.id, dict(r._mapping)) for r in conn.execute(sa.select(_reviews))]
    entries.sort(key=lambda e: e[:3])
    head = None
    updates = {0: [], 1: []}
    for position, (_, kind, row_id, row) in enumerate(entries, start=1):
        row["chain_position"] = position
        content = chain.reading_content(row) if kind == 0 else chain.review_content(row)
        head = chain.fingerprint(content, head)
        updates[kind].append({"row_id": row_id, "fp": head, "pos": position})
    for kind, table in ((0, _readings), (1, _reviews)):
        if updates[kind]:
            conn.execute(table.update().where(table.c.id == sa.bindparam("row_id"))
                         .values(fingerprint=sa.bindparam("fp"), chain_position=sa.bindparam("pos")),
                         updates[kind])
    conn.execute(_record_chain.insert().values(id=1, length=len(entries), head=head))


def downgrade() -> None:
    # slipwise upgrades only; restore the backup taken before the upgrade to go back
    raise NotImplementedError("slipwise does not downgrade a schema")
