"""Write the next migration file: ``python -m slipwise.store.new_revision "what it changes"``.

The equivalent of ``alembic revision -m`` for slipwise, which has no alembic.ini: the file goes into
``store/alembic/versions/`` as ``NNNN_what_it_changes.py`` with ``revision = "NNNN"``, the next integer
schema version, and ``down_revision`` the current head. Fill in ``upgrade()``; see DEVELOPERS.md,
"Adding a migration".
"""

from __future__ import annotations

import argparse
import sys

from alembic import command
from alembic.config import Config

from . import migrations


def write_revision(message: str, location: str = migrations.SCRIPT_LOCATION) -> str:
    """Create the next revision file in ``location`` and return its path."""
    cfg = Config()
    cfg.set_main_option("script_location", location)
    next_id = migrations.revision_id(migrations.head(location) + 1)
    script = command.revision(cfg, message=message, rev_id=next_id)
    migrations.known_revisions.cache_clear()
    return script.path


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(prog="python -m slipwise.store.new_revision",
                                     description="write the next schema migration file")
    parser.add_argument("message", help="what the revision changes, e.g. 'reading fingerprint column'")
    parser.add_argument("--scripts", default=migrations.SCRIPT_LOCATION,
                        help="the migration scripts folder (default: the package's own)")
    args = parser.parse_args(argv)
    print(write_revision(args.message, args.scripts))
    return 0


if __name__ == "__main__":
    sys.exit(main())
