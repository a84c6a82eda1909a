"""The page's provisional verdict (static/js/verdict.js) in Chromium against the engine.

* every rule: the shared vectors (tests/vectors/provisional_verdict.json, the engine's results over
  generated readings) value by value, and again with other thresholds in force;
* the agreement figure: over the demo day (field_samples/plant_day.csv) and a larger generated set,
  the provisional verdict equals the server's in at least 95 % of readings, and it never says "sound"
  where the server says "act", nor "clear" for a quantity the server finds "beyond".
"""

from __future__ import annotations

import json
from datetime import datetime, timezone

import pytest

from slipwise.contract import NUMBER_FIELDS
from slipwise.engine import Thresholds
from slipwise.engine.basis import provisional_bases

from ..verdict_cases import (AGREEMENT_MOTORS, AGREEMENT_READINGS, AGREEMENT_SEED, LIST_KEYS, NUMBER_KEYS,
                             VECTORS_PATH, WORD_KEYS, demo_day, expected, generated, server_results)
from .conftest import TABLET

pytestmark = pytest.mark.browser

VECTORS = json.loads(VECTORS_PATH.read_text(encoding="utf-8"))
STATE_KEYS = ("load_state", "breakdown_state", "supply_state", "voltage_unbalance_state", "current_unbalance_state",
              "starting_state")
JUDGE = """([bases, cases]) => import('/js/verdict.js').then(m =>
    cases.map(([j, reading]) => m.judgeReading(bases[j], reading)))"""


@pytest.fixture(scope="module")
def page(browser, service):
    ctx = browser.new_context(base_url=service.base, viewport=TABLET)
    p = ctx.new_page()
    p.goto("/manifest.webmanifest")  # same origin, without the page's own scripts
    yield p
    ctx.close()


# the whole provisional verdict as the reading form shows it: the running reading judged, and the sheet's
# tests (static/js/sheet.js) folded in, on the reading's own date
JUDGE_WITH_TESTS = """([bases, plates, cases]) => Promise.all([import('/js/verdict.js'), import('/js/sheet.js')]).then(
    ([v, sh]) => cases.map(([j, reading, day]) =>
        sh.withTests(v.judgeReading(bases[j], reading), sh.sheetStates(plates[j], reading, day))))"""


def judge_in_page(page, bases, readings):
    return page.evaluate(JUDGE, [bases, [[j, r] for j, r in readings]])


def _typed(values: dict) -> dict:
    """CSV text as the page's form holds it: numbers for the number fields, text for the others."""
    return {k: (float(v) if k in NUMBER_FIELDS and v not in ("", None) else v) for k, v in values.items()}


def judge_with_tests_in_page(page, bases, plates, readings):
    today = datetime.now(timezone.utc).date().isoformat()  # the server's date of a reading without taken_at
    cases = [[j, _typed(r), str(r.get("taken_at") or "")[:10] or today] for j, r in readings]
    return page.evaluate(JUDGE_WITH_TESTS, [bases, [_typed(p) for p in plates], cases])


def _close(got, want, tol) -> bool:
    if want is None:
        return got is None
    if isinstance(want, (int, float)) and not isinstance(want, bool):
        return isinstance(got, (int, float)) and abs(got - want) <= tol["abs"] + tol["rel"] * abs(want)
    return got == want


def test_every_rule_matches_the_engine_on_the_shared_vectors(page):
    tol = VECTORS["tolerance"]
    bases = [m["provisional_basis"] for m in VECTORS["motors"]]
    got = judge_in_page(page, bases, [(c["motor"], c["reading"]) for c in VECTORS["cases"]])
    wrong = [(i, key, case["expected"][key], result and result.get(key))
             for i, (case, result) in enumerate(zip(VECTORS["cases"], got))
             for key in NUMBER_KEYS + WORD_KEYS + LIST_KEYS
             if result is None or not _close(result[key], case["expected"][key], tol)]
    assert not wrong, f"{len(wrong)} values differ, first: {wrong[:5]}"


def test_the_thresholds_in_force_travel_with_the_basis(page):
    """A service with other thresholds: the basis carries them and the page judges with them."""
    th = Thresholds(underloaded_pct=30.0, overloaded_pct=90.0, near_breakdown_margin=2.0, voltage_unbalance_pct=2.0,
                    current_unbalance_pct=5.0, inconsistency_factor=1.5, starting_margin=1.6)
    plates = [m["nameplate"] for m in VECTORS["motors"]]
    readings = [(c["motor"], c["reading"]) for c in VECTORS["cases"]]
    want = [expected(r) for r in server_results(plates, readings, th)]
    got = judge_in_page(page, provisional_bases(plates, th), readings)
    keys = ("verdict", *STATE_KEYS, "flags", "limit_flags")
    wrong = [(i, k) for i, (w, g) in enumerate(zip(want, got)) for k in keys if g is None or g[k] != w[k]]
    assert not wrong, wrong[:5]
    assert [w["verdict"] for w in want] != [c["expected"]["verdict"] for c in VECTORS["cases"]]


def _agreement(page, plates, readings):
    results = server_results(plates, readings)
    kept = [(jr, res) for jr, res in zip(readings, results) if res is not None]   # the server refuses the rest
    got = judge_with_tests_in_page(page, provisional_bases(plates), plates, [jr for jr, _ in kept])
    same = sum(1 for (_, res), g in zip(kept, got) if g is not None and g["verdict"] == res["verdict"])
    unsafe = [(jr, res["verdict"], g and g["verdict"]) for (jr, res), g in zip(kept, got)
              if g is not None and ((g["verdict"] == "sound" and res["verdict"] == "act")
                                    or any(g[k] == "clear" and res[k] == "beyond" for k in STATE_KEYS))]
    return len(kept), same, unsafe


def test_the_provisional_verdict_agrees_with_the_servers(page):
    demo_plates, demo_readings = demo_day()
    n_demo, same_demo, unsafe_demo = _agreement(page, demo_plates, demo_readings)
    gen_plates, gen_readings = generated(AGREEMENT_SEED, AGREEMENT_MOTORS, AGREEMENT_READINGS)
    n_gen, same_gen, unsafe_gen = _agreement(page, gen_plates, gen_readings)
    n, same = n_demo + n_gen, same_demo + same_gen
    print(f"\nFIGURE provisional verdict = server's: demo day {same_demo}/{n_demo}, generated {same_gen}/{n_gen}, "
          f"all {same}/{n} = {100 * same / n:.1f} %; 'sound'/'clear' where the server says 'act'/'beyond': "
          f"{len(unsafe_demo) + len(unsafe_gen)}")
    assert n_demo >= 35 and n_gen >= 800
    assert same / n >= 0.95
    assert same_demo / n_demo >= 0.95
    assert not unsafe_demo and not unsafe_gen, (unsafe_demo + unsafe_gen)[:5]
