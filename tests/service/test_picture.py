"""GET /api/v1/readings/{id}/torque-speed.svg."""

from __future__ import annotations

import xml.etree.ElementTree as ET

import slipwise.web.readings as views


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
