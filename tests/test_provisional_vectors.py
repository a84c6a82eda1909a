"""The shared provisional vectors against the Python engine.

``tests/vectors/provisional.json`` holds nameplate + reading inputs and the
values worked out by hand in each case's ``working`` text (sources in its
``about``). The same file is checked against the page's
``static/js/provisional.js`` in headless Chromium
(``tests/browser/test_provisional_browser.py``), so the browser's provisional
result and the server's interpretation cannot drift apart.
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from slipwise.engine import interpret_one

VECTORS_PATH = Path(__file__).parent / "vectors" / "provisional.json"
VECTORS = json.loads(VECTORS_PATH.read_text(encoding="utf-8"))
KEYS = ("poles", "sync_speed_rpm", "slip_pct", "slip_rpm", "load_slip_pct",
        "voltage_unbalance_pct", "current_unbalance_pct")


def test_vectors_cover_the_cases_the_page_meets():
    cases = VECTORS["cases"]
    assert len(cases) >= 6
    # 50 and 60 Hz nameplates, a drive, a missing voltage, a speed above synchronous
    assert {c["nameplate"]["rated_frequency_hz"] for c in cases} >= {50, 60}
    assert any(c["nameplate"].get("supply") == "drive" for c in cases)
    assert any(c["expected"]["voltage_unbalance_pct"] is None for c in cases)
    assert any(c["expected"]["slip_pct"] < 0 and c["expected"]["load_slip_pct"] is None for c in cases)
    for c in cases:
        assert set(c["expected"]) == set(KEYS), c["name"]


@pytest.mark.parametrize("case", VECTORS["cases"], ids=lambda c: c["name"][:40])
def test_engine_matches_vector(case):
    record = {"tag": "VEC-1", **case["nameplate"], **case["reading"]}
    result = interpret_one(record)
    tol = VECTORS["tolerance"]
    for key in KEYS:
        want = case["expected"][key]
        got = result[key]
        if want is None:
            assert got is None, f"{key}: expected null, engine gave {got}"
        else:
            assert got == pytest.approx(want, rel=tol["rel"], abs=tol["abs"]), key
