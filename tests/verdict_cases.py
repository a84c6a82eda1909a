"""Generated nameplates and readings for the provisional verdict, and the engine's results for them.

One seeded generator feeds two things:

* the shared vectors ``tests/vectors/provisional_verdict.json`` (each motor's provisional basis as
  the server serves it, each reading, and the engine's result columns), checked against the engine
  by ``tests/test_provisional_verdict.py`` and against ``static/js/verdict.js`` in Chromium by
  ``tests/browser/test_provisional_verdict.py``;
* the agreement figure (README): over the demo day and a larger generated set, how often the
  page's provisional verdict equals the server's.

The nameplates and readings are invented, shaped like catalogue motors and field readings (typical
slip, efficiency and power factor by size: common practice, from memory) and spread on purpose
across every state: supply zones A/B/outside and NEMA's tolerance, unbalance, overload, idling,
a tachometer on the pulley (readings that contradict each other), drives and high breakaway loads.

``python -m tests.verdict_cases`` rewrites the vectors file (after a change of the engine).
"""

from __future__ import annotations

import csv
import json
import math
from pathlib import Path

import numpy as np

from slipwise.contract.fields import TEST_FIELDS
from slipwise.engine import interpret_columns
from slipwise.engine.basis import provisional_bases
from slipwise.engine.records import records_to_columns, row_record

ROOT = Path(__file__).resolve().parents[1]
VECTORS_PATH = ROOT / "tests" / "vectors" / "provisional_verdict.json"
DEMO_DAY = ROOT / "field_samples" / "plant_day.csv"
#: Result columns the page's provisional verdict gives, each checked against the engine's.
NUMBER_KEYS = ("load_pct", "load_low_pct", "load_high_pct", "load_slip_pct", "load_current_pct", "load_power_pct",
               "torque_pct", "torque_low_pct", "torque_high_pct", "breakdown_torque_now_pct", "breakdown_margin",
               "breakdown_margin_low", "starting_margin", "voltage_unbalance_pct", "current_unbalance_pct",
               "voltage_deviation_pct", "frequency_deviation_pct", "slip_pct", "sync_speed_rpm")
WORD_KEYS = ("verdict", "load_state", "breakdown_state", "supply_state", "voltage_unbalance_state",
             "current_unbalance_state", "starting_state", "supply_zone", "operating_side")
LIST_KEYS = ("flags", "limit_flags")
VECTOR_SEED, VECTOR_MOTORS, VECTOR_READINGS = 20261124, 40, 320
AGREEMENT_SEED, AGREEMENT_MOTORS, AGREEMENT_READINGS = 7, 120, 900

NAMEPLATE_KEYS = ("rated_power_kw", "rated_power_hp", "rated_voltage_v", "rated_current_a", "rated_frequency_hz",
                  "rated_speed_rpm", "poles", "rated_power_factor", "rated_efficiency_pct", "service_factor",
                  "breakdown_torque_pct", "locked_rotor_torque_pct", "design", "supply", "driven_load")
READING_KEYS = ("frequency_hz", "speed_rpm", "current_l1_a", "current_l2_a", "current_l3_a", "voltage_l12_v",
                "voltage_l23_v", "voltage_l31_v", "power_kw", "power_factor", "minutes_running",
                "tachometer_resolution_rpm", "current_accuracy_pct", "voltage_accuracy_pct", "power_accuracy_pct")


