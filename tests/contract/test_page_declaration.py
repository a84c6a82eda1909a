"""static/fields.json is the declaration as the page reads it; the service worker precaches it."""

from __future__ import annotations

import re
from pathlib import Path

from slipwise.contract import NAMEPLATE_NUMBERS, READING_NUMBERS, TAG_MAX_CHARS
from slipwise.contract.page import render

STATIC = Path(__file__).resolve().parents[2] / "static"


def test_fields_json_is_the_declaration():
    """Refresh with: python -m slipwise.contract.page static/fields.json"""
    assert (STATIC / "fields.json").read_text(encoding="utf-8") == render()


def test_fields_json_carries_ranges_and_tag_rules():
    import json
    decl = json.loads((STATIC / "fields.json").read_text(encoding="utf-8"))
    assert [(f["name"], f["low"], f["high"]) for f in decl["nameplate_numbers"] + decl["reading_numbers"]] == [
        (f.name, f.low, f.high) for f in NAMEPLATE_NUMBERS + READING_NUMBERS]
    assert decl["text"]["tag"]["max_chars"] == TAG_MAX_CHARS
    assert {"Cc", "Cf"} <= set(decl["text"]["tag"]["refused_categories"])


def test_service_worker_precaches_the_declaration_and_its_reader():
    sw = (STATIC / "sw.js").read_text(encoding="utf-8")
    precache = re.search(r"const PRECACHE = \[(.*?)\];", sw, re.S).group(1)
    assert '"/fields.json"' in precache and '"/js/fieldrules.js"' in precache
