"""GET /api/v1/readings/{id}/torque-speed.svg."""

from __future__ import annotations

import re
import xml.etree.ElementTree as ET

import numpy as np

import slipwise.web.readings as views
from slipwise import contract, engine
from slipwise.physics import load
from slipwise.services import interpretation
from slipwise.services import readings as reading_services


def test_svg_picture_is_drawn_once_and_cached(app, tech, reading, monkeypatch):
    calls = []
    real = views.torque_speed
    monkeypatch.setattr(views, "torque_speed", lambda record, *rest: calls.append(record) or real(record, *rest))
    url = f"/api/v1/readings/{reading['id']}/torque-speed.svg"
    first = tech.get(url)
    assert first.status_code == 200
    assert first.headers["Content-Type"].startswith("image/svg+xml")
    root = ET.fromstring(first.data)
    assert root.tag.endswith("svg")
    text = first.get_data(as_text=True)
    for label in ("shaft speed [rpm]", "torque [N·m]", "motor at rated voltage", "motor at measured voltage",
                  "driven load", "operating point", "breakdown", "PMP-07"):
        assert label in text, label
    assert "<script" not in text
    second = tech.get(url)
    assert second.data == first.data
    assert len(calls) == 1  # drawn once
    # the record drawn is the stored one: nameplate revision + inputs
    assert calls[0]["rated_speed_rpm"] == 1460.0 and calls[0]["speed_rpm"] == 1475.0
    not_modified = tech.get(url, headers={"If-None-Match": first.headers["ETag"]})
    assert not_modified.status_code == 304
    assert tech.get("/api/v1/readings/98765/torque-speed.svg").status_code == 404


def _point(svg: str, name: str) -> tuple[float, float]:
    """(torque [N·m], speed [rpm]) of a labelled point, from the legend text matplotlib keeps in the SVG."""
    m = re.search(rf"{name} (\d+) N·m at (\d+) rpm", svg)
    assert m, name
    return float(m.group(1)), float(m.group(2))


def test_picture_draws_the_stored_result_not_a_new_interpretation(app, tech, reading, monkeypatch):
    """A newer engine (here: one that fuses the load estimates 40 % higher) must not move the stored point."""
    stored = tech.get(f"/api/v1/readings/{reading['id']}").get_json()
    stored = stored.get("data", stored)
    real_fuse = load.fuse

    def heavier(methods):
        fused, consistent, outlier = real_fuse(methods)
        return load.Estimate(*(1.4 * np.asarray(x) for x in fused)), consistent, outlier

    monkeypatch.setattr(load, "fuse", heavier)
    record, _ = reading_services.picture_record(app.extensions["slipwise"].db, reading["id"])
    now = engine.torque_speed_curve(record)
    rated = now["rated_torque_nm"]
    expected = stored["result"]["torque_pct"] / 100.0 * rated
    # the patch works: the engine running now puts the operating point elsewhere
    assert abs(now["operating_torque_nm"] - expected) > 0.2 * expected

    svg = tech.get(f"/api/v1/readings/{reading['id']}/torque-speed.svg").get_data(as_text=True)
    torque, speed = _point(svg, "operating point")
    assert torque == round(expected) and speed == stored["inputs"]["speed_rpm"]
    breakdown, _ = _point(svg, "breakdown")
    assert breakdown == round(stored["result"]["breakdown_torque_now_pct"] / 100.0 * rated)
    assert f"points from the stored result of engine {stored['result']['engine_version']}" in svg


def test_the_caption_names_a_newer_engine_that_drew_the_curves(app, tech, reading, monkeypatch):
    monkeypatch.setattr(contract, "ENGINE_VERSION", "9.9.9")
    svg = tech.get(f"/api/v1/readings/{reading['id']}/torque-speed.svg").get_data(as_text=True)
    assert "curves drawn by engine 9.9.9" in svg
    assert f"points from the stored result of engine {reading['engine_version']}" in svg


