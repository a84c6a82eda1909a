"""The field page's files: what the service worker precaches exists, and nothing in static/
needs the internet or breaks the strict Content-Security-Policy."""

from __future__ import annotations

import json
import re
from pathlib import Path

STATIC = Path(__file__).resolve().parents[1] / "static"
SW = (STATIC / "sw.js").read_text(encoding="utf-8")


def precache_list() -> list[str]:
    block = re.search(r"const PRECACHE = \[(.*?)\];", SW, re.S).group(1)
    return re.findall(r'"([^"]+)"', block)


def network_only_list() -> list[str]:
    """Files the worker deliberately leaves out: screens that need the network anyway."""
    found = re.search(r"const NETWORK_ONLY = \[(.*?)\];", SW, re.S)
    return re.findall(r'"([^"]+)"', found.group(1)) if found else []


def test_every_precached_file_exists_and_every_page_file_is_precached():
    listed = precache_list()
    assert listed[0] == "/"
    for url in listed[1:]:
        assert (STATIC / url.lstrip("/")).is_file(), url
    shipped = {"/" + p.relative_to(STATIC).as_posix() for p in STATIC.rglob("*") if p.is_file()}
    shipped -= {"/sw.js", "/index.html"}  # the worker is not its own cache; index.html is "/"
    network_only = network_only_list()
    for url in network_only:
        assert (STATIC / url.lstrip("/")).is_file(), url
        assert url not in listed, url
    # every file is either precached or declared network-only (the desk and register screens, which say
    # offline that they need the network)
    assert network_only == ["/js/register.js", "/js/sites.js", "/js/daylog.js"]
    assert shipped == set(listed[1:]) | set(network_only)


def test_service_worker_shape():
    assert len(re.findall(r"^const VERSION = ", SW, re.M)) == 1
    assert "await cache.addAll(" in SW  # install waits for the whole precache
    assert "caches.delete(" in SW  # activate removes older versions
    assert "response.status < 400" in SW  # nothing >= 400 is cached


def test_no_inline_script_or_style_and_no_other_hosts():
    html = (STATIC / "index.html").read_text(encoding="utf-8")
    assert not re.search(r"<script(?![^>]*\bsrc=)[^>]*>", html), "inline script"
    assert "<style" not in html and " style=" not in html
    assert not re.search(r"\son[a-z]+=", html), "inline event handler"
    for path in STATIC.rglob("*"):
        if path.suffix not in {".html", ".js", ".css", ".webmanifest", ".svg"}:
            continue
        text = path.read_text(encoding="utf-8")
        # the SVG namespace is a name, not a request
        urls = [u for u in re.findall(r"https?://[^\s\"')]+", text) if u != "http://www.w3.org/2000/svg"]
        assert urls == [], (path.name, urls)
        if path.suffix == ".js":
            assert "innerHTML" not in text and "insertAdjacentHTML" not in text, path.name
            assert "setAttribute(\"style\"" not in text and "eval(" not in text, path.name
        if path.suffix == ".css":
            assert "@import" not in text and "url(" not in text, path.name


def test_manifest_icons_exist():
    manifest = json.loads((STATIC / "manifest.webmanifest").read_text(encoding="utf-8"))
    assert manifest["start_url"] == "/"
    for icon in manifest["icons"]:
        assert (STATIC / icon["src"].lstrip("/")).is_file(), icon["src"]
    sizes = {i["sizes"] for i in manifest["icons"]}
    assert {"192x192", "512x512"} <= sizes
