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
    # release 2's scripts alone (head 0002): later revisions of this release (0003 site settings, ...) left out
    baseline_only = shutil.ignore_patterns("__pycache__", "000[3-9]_*.py", "00[1-9][0-9]_*.py")
    shutil.copytree(migrations.SCRIPT_LOCATION, scripts, ignore=baseline_only)
    release_2_scripts = tmp_path / "release_2_scripts"
    shutil.copytree(migrations.SCRIPT_LOCATION, release_2_scripts, ignore=baseline_only)
    path = write_revision("test column on readings", str(scripts))
    assert path.endswith("0003_test_column_on_readings.py")
    text = open(path).read()
    assert 'revision = "0003"' in text.replace("'", '"') and 'down_revision = "0002"' in text.replace("'", '"')
    open(path, "w").write(text.replace("    pass\n", ADD_COLUMN, 1))
    assert migrations.known_revisions(str(scripts)) == ("0002", "0003")

    release_2.build(database)
    before = release_2.snapshot(database)
    db = Database(database.url, schema=database.schema)
    with db.migration() as conn:
        done = migrations.upgrade(conn, 3, schema=database.schema, location=str(scripts))
    assert (done.before, done.after, done.stamped) == (2, 3, True)
    with db.read() as conn:
        assert migrations.status(conn) == migrations.Status(3, "0003")
    db.dispose()
    after = release_2.snapshot(database)
    assert after.pop("alembic_version") == [("0003",)]
    assert after.pop("schema_version") == [(3,)]
    before.pop("schema_version")
    # every reading kept, with the new column empty at the end; every other table untouched
    assert [r[:-1] for r in after.pop("readings")] == before.pop("readings")
    assert after == before
    # and release 2's scripts (head 0002) refuse the database now
    db = Database(database.url, schema=database.schema)
    try:
        with db.migration() as conn:
            migrations.upgrade(conn, schema=database.schema, location=str(release_2_scripts))
    except migrations.SchemaTooNewError as e:
        assert "newer than this slipwise" in str(e)
    else:
        raise AssertionError("a database at revision 0003 must be refused by scripts whose head is 0002")
    finally:
        db.dispose()
