"""The per-app objects the views share (database, thresholds, secret, picture cache)."""

from __future__ import annotations

import threading
from dataclasses import dataclass, field
from typing import Any

from cachetools import LRUCache
from flask import current_app

from slipwise.store import Database


@dataclass
class State:
    db: Database
    secret: bytes
    thresholds: Any = None
    picture_cache: LRUCache = field(default_factory=lambda: LRUCache(maxsize=256))  # reading id -> SVG
    picture_lock: threading.Lock = field(default_factory=threading.Lock)
    auto_upgrade: bool = True      # upgrade an older schema (else refuse it)
    schema_ready: bool = False     # set once the schema was checked; not at start if the database was down
    schema_lock: threading.Lock = field(default_factory=threading.Lock)

    def ensure_schema(self) -> None:
        """Check (or upgrade) the schema the first time the database answers.

        Raises what the database raises while it is down (the API answers 503 then), and
        SchemaError for a schema this server cannot use.
        """
        if self.schema_ready:
            return
        with self.schema_lock:
            if not self.schema_ready:
                if self.auto_upgrade:
                    self.db.upgrade()
                else:
                    self.db.check_current()
                self.schema_ready = True


def state() -> State:
    return current_app.extensions["slipwise"]
