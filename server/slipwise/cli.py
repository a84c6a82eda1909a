"""``slipwise``: the command line. Parses options, calls the services and the web app, prints.

Subcommands: ``serve``, ``demo``, ``user add``, ``user list``, ``token create``,
``db upgrade``, ``db backup``, ``verify`` and ``analyze`` (in ``slipwise.cli_analyze``).

Exit status: 0 success, 1 refused (a user that exists, a bad password...; for
``verify``: the record's chain is broken), 2 usage or configuration error.
"""

from __future__ import annotations

import argparse
import getpass
import os
import sys
from pathlib import Path
from typing import Any

# One BLAS/OpenMP thread per server thread: the engine's small matrices gain nothing from a pool,
# and 2 workers x 4 threads x a pool per core oversubscribe the CPU. Set before numpy loads.
for _var in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_var, "1")

from slipwise.cli_analyze import add_analyze_parser  # noqa: E402


class CliError(Exception):
    def __init__(self, message: str, status: int = 1):
        super().__init__(message)
        self.status = status


def _data_dir(args) -> Path:
    return Path(args.data_dir or os.environ.get("SLIPWISE_DATA_DIR") or "data").resolve()


def _config(args, **extra) -> dict[str, Any]:
    config: dict[str, Any] = {"DATA_DIR": str(_data_dir(args))}
    if getattr(args, "database_url", None):
        config["DATABASE_URL"] = args.database_url
    if getattr(args, "thresholds", None):
        config["THRESHOLDS"] = args.thresholds
    config.update(extra)
    return config


def _open_database(args):
    """The configured database, as it is."""
    from slipwise.store import Database, sqlite_url
    url = (getattr(args, "database_url", None) or os.environ.get("DATABASE_URL")
           or sqlite_url(_data_dir(args) / "slipwise.sqlite3"))
    return Database(url, schema=os.environ.get("SLIPWISE_DB_SCHEMA") or None)


def _database(args):
    """The configured database, upgraded to this version's schema."""
    db = _open_database(args)
    db.upgrade()
    return db


# --- db upgrade / backup ----------------------------------------------------------
def cmd_db_upgrade(args) -> int:
    db = _open_database(args)
    try:
        done = db.migrate()
    finally:
        db.dispose()
    print(f"database {db.describe()}: {done.describe()}")
    return 0


def cmd_db_backup(args) -> int:
    db = _open_database(args)
    try:
        if db.dialect != "sqlite":
            raise CliError(f"{db.describe()} is PostgreSQL: slipwise db backup copies SQLite files; use "
                           "pg_dump (e.g. pg_dump -Fc -f slipwise.dump DBNAME) or pg_basebackup", 2)
        try:
            dest = db.backup(args.file)
        except (ValueError, OSError) as e:
            raise CliError(str(e), 2) from None
    finally:
        db.dispose()
    print(f"database {db.describe()}: copied to {dest} ({dest.stat().st_size} bytes)")
    return 0


# --- verify ----------------------------------------------------------------------
def cmd_verify(args) -> int:
    from slipwise.services.evidence import verify_record
    db = _open_database(args)
    try:
        db.check_current()  # reads only: an older database has no chain yet (slipwise db upgrade makes it)
        report = verify_record(db)
    finally:
        db.dispose()
    entries = f"{report.readings} readings and {report.reviews} reviews"
    if report.intact:
        head = f"; last fingerprint {report.head}" if report.head else ""
        print(f"database {db.describe()}: record intact: {entries} in one chain{head}")
        return 0
    print(f"database {db.describe()}: record NOT intact: {report.broken.describe()}", file=sys.stderr)
    print(f"(checked up to the break: {entries}; entries after it were not checked)", file=sys.stderr)
    return 1


# --- user / token -------------------------------------------------------------
def _read_password(args) -> str:
    if args.password_stdin:
        line = sys.stdin.readline()
        return line.rstrip("\r\n")
    if not sys.stdin.isatty():
        raise CliError("no terminal to ask for the password: pass --password-stdin and pipe it in", 2)
    first = getpass.getpass(f"password for {args.name}: ")
    if getpass.getpass("again: ") != first:
        raise CliError("the two passwords differ")
    return first


def cmd_user_add(args) -> int:
    from slipwise.services import accounts
    password = _read_password(args)
    user = accounts.add_user(_database(args), args.name, args.role, password, args.full_name or "")
    print(f"added {user['username']} ({user['role']})")
    return 0


def cmd_user_list(args) -> int:
    from slipwise.services import accounts
    users = accounts.list_users(_database(args))
    rows = [("username", "role", "full name", "active", "created")]
    rows += [(u["username"], u["role"], u["full_name"], "yes" if u["active"] else "no", u["created_at"][:19] + "Z")
             for u in users]
    widths = [max(len(r[i]) for r in rows) for i in range(len(rows[0]))]
    for r in rows:
        print("  ".join(c.ljust(w) for c, w in zip(r, widths)).rstrip())
    return 0


def cmd_token_create(args) -> int:
    from slipwise.services import accounts
    token = accounts.create_token(_database(args), args.name, args.label or "")
    print(f"bearer token for {args.name} (shown once; only its hash is stored):", file=sys.stderr)
    print(token)
    return 0