def test_with_stored_result_points_and_load_line():
    speed = np.array([0.0, 750.0, 1475.0, 1500.0])
    curve = {"speed_rpm": speed, "rated_torque_nm": 100.0, "sync_speed_rpm": 1500.0, "driven_load": "constant_torque",
             "operating_speed_rpm": 1475.0, "operating_torque_nm": 80.0, "load_torque_nm": np.full(4, 80.0),
             "breakdown_speed_rpm": 1300.0, "breakdown_torque_nm": 250.0}
    stored = {"torque_pct": 60.0, "breakdown_torque_now_pct": 270.0, "sync_speed_rpm": 1500.0}
    out = interpretation.with_stored_result(curve, stored, 1475.0)
    # rated torque 100 N·m: 60 % and 270 % of it, the stored percentages
    assert out["operating_torque_nm"] == 60.0 and out["operating_speed_rpm"] == 1475.0
    assert out["breakdown_torque_nm"] == 270.0 and out["breakdown_speed_rpm"] == 1300.0
    assert np.allclose(out["load_torque_nm"], 60.0)  # a constant-torque load through the stored point
    # the engine running now finds no operating point: the load law is drawn through the stored one
    out = interpretation.with_stored_result({**curve, "operating_speed_rpm": None, "operating_torque_nm": None,
                                             "load_torque_nm": np.full(4, np.nan)}, stored, 1475.0)
    assert np.allclose(out["load_torque_nm"], 60.0)
    # the stored result had none: none is drawn, whatever the engine says now
    out = interpretation.with_stored_result(curve, {**stored, "torque_pct": None}, 1475.0)
    assert out["operating_torque_nm"] is None and np.isnan(out["load_torque_nm"]).all()


def test_picture_points_are_the_stored_result(app, tech, reading):
    """GET .../torque-speed.json: the numbers the page draws. Its points are the stored result's (a stored
    result is evidence), its curves the engine's for the stored nameplate revision."""
    got = tech.get(f"/api/v1/readings/{reading['id']}/torque-speed.json")
    assert got.status_code == 200 and got.headers["Content-Type"] == "application/json"
    c = got.get_json()
    result = reading["result"]
    rated = c["rated_torque_nm"]
    # rated torque T = P / ω = 15 kW / (1460 rpm · 2π/60) = 98.1 N·m (the definition of torque from power)
    assert abs(rated - 15000 / (1460 * 2 * np.pi / 60)) < 0.01
    assert abs(100 * c["operating_torque_nm"] / rated - result["torque_pct"]) < 0.01
    assert c["operating_speed_rpm"] == 1475.0 and c["sync_speed_rpm"] == result["sync_speed_rpm"]
    assert abs(100 * c["breakdown_torque_nm"] / rated - result["breakdown_torque_now_pct"]) < 0.01
    speeds = np.array(c["speed_rpm"])
    assert speeds[0] == 0 and abs(speeds[-1] - c["sync_speed_rpm"]) < 1e-6 and np.all(np.diff(speeds) > 0)
    motor = np.array(c["torque_measured_v_nm"], dtype=float)
    # the motor curve peaks at its breakdown speed (within one sample) and is zero at synchronous speed
    peak = int(np.nanargmax(motor))
    assert abs(speeds[peak] - c["breakdown_speed_rpm"]) <= max(np.diff(speeds)[max(peak - 1, 0)], 1.0) * 2
    assert motor[-1] == 0
    assert c["operating_side"] == (result["operating_side"] or None) and c["measured_speed_rpm"] == 1475.0
    assert c["flags"] == result["flags"]
    assert tech.get("/api/v1/readings/98765/torque-speed.json").status_code == 404


def _axis_maps(root) -> tuple:
    """(speed [rpm] of an x pixel, torque [N·m] of a y pixel), from the first and last tick label of each axis."""
    ns = "{http://www.w3.org/2000/svg}"
    texts = [t for t in root.iter(ns + "text") if t.text and re.fullmatch(r"[\d.]+", t.text)]
    x_ticks = [(float(t.get("x")), float(t.text)) for t in texts if t.get("text-anchor") == "middle"]
    y_ticks = [(float(t.get("y")) - 4, float(t.text)) for t in texts if t.get("text-anchor") == "end"]

    def linear(ticks):
        (p0, v0), (p1, v1) = ticks[0], ticks[-1]
        return lambda p: v0 + (p - p0) * (v1 - v0) / (p1 - p0)
    return linear(x_ticks), linear(y_ticks)