def _nameplate(rng: np.random.Generator) -> dict:
    f = float(rng.choice([50.0, 60.0]))
    poles = int(rng.choice([2, 4, 4, 4, 6, 8]))
    kw = float(np.exp(rng.uniform(np.log(0.55), np.log(250.0))))
    kw = float(f"{kw:.2g}") if kw < 10 else float(round(kw))
    # rated slip falls with size (catalogue motors: ~6 % at 0.55 kW, ~0.7 % at 250 kW; from memory)
    slip = float(np.clip(0.045 * kw ** -0.3 * rng.uniform(0.8, 1.25), 0.004, 0.09))
    ns = 120.0 * f / poles
    eta = float(np.clip(0.96 - 0.09 * kw ** -0.35 * rng.uniform(0.9, 1.1), 0.70, 0.97))
    pf = float(np.clip(0.89 - 0.07 * kw ** -0.3 - 0.02 * (poles - 4) + rng.normal(0, 0.02), 0.6, 0.92))
    v = float(rng.choice([400.0, 415.0, 690.0, 230.0]) if f == 50 else rng.choice([460.0, 575.0, 230.0]))
    i = kw * 1000.0 / (math.sqrt(3.0) * v * pf * eta)
    plate: dict = {"rated_voltage_v": v, "rated_current_a": round(i, 1 if i < 100 else 0),
                   "rated_frequency_hz": f, "rated_speed_rpm": round(ns * (1.0 - slip))}
    if f == 60 and rng.random() < 0.5:
        plate["rated_power_hp"] = round(kw * 1000.0 / 745.7, 1)
    else:
        plate["rated_power_kw"] = kw
    if rng.random() < 0.7:
        plate["rated_power_factor"] = round(pf, 2)
    if rng.random() < 0.7:
        plate["rated_efficiency_pct"] = round(100 * eta, 1)
    if rng.random() < 0.3:
        plate["poles"] = poles
    if rng.random() < 0.25:
        plate["service_factor"] = float(rng.choice([1.0, 1.15, 1.25]))
    if rng.random() < 0.2:
        plate["breakdown_torque_pct"] = float(rng.choice([160, 200, 230, 280, 320]))
    if rng.random() < 0.2:
        plate["locked_rotor_torque_pct"] = float(rng.choice([80, 120, 150, 200, 260]))
    plate["design"] = str(rng.choice(["A", "B", "C", "D", ""] if f == 60 else ["N", "H", ""]))
    plate["supply"] = "drive" if rng.random() < 0.25 else "mains"
    plate["driven_load"] = str(rng.choice(["variable_torque", "constant_torque", "constant_power", "high_breakaway"]))
    plate["_model"] = {"kw": kw, "slip": slip, "eta": eta, "pf": pf, "poles": poles, "i0_share": rng.uniform(0.3, 0.45)}
    return plate


def _reading(rng: np.random.Generator, plate: dict) -> dict:
    m = plate["_model"]
    f_r, v_r, i_r = plate["rated_frequency_hz"], plate["rated_voltage_v"], plate["rated_current_a"]
    drive = plate["supply"] == "drive"
    kind = rng.random()
    if drive:
        f = f_r * rng.uniform(0.35, 1.15)
        v = v_r * min(f / f_r, 1.0) * rng.normal(1.0, 0.03)
    else:
        # mostly a good supply; now and then a weak or generator-fed one (zone B, outside)
        f = f_r * (1.0 + (rng.normal(0, 0.008) if kind > 0.15 else rng.uniform(-0.07, 0.05)))
        v = v_r * (1.0 + (rng.normal(0, 0.03) if kind > 0.15 else rng.uniform(-0.14, 0.12)))
    load = float(rng.choice([rng.uniform(0.05, 0.5), rng.uniform(0.4, 1.0), rng.uniform(0.85, 1.4)]))
    ns = 120.0 * f / m["poles"]
    ns_r = 120.0 * f_r / m["poles"]
    flux = (v / f) / (v_r / f_r)
    speed = ns - m["slip"] * ns_r * load / flux ** 2 * rng.normal(1.0, 0.08)
    if rng.random() < 0.04:
        speed = ns + rng.choice([0.0, 0.4, 3.0])              # idling at (or read above) synchronous speed
    if rng.random() < 0.05:
        speed *= rng.uniform(0.6, 0.95)                          # the tachometer on the pulley
    i0 = m["i0_share"] * i_r * flux ** 3
    i_load = math.sqrt(max(i_r ** 2 - (m["i0_share"] * i_r) ** 2, 0.0)) * load / max(flux * speed / plate["rated_speed_rpm"], 0.05)
    i = math.sqrt(i0 ** 2 + i_load ** 2) * rng.normal(1.0, 0.04)
    i_spread = float(rng.choice([0.005, 0.02, 0.05, 0.12]))
    v_spread = float(rng.choice([0.001, 0.002, 0.004, 0.008, 0.015]))
    r: dict = {"frequency_hz": round(f, 2), "speed_rpm": round(speed)}
    for k in ("current_l1_a", "current_l2_a", "current_l3_a"):
        r[k] = round(i * rng.normal(1.0, i_spread), 1)
    n_volts = 3 if rng.random() < 0.85 else int(rng.choice([1, 2]))
    if drive and rng.random() < 0.3:
        n_volts = 0
    for k in ("voltage_l12_v", "voltage_l23_v", "voltage_l31_v")[:n_volts]:
        r[k] = round(v * rng.normal(1.0, v_spread))
    if rng.random() < 0.3:
        p_in = load * m["kw"] / m["eta"] * rng.normal(1.0, 0.04) + 0.01 * m["kw"]
        r["power_kw"] = round(p_in, 2)
    elif rng.random() < 0.3:
        r["power_factor"] = round(float(np.clip(m["pf"] * (0.5 + 0.5 * min(load, 1.0)) * rng.normal(1, 0.05), 0.1, 0.99)), 2)
    if rng.random() < 0.5:
        r["minutes_running"] = float(rng.choice([5, 20, 60, 240]))
    if rng.random() < 0.2:
        r["tachometer_resolution_rpm"] = float(rng.choice([0.1, 1.0, 5.0]))
    if rng.random() < 0.15:
        r["current_accuracy_pct"] = float(rng.choice([1.0, 3.0, 5.0]))
    if rng.random() < 0.15:
        r["voltage_accuracy_pct"] = float(rng.choice([0.5, 2.0]))
    return r


