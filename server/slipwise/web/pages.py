"""The field page: ``static/`` at the repository root, served from the site root.

``/`` is ``static/index.html``; ``/sw.js`` must come from the root so the
service worker may control the whole page. Any other file of ``static/`` is
reachable at ``/static/<path>`` and at ``/<path>``. ``send_from_directory``
refuses paths that leave the folder (404), and a missing folder is a 404 too.
"""

from __future__ import annotations

import mimetypes
from pathlib import Path

from flask import Blueprint, current_app, send_from_directory
from werkzeug.exceptions import NotFound

bp = Blueprint("pages", __name__)

mimetypes.add_type("application/manifest+json", ".webmanifest")
mimetypes.add_type("text/javascript", ".js")

DEFAULT_STATIC_DIR = Path(__file__).resolve().parents[3] / "static"


def _send(path: str, no_cache: bool = False):
    folder = Path(current_app.config["STATIC_DIR"])
    if not folder.is_dir():
        raise NotFound("the page files are not installed")
    resp = send_from_directory(folder, path, max_age=0 if no_cache else 300)
    if no_cache:
        resp.headers["Cache-Control"] = "no-cache"
    return resp


@bp.get("/")
def index():
    return _send("index.html", no_cache=True)


@bp.get("/sw.js")
def service_worker():
    return _send("sw.js", no_cache=True)


@bp.get("/static/<path:path>")
def static_file(path: str):
    return _send(path)


@bp.get("/<path:path>")
def root_file(path: str):
    if path.startswith("api/"):
        raise NotFound("no such API route")
    return _send(path)