def test_svg_places_the_numbers_the_json_route_serves(tech, reading):
    """The SVG is written from the same curve as GET .../torque-speed.json: its operating and breakdown markers
    and every vertex of the motor's curve at measured voltage sit where those numbers fall on its own axes."""
    rid = reading["id"]
    c = tech.get(f"/api/v1/readings/{rid}/torque-speed.json").get_json()
    svg = tech.get(f"/api/v1/readings/{rid}/torque-speed.svg").data
    root = ET.fromstring(svg)
    ns = "{http://www.w3.org/2000/svg}"
    speed_of, torque_of = _axis_maps(root)
    # the axes' scale: 2 decimals of a pixel on an axis of ~1600 rpm over ~650 px is ~0.05 rpm; torque alike
    op = next(e for e in root.iter(ns + "circle") if e.get("class") == "operating_point")
    assert abs(speed_of(float(op.get("cx"))) - c["operating_speed_rpm"]) < 0.05
    assert abs(torque_of(float(op.get("cy"))) - c["operating_torque_nm"]) < 0.05
    bd = next(e for e in root.iter(ns + "path") if e.get("class") == "breakdown_point")
    apex_x, apex_y = (float(v) for v in bd.get("d")[1:].split("L")[0].split(","))
    assert abs(speed_of(apex_x) - c["breakdown_speed_rpm"]) < 0.05
    assert abs(torque_of(apex_y + 6.5) - c["breakdown_torque_nm"]) < 0.05   # the triangle's centre is the point
    motor = next(e for e in root.iter(ns + "path") if e.get("class") == "torque_measured_v_nm")
    vertices = [tuple(float(v) for v in p.split(",")) for p in re.split(r"[ML]", motor.get("d")) if p]
    served = [(n, t) for n, t in zip(c["speed_rpm"], c["torque_measured_v_nm"]) if t is not None]
    assert len(vertices) == len(served) == len(c["speed_rpm"])
    for (px, py), (n, t) in zip(vertices, served):
        assert abs(speed_of(px) - n) < 0.05 and abs(torque_of(py) - t) < 0.05


def test_svg_escapes_text_and_needs_no_inline_style():
    """A title is text, never markup; the picture carries no style attribute or element (its CSP allows none),
    and the same curve gives the same bytes (the ETag depends on it)."""
    from slipwise.web.picture import render_torque_speed_svg
    speed = np.linspace(0.0, 1500.0, 5)
    curve = {"speed_rpm": speed, "torque_rated_v_nm": np.array([200.0, 210.0, 250.0, 150.0, 0.0]),
             "torque_measured_v_nm": np.array([190.0, 200.0, np.nan, 140.0, 0.0]),
             "load_torque_nm": np.full(5, np.nan), "rated_torque_nm": 98.1, "sync_speed_rpm": 1500.0,
             "operating_speed_rpm": None, "operating_torque_nm": None, "breakdown_speed_rpm": 1125.0,
             "breakdown_torque_nm": 250.0}
    svg = render_torque_speed_svg(curve, 'P&ID <script>alert("x")</script>\nsecond line')
    assert svg == render_torque_speed_svg(curve, 'P&ID <script>alert("x")</script>\nsecond line')
    root = ET.fromstring(svg)
    text = svg.decode("utf-8")
    assert "<script" not in text and "&lt;script&gt;" in text and "P&amp;ID" in text
    assert " style=" not in text and "<style" not in text
    ns = "{http://www.w3.org/2000/svg}"
    paths = {e.get("class"): e.get("d") for e in root.iter(ns + "path") if e.get("class")}
    assert "load_torque_nm" not in paths                      # an undefined curve is not drawn
    assert paths["torque_measured_v_nm"].count("M") == 2      # a gap where the curve is undefined
    assert "no operating point" in text and "operating_point" not in text
