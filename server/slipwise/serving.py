"""``slipwise serve``: the Flask app under gunicorn (threaded workers), with optional TLS.

The database is upgraded once in the master process before workers start;
each worker then builds its own app (and connection pool) after the fork.
"""

from __future__ import annotations

import sys
from pathlib import Path
from typing import Any

from gunicorn.app.base import BaseApplication


class _Server(BaseApplication):
    def __init__(self, config: dict[str, Any], options: dict[str, Any]):
        self._app_config = config
        self._options = options
        super().__init__()

    def load_config(self):
        for key, value in self._options.items():
            self.cfg.set(key, value)

    def load(self):
        from slipwise.web import create_app
        return create_app(self._app_config)


def _bind(host: str, port: int) -> str:
    return f"[{host}]:{port}" if ":" in host else f"{host}:{port}"


def _url_host(host: str) -> list[str]:
    if host in ("0.0.0.0", "::"):
        from slipwise.tls import local_addresses
        return [a for a in local_addresses() if ":" not in a or host == "::"]
    return [host]


def serve(args, config: dict[str, Any]) -> int:
    from sqlalchemy.exc import OperationalError

    from slipwise.store import Database, SchemaError
    from slipwise.store.errors import UnavailableError
    from slipwise.web import resolved_database_url

    if not 0 <= args.port <= 65535:
        print("slipwise: --port must be from 0 to 65535", file=sys.stderr)
        return 2
    if bool(args.cert) != bool(args.key):
        print("slipwise: give --cert and --key together", file=sys.stderr)
        return 2
    if args.self_signed and args.cert:
        print("slipwise: give --self-signed or --cert/--key, not both", file=sys.stderr)
        return 2
    cert, key = args.cert, args.key
    data_dir = Path(config["DATA_DIR"])
    if args.self_signed:
        from slipwise.tls import fingerprint_sha256, local_addresses, self_signed
        addresses = local_addresses()
        cert_path, key_path, made = self_signed(data_dir / "tls", addresses)
        cert, key = str(cert_path), str(key_path)
        print(f"{'made' if made else 'using'} self-signed certificate {cert} for {', '.join(addresses)}")
        print(f"  SHA-256 fingerprint {fingerprint_sha256(cert_path.read_bytes())}")
    for path, what in ((cert, "--cert"), (key, "--key")):
        if path and not Path(path).is_file():
            print(f"slipwise: {what} file not found: {path}", file=sys.stderr)
            return 2
    if config.get("THRESHOLDS"):
        try:
            from slipwise.web import load_thresholds
            load_thresholds(config["THRESHOLDS"])
        except (OSError, ValueError) as e:
            print(f"slipwise: --thresholds: {e}", file=sys.stderr)
            return 2

    import os
    schema = os.environ.get("SLIPWISE_DB_SCHEMA") or None
    db = Database(resolved_database_url({**config, "DATABASE_URL": config.get("DATABASE_URL")
                                         or os.environ.get("DATABASE_URL")}), schema=schema)
    upgraded = True
    try:
        done = db.migrate()
    except SchemaError as e:
        print(f"slipwise: {e}", file=sys.stderr)
        return 2
    except (OperationalError, UnavailableError) as e:
        # down at start (PostgreSQL not up yet, a read-only folder...): serve, and let the workers
        # check and upgrade the schema when the database answers; until then the API answers 503
        reason = str(getattr(e, "orig", None) or e).strip().splitlines()[0][:200]
        print(f"slipwise: the database {db.describe()} cannot be used now ({reason}); serving anyway: "
              "the API answers 503 until it can", file=sys.stderr)
        upgraded = False
    finally:
        db.dispose()
    if upgraded:
        print(f"database {db.describe()}: {done.describe()}")
    if not config.get("SECRET_KEY") and not os.environ.get("SLIPWISE_SECRET_KEY"):
        from slipwise.web import load_secret
        load_secret(data_dir)  # create it once here, not racing in each worker

    scheme = "https" if cert else "http"
    for h in _url_host(args.host):
        shown = f"[{h}]" if ":" in h else h
        print(f"slipwise serving on {scheme}://{shown}:{args.port}/")
    if args.host not in ("127.0.0.1", "localhost", "::1") and not cert:
        print("  note: without HTTPS (--cert/--key or --self-signed) tablets cannot use the page offline")
    sys.stdout.flush()
    options = {
        "bind": _bind(args.host, args.port),
        "workers": max(1, args.workers),
        "worker_class": "gthread",
        "threads": max(1, args.threads),
        "timeout": 120,
        "graceful_timeout": 10,
        "accesslog": None,
        "errorlog": "-",
        "loglevel": "warning",
        "proc_name": "slipwise",
        "preload_app": False,
    }
    if cert:
        options.update(certfile=cert, keyfile=key)
    _Server({**config, "AUTO_UPGRADE": not upgraded}, options).run()
    return 0
