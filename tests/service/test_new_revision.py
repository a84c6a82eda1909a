"""A new revision written by the helper, on a copy of the scripts: numbered next, and it migrates.

The revision here recreates the readings table (SQLite's batch mode: copy, drop, rename) to show that a
table other tables refer to can be rebuilt inside the locked transaction with every row and reference
kept; it lives in a temporary copy of the scripts and never ships.
"""

from __future__ import annotations

import shutil

from slipwise.store import Database, migrations
from slipwise.store.new_revision import write_revision

from . import release_2

# "always" forces SQLite's copy-drop-rename (for an added column SQLite would ALTER in place);
# PostgreSQL ALTERs in place ("auto", the default, which real revisions keep)
ADD_COLUMN = '''    sqlite = op.get_bind().dialect.name == "sqlite"
    with op.batch_alter_table("readings", recreate="always" if sqlite else "auto") as batch:
        batch.add_column(sa.Column("note_for_test", sa.String(20)))
'''


def test_next_revision_is_numbered_and_upgrades_a_release_2_database(database, tmp_path):
    scripts = tmp_path / "scripts"
    shutil.copytree(migrations.SCRIPT_LOCATION, scripts, ignore=shutil.ignore_patterns("__pycache__"))
    head, nxt = migrations.revision_id(migrations.HEAD), migrations.revision_id(migrations.HEAD + 1)
    path = write_revision("test column on readings", str(scripts))
    assert path.endswith(f"{nxt}_test_column_on_readings.py")
    text = open(path).read()
    assert f'revision = "{nxt}"' in text.replace("'", '"') and f'down_revision = "{head}"' in text.replace("'", '"')
    open(path, "w").write(text.replace("    pass\n", ADD_COLUMN, 1))
    assert migrations.known_revisions(str(scripts)) == migrations.known_revisions() + (nxt,)

    release_2.build(database)
    before = release_2.snapshot(database)
    db = Database(database.url, schema=database.schema)
    with db.migration() as conn:
        done = migrations.upgrade(conn, int(nxt), schema=database.schema, location=str(scripts))
    assert (done.before, done.after, done.stamped) == (2, int(nxt), True)
    with db.read() as conn:
        assert migrations.status(conn) == migrations.Status(int(nxt), nxt)
    db.dispose()
    after = release_2.snapshot(database)
    assert after.pop("alembic_version") == [(nxt,)]
    assert after.pop("schema_version") == [(int(nxt),)]
    before.pop("schema_version")
    after.pop("record_chain", None)  # revision 0003's chain head
    assert after.pop("site_settings", []) == []  # revision 0004's table, empty
    # every reading and review kept, the columns added since (0003's fingerprint, the test's column) at the
    # end; every other table untouched
    for name in ("readings", "reviews"):
        width = len(before[name][0])
        assert [r[:width] for r in after.pop(name)] == before.pop(name), name
    assert after == before
    # and this release's own scripts refuse the database now
    db = Database(database.url, schema=database.schema)
    try:
        db.upgrade()
    except migrations.SchemaTooNewError as e:
        assert "newer than this slipwise" in str(e)
    else:
        raise AssertionError(f"a database at revision {nxt} must be refused by scripts whose head is {head}")
    finally:
        db.dispose()
