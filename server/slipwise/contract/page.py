"""The declaration as the page reads it: ``static/fields.json``, written from the contract.

The page's checks (``static/js/fieldrules.js``) use these ranges, choices, text rules and
cell patterns instead of a copy of their own. ``tests/contract/test_page_declaration.py`` fails
when the file in ``static/`` differs from what this module writes; to refresh it run
``python -m slipwise.contract.page static/fields.json``.
"""

from __future__ import annotations

import json
import sys
from pathlib import Path

from .cells import AMBIGUOUS_PATTERN, NUMBER_PATTERN, TRIM_CHARS
from .fields import (ENGINE_VERSION, NAMEPLATE_CHOICES, NAMEPLATE_NUMBERS, READING_NUMBERS, SITE_NUMBERS, TEXT_FIELDS,
                     ChoiceField,
                     NumberField, TextField)


def _number(f: NumberField) -> dict:
    out = {"name": f.name, "low": f.low, "high": f.high, "unit": f.shown_unit or f.unit, "label": f.label}
    if f.required:
        out["required"] = True
    if f.integer:
        out["integer"] = True
    if f.hint:
        out["help"] = f.hint
    return out


def _choice(f: ChoiceField) -> dict:
    return {"name": f.name, "label": f.label, "choices": list(f.choices), "help": f.hint}


def _text(f: TextField) -> dict:
    return {"name": f.name, "label": f.label, "max_chars": f.max_chars, "required": f.required,
            "one_line": f.one_line, "refused_categories": sorted(f.refused_categories)}


def declaration() -> dict:
    """Everything the page needs to check a field as the server will."""
    return {
        "engine_version": ENGINE_VERSION,
        "cells": {"trim": TRIM_CHARS, "number_pattern": NUMBER_PATTERN, "ambiguous_pattern": AMBIGUOUS_PATTERN},
        "nameplate_numbers": [_number(f) for f in NAMEPLATE_NUMBERS],
        "nameplate_choices": [_choice(f) for f in NAMEPLATE_CHOICES],
        "reading_numbers": [_number(f) for f in READING_NUMBERS],
        "site_numbers": [_number(f) for f in SITE_NUMBERS],   # issue 11: a site's settings
        "text": {name: _text(f) for name, f in TEXT_FIELDS.items()},
    }


def render() -> str:
    return json.dumps(declaration(), ensure_ascii=True, indent=1) + "\n"


if __name__ == "__main__":
    Path(sys.argv[1]).write_text(render(), encoding="utf-8")
