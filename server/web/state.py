"""The per-app objects the views share (database, thresholds, secret, picture cache)."""

from __future__ import annotations

import threading
from collections import OrderedDict
from dataclasses import dataclass, field
from typing import Any

from flask import current_app

from server.store import Database


@dataclass
class State:
    db: Database
    secret: bytes
    thresholds: Any = None
    picture_cache: "OrderedDict[tuple, bytes]" = field(default_factory=OrderedDict)
    picture_lock: threading.Lock = field(default_factory=threading.Lock)
    picture_cache_size: int = 256


def state() -> State:
    return current_app.extensions["slipwise"]
