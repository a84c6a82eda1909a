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
from .fields import (ENGINE_VERSION, NAMEPLATE_CHOICES, NAMEPLATE_NUMBERS, READING_CHOICES, READING_NUMBERS,
                     READING_TEST_NUMBERS, SITE_NUMBERS, TEXT_FIELDS, ChoiceField, NumberField, TextField)


def _number(f: NumberField) -> dict:
    out = {"name": f.name, "low": f.low, "high": f.high, "unit": f.shown_unit or f.unit, "label": f.label}
    if f.required:
        out["required"] = True
    if f.integer:
        out["integer"] = True
    if f.hint:
        out["help"] = f.hint
    if f.needs:
        out["needs"] = list(f.needs)
    return out


def _choice(f: ChoiceField) -> dict:
    out = {"name": f.name, "label": f.label, "choices": list(f.choices), "help": f.hint}
    if f.default is not None:
        out["default"] = f.default
    return out


def _text(f: TextField) -> dict:
    out = {"name": f.name, "label": f.label, "max_chars": f.max_chars, "required": f.required,
           "one_line": f.one_line, "refused_categories": sorted(f.refused_categories)}
    if f.line_pattern:
        out["line_pattern"] = f.line_pattern
        out["help"] = f.hint
    return out


def sheet_criteria() -> dict:
    """The criteria of the sheet's tests, as the physics declares them, for the page's provisional states.

    Read from :mod:`slipwise.physics` (the one place they are written) and the default thresholds; the
    page computes its provisional states from these numbers, never from a copy of its own.
    """
    from slipwise.physics import insulation, protection, vibration, winding
    from slipwise.physics.flags import Thresholds

    def finite(x):
        return None if x == float("inf") else x
    return {
        "insulation": {
            "reference_temperature_c": insulation.REFERENCE_TEMPERATURE_C,
            "halving_interval_c": insulation.HALVING_INTERVAL_C,
            "minimum_form_wound_mohm": insulation.MINIMUM_FORM_WOUND_MOHM,
            "minimum_random_wound_mohm": insulation.MINIMUM_RANDOM_WOUND_MOHM,
            "form_wound_low_voltage_v": insulation.FORM_WOUND_LOW_VOLTAGE_V,
            "pi_minimum": {k.upper(): v for k, v in insulation.PI_MINIMUM.items()},
            "pi_not_judged_above_mohm": insulation.PI_NOT_JUDGED_ABOVE_MOHM,
            "tester_accuracy_pct": insulation.DEFAULT_TESTER_ACCURACY_PCT,
            "test_voltage_table": [[finite(u), inc, lo, hi] for u, inc, lo, hi in insulation.TEST_VOLTAGE_TABLE],
        },
        "winding": {
            "temperature_constant_c": winding.TEMPERATURE_CONSTANT_C,
            "reference_temperature_c": winding.DEFAULT_REFERENCE_TEMPERATURE_C,
            "unbalance_limit_pct": Thresholds().winding_resistance_unbalance_pct,
            "meter_accuracy_pct": winding.DEFAULT_METER_ACCURACY_PCT,
        },
        "overload": {
            "nec_limit_sf_or_rise_pct": protection.NEC_LIMIT_SF_OR_RISE_PCT,
            "nec_limit_other_pct": protection.NEC_LIMIT_OTHER_PCT,
            "nec_service_factor": protection.NEC_SERVICE_FACTOR,
            "iec_limit_pct": protection.IEC_LIMIT_PCT,
            "dial_band_pct": protection.DIAL_BAND_PCT,
            "no_trip_multiple": protection.NO_TRIP_MULTIPLE,
            "trip_multiple": protection.TRIP_MULTIPLE,
            "nema_designs": ["A", "B", "C", "D"],
        },
        "vibration": {
            "boundaries_mm_s": {f"{g}/{f}": list(b) for (g, f), b in vibration.ZONE_BOUNDARIES_MM_S.items()},
            "small_machine_max_kw": vibration.SMALL_MACHINE_MAX_KW,
            "group_2_max_kw": vibration.GROUP_2_MAX_KW,
            "group_1_max_kw": vibration.GROUP_1_MAX_KW,
            "meter_accuracy_pct": vibration.DEFAULT_METER_ACCURACY_PCT,
        },
    }


def declaration() -> dict:
    """Everything the page needs to check a field as the server will."""
    return {
        "engine_version": ENGINE_VERSION,
        "cells": {"trim": TRIM_CHARS, "number_pattern": NUMBER_PATTERN, "ambiguous_pattern": AMBIGUOUS_PATTERN},
        "nameplate_numbers": [_number(f) for f in NAMEPLATE_NUMBERS],
        "nameplate_choices": [_choice(f) for f in NAMEPLATE_CHOICES],
        "reading_numbers": [_number(f) for f in READING_NUMBERS],
        "reading_test_numbers": [_number(f) for f in READING_TEST_NUMBERS],
        "reading_choices": [_choice(f) for f in READING_CHOICES],
        "sheet_criteria": sheet_criteria(),
        "site_numbers": [_number(f) for f in SITE_NUMBERS],   # issue 11: a site's settings
        "text": {name: _text(f) for name, f in TEXT_FIELDS.items()},
    }


def render() -> str:
    return json.dumps(declaration(), ensure_ascii=True, separators=(",", ":")) + "\n"  # compact: it counts in the start weight


if __name__ == "__main__":
    Path(sys.argv[1]).write_text(render(), encoding="utf-8")
