"""The shared vectors of the provisional verdict against the Python engine.

``tests/vectors/provisional_verdict.json`` (written by ``tests/verdict_cases.py``) holds, per motor,
its nameplate and the provisional basis the server serves, and per case a reading and the engine's
result columns. Here the file is checked to be the engine's current output (the basis and every
expected value), and to reach every verdict word and every state of every judged quantity, so the
page's rules (``static/js/verdict.js``, checked against the same file in Chromium by
``tests/browser/test_provisional_verdict.py``) are exercised on each of them.
"""

from __future__ import annotations

import json

import pytest

from slipwise.engine.basis import provisional_bases

from .verdict_cases import LIST_KEYS, NUMBER_KEYS, VECTORS_PATH, WORD_KEYS, build_vectors, expected, server_results

VECTORS = json.loads(VECTORS_PATH.read_text(encoding="utf-8"))
REGENERATE = "the engine's output moved: rewrite the vectors with `python -m tests.verdict_cases` and look at the diff"


def _close(got, want, tol) -> bool:
    if want is None or got is None:
        return got is want
    if isinstance(want, (int, float)) and not isinstance(want, bool):
        return abs(got - want) <= tol["abs"] + tol["rel"] * abs(want)
    return got == want


def _same(got, want, tol) -> bool:
    if isinstance(want, dict):
        return isinstance(got, dict) and got.keys() == want.keys() and all(_same(got[k], want[k], tol) for k in want)
    if isinstance(want, list):
        return isinstance(got, list) and len(got) == len(want) and all(_same(g, w, tol) for g, w in zip(got, want))
    return _close(got, want, tol)


def test_the_bases_are_what_the_server_serves():
    tol = VECTORS["tolerance"]
    plates = [m["nameplate"] for m in VECTORS["motors"]]
    for plate, got, stored in zip(plates, provisional_bases(plates), (m["provisional_basis"] for m in VECTORS["motors"])):
        assert _same(got, stored, tol), (plate, REGENERATE)


def test_the_expected_results_are_the_engines():
    tol = VECTORS["tolerance"]
    plates = [m["nameplate"] for m in VECTORS["motors"]]
    readings = [(c["motor"], c["reading"]) for c in VECTORS["cases"]]
    for case, result in zip(VECTORS["cases"], server_results(plates, readings)):
        assert result is not None, case["reading"]
        got = expected(result)
        for key in NUMBER_KEYS + WORD_KEYS + LIST_KEYS:
            assert _close(got[key], case["expected"][key], tol), (key, case["reading"], REGENERATE)


def test_the_generator_is_seeded():
    # the file is reproducible from its seed (a new engine rewrites it, never a new random draw)
    again = build_vectors()
    assert [c["reading"] for c in again["cases"]] == [c["reading"] for c in VECTORS["cases"]]


def test_the_vectors_reach_every_verdict_and_state():
    cases = [c["expected"] for c in VECTORS["cases"]]
    assert len(cases) >= 250
    assert {c["verdict"] for c in cases} == {"sound", "watch", "act", "retake"}
    for key in ("load_state", "breakdown_state", "supply_state", "voltage_unbalance_state", "current_unbalance_state",
                "starting_state"):
        states = {c[key] for c in cases}
        # breakdown is never "at the limit" by the band rule: judged on its pessimistic end alone
        wanted = {"clear", "beyond"} | (set() if key in ("breakdown_state", "voltage_unbalance_state",
                                                         "current_unbalance_state") else {"at_limit"})
        assert wanted <= states, (key, states)
    flags = {f for c in cases for f in c["flags"]}
    assert flags == {"speed_above_synchronous", "overloaded", "over_service_factor", "near_breakdown", "underloaded",
                     "supply_out_of_tolerance", "voltage_unbalance", "current_unbalance", "readings_inconsistent",
                     "starting_torque_low"}
    assert {c["supply_zone"] for c in cases} == {"A", "B", "outside", "drive"}
    assert {c["operating_side"] for c in cases} == {"stable", "unstable", None}
    bases = [m["provisional_basis"] for m in VECTORS["motors"]]
    assert {b["supply"] for b in bases} == {"mains", "drive"} and {b["is_nema"] for b in bases} == {True, False}
    assert any(b["service_factor_given"] for b in bases) and any(b["circuit"]["rc_ohm"] for b in bases)
    assert any(c["reading"].get("power_kw") is not None for c in VECTORS["cases"])
    assert any(c["reading"].get("power_factor") is not None for c in VECTORS["cases"])


@pytest.mark.parametrize("key", ["verdict", "flags"])
def test_a_changed_threshold_changes_the_expected_results(key):
    """The basis carries the thresholds in force; the engine's results with other thresholds differ."""
    from slipwise.engine import Thresholds

    th = Thresholds(overloaded_pct=80.0, voltage_unbalance_pct=3.0)
    plates = [m["nameplate"] for m in VECTORS["motors"]]
    assert provisional_bases(plates[:1], th)[0]["thresholds"]["overloaded_pct"] == 80.0
    readings = [(c["motor"], c["reading"]) for c in VECTORS["cases"][:80]]
    moved = [expected(r)[key] != c["expected"][key] for r, c in zip(server_results(plates, readings, th), VECTORS["cases"])]
    assert any(moved)