# --- serve / demo ---------------------------------------------------------------
def cmd_serve(args) -> int:
    from slipwise.serving import serve
    return serve(args, _config(args))


def cmd_demo(args) -> int:
    from slipwise.demo import run_demo
    return run_demo(args, _data_dir(args))


def _common(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("--data-dir", help="data folder (default: $SLIPWISE_DATA_DIR or ./data): SQLite file, "
                                           "secret key, certificates")
    parser.add_argument("--database-url", help="database URL (default: $DATABASE_URL or SQLite in the data "
                                               "folder); postgresql+psycopg://user@host/db for PostgreSQL")


def _serve_options(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("--host", default="127.0.0.1", help="address to bind (default 127.0.0.1; 0.0.0.0 for "
                                                            "tablets on the network, with HTTPS)")
    parser.add_argument("--port", type=int, default=8000, help="port (default 8000)")
    parser.add_argument("--cert", help="TLS certificate (PEM) for HTTPS")
    parser.add_argument("--key", help="TLS private key (PEM) for HTTPS")
    parser.add_argument("--self-signed", action="store_true",
                        help="make (or reuse) a self-signed certificate for this machine's addresses in the data "
                             "folder and serve HTTPS with it")
    parser.add_argument("--workers", type=int, default=2, help="worker processes (default 2)")
    parser.add_argument("--threads", type=int, default=4, help="threads per worker (default 4)")
    parser.add_argument("--thresholds", help="JSON file of flag thresholds (names of slipwise.engine.Thresholds)")


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(prog="slipwise", description="Commissioning checks for three-phase "
                                     "induction motors: a service for readings, review and the CSV record.")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    sub.required = True

    serve = sub.add_parser("serve", help="run the web service (production WSGI server)")
    _common(serve)
    _serve_options(serve)
    serve.set_defaults(func=cmd_serve)

    demo = sub.add_parser("demo", help="load the demo scenario into an SQLite database in the data folder, "
                                       "print the demo accounts, and serve")
    _common(demo)
    _serve_options(demo)
    demo.add_argument("--samples", help="folder with motors.csv, readings.csv, people.csv "
                                        "(default: field_samples/ of the installation)")
    demo.add_argument("--no-serve", action="store_true", help="load and print the accounts, then exit")
    demo.set_defaults(func=cmd_demo)

    user = sub.add_parser("user", help="manage accounts")
    user_sub = user.add_subparsers(dest="user_command", metavar="ACTION")
    user_sub.required = True
    add = user_sub.add_parser("add", help="add an account")
    _common(add)
    add.add_argument("name", help="username: lower-case letters, digits, . _ -")
    add.add_argument("--role", required=True, choices=("technician", "supervisor"))
    add.add_argument("--full-name", help="the person's name as shown in the record")
    add.add_argument("--password-stdin", action="store_true", help="read the password from the first line "
                                                                   "of standard input")
    add.set_defaults(func=cmd_user_add)
    lst = user_sub.add_parser("list", help="list accounts")
    _common(lst)
    lst.set_defaults(func=cmd_user_list)

    token = sub.add_parser("token", help="bearer tokens for scripts and data loggers")
    token_sub = token.add_subparsers(dest="token_command", metavar="ACTION")
    token_sub.required = True
    create = token_sub.add_parser("create", help="create a token for a user and print it once")
    _common(create)
    create.add_argument("name", help="the user the token acts as")
    create.add_argument("--label", help="what the token is for (kept with its hash)")
    create.set_defaults(func=cmd_token_create)

    dbp = sub.add_parser("db", help="database upkeep: upgrade the schema, back up an SQLite database")
    db_sub = dbp.add_subparsers(dest="db_command", metavar="ACTION")
    db_sub.required = True
    up = db_sub.add_parser("upgrade", help="bring a database of any earlier release to this release's schema "
                                           "(an SQLite file is copied beside itself first)")
    _common(up)
    up.set_defaults(func=cmd_db_upgrade)
    bk = db_sub.add_parser("backup", help="copy the SQLite database to FILE, consistently, while servers "
                                          "write (PostgreSQL: use pg_dump)")
    _common(bk)
    bk.add_argument("file", help="the copy to write (must not exist)")
    bk.set_defaults(func=cmd_db_backup)

    ver = sub.add_parser("verify", help="walk the record's chain of fingerprints: exit 0 when every stored "
                                        "reading and review is as it was stored, 1 naming the first that is not")
    _common(ver)
    ver.set_defaults(func=cmd_verify)

    add_analyze_parser(sub)
    return parser


def main(argv: list[str] | None = None) -> int:
    from sqlalchemy.exc import OperationalError

    from slipwise.store.errors import SchemaError, StoreError
    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        return int(args.func(args) or 0)
    except CliError as e:
        print(f"slipwise: {e}", file=sys.stderr)
        return e.status
    except StoreError as e:
        print(f"slipwise: {e.message}", file=sys.stderr)
        return 1
    except SchemaError as e:
        print(f"slipwise: {e}", file=sys.stderr)
        return 2
    except OperationalError as e:
        print(f"slipwise: cannot use the database: {str(e.orig).strip().splitlines()[0]}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        return 130


if __name__ == "__main__":
    sys.exit(main())