def _plain(value):
    """A numpy scalar as the Python number it holds (JSON knows no numpy types)."""
    return value.item() if isinstance(value, np.generic) else value


def _public(plate: dict) -> dict:
    return {k: _plain(v) for k, v in plate.items() if not k.startswith("_") and v != ""}


def generated(seed: int, n_motors: int, n_readings: int) -> tuple[list[dict], list[tuple[int, dict]]]:
    """(nameplates the engine accepts, [(nameplate index, reading)]) from a seeded generator."""
    rng = np.random.default_rng(seed)
    plates = []
    while len(plates) < n_motors:
        p = _nameplate(rng)
        if provisional_bases([_public(p)])[0] is not None:
            plates.append(p)
    readings = [(int(j), {k: _plain(v) for k, v in _reading(rng, plates[j]).items()})
                for j in rng.integers(0, len(plates), n_readings)]
    return [_public(p) for p in plates], readings


def demo_day() -> tuple[list[dict], list[tuple[int, dict]]]:
    """The demo scenario's motors and readings (field_samples/plant_day.csv)."""
    with DEMO_DAY.open(encoding="utf-8", newline="") as fh:
        rows = list(csv.DictReader(fh))
    plates: list[dict] = []
    index: dict = {}
    readings = []
    for row in rows:
        plate = {k: row[k] for k in NAMEPLATE_KEYS if row.get(k, "").strip()}
        key = json.dumps(plate, sort_keys=True)
        if key not in index:
            index[key] = len(plates)
            plates.append(plate)
        # the running values and the sheet's tests as entered, and the date the reading was taken
        readings.append((index[key], {k: row[k] for k in (*READING_KEYS, *TEST_FIELDS, "taken_at")
                                      if row.get(k, "").strip()}))
    return plates, readings


def server_results(plates: list[dict], readings: list[tuple[int, dict]], thresholds=None) -> list[dict | None]:
    """The engine's result per reading (None where it refuses the reading), as the server stores it."""
    records = [{"tag": f"GEN-{j}", **plates[j], **r} for j, r in readings]
    out = interpret_columns(records_to_columns(records), thresholds)
    return [None if out["error"][i] else row_record(out, i) for i in range(len(records))]


def expected(result: dict) -> dict:
    """The columns the page's provisional verdict is compared on."""
    e = {k: result[k] for k in NUMBER_KEYS + WORD_KEYS}
    e["flags"] = list(result["flags"])
    e["limit_flags"] = [c for c in (result["limit_flags"] or "").split(";") if c]
    return e


def build_vectors() -> dict:
    plates, readings = generated(VECTOR_SEED, VECTOR_MOTORS, VECTOR_READINGS)
    bases = provisional_bases(plates)
    results = server_results(plates, readings)
    cases = [{"motor": j, "reading": r, "expected": expected(res)}
             for (j, r), res in zip(readings, results) if res is not None]
    return {
        "about": "Shared vectors of the provisional verdict: per motor its nameplate and provisional basis (as "
                 "GET /api/v1/motors serves it), per case a reading and the engine's result columns "
                 "(slipwise.engine.interpret_columns). Generated by tests/verdict_cases.py (seeded, invented "
                 "motors); checked against the engine by tests/test_provisional_verdict.py and against "
                 "static/js/verdict.js in Chromium by tests/browser/test_provisional_verdict.py. null = the "
                 "engine gives none.",
        "tolerance": {"rel": 1e-7, "abs": 1e-7},
        "motors": [{"nameplate": p, "provisional_basis": b} for p, b in zip(plates, bases)],
        "cases": cases,
    }


if __name__ == "__main__":
    data = build_vectors()
    # one motor or case per line: a diff after an engine change shows which cases moved
    lines = ",\n".join
    head = {k: data[k] for k in ("about", "tolerance")}
    text = (json.dumps(head, indent=1, ensure_ascii=False)[:-2] + ',\n "motors": [\n'
            + lines(json.dumps(m, ensure_ascii=False) for m in data["motors"]) + '\n],\n "cases": [\n'
            + lines(json.dumps(c, ensure_ascii=False) for c in data["cases"]) + "\n]\n}\n")
    assert json.loads(text) == data
    VECTORS_PATH.write_text(text, encoding="utf-8")
    words = [c["expected"]["verdict"] for c in data["cases"]]
    print(f"wrote {VECTORS_PATH}: {len(data['motors'])} motors, {len(data['cases'])} cases,",
          {w: words.count(w) for w in sorted(set(words))})
