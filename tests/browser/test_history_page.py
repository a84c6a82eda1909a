"""A motor over time in the browser (issue 11): the motor list's last verdict and visit, search by
description, the motor's visits with trend charts drawn in the page, and the same screen offline."""

from __future__ import annotations

import uuid
from datetime import date, timedelta

import pytest

from slipwise.engine.history import add_months

from .conftest import TABLET, shot, sign_in, wait_for_worker

pytestmark = pytest.mark.browser

SITE = "Wexcombe brewery"


def _reading(service, motor_id, taken_at, speed, amps, unbalance=0.0):
    status, r = service.call("POST", "/api/v1/readings", {
        "client_id": str(uuid.uuid4()), "motor_id": motor_id, "frequency_hz": 50, "speed_rpm": speed,
        "current_l1_a": amps, "current_l2_a": amps * (1 + unbalance), "current_l3_a": amps,
        "voltage_l12_v": 400, "voltage_l23_v": 401, "voltage_l31_v": 399, "taken_at": taken_at},
        token=service.tech_token)
    assert status == 201, r
    return r


def test_motor_history_screen(new_context, service):
    motor = service.motor("WX-GLYCOL-2", site=SITE, description="glycol chiller pump 2", location="cellar")
    today = date.today()
    days = [today - timedelta(days=d) for d in (200, 110, 20)]   # three visits months apart, the last recent
    first = _reading(service, motor["id"], f"{days[0]}T09:00:00+00:00", 1470, 22.0)
    assert service.call("POST", f"/api/v1/readings/{first['id']}/review", {"decision": "accepted"})[0] == 201
    _reading(service, motor["id"], f"{days[1]}T09:00:00+00:00", 1472, 21.0)
    _reading(service, motor["id"], f"{days[2]}T09:00:00+00:00", 1475, 19.5, unbalance=0.12)

    ctx = new_context(TABLET)
    page = ctx.new_page()
    sign_in(page, "tess")
    wait_for_worker(page)
    page.goto("/#/motors")
    page.wait_for_selector("#motor-list")
    page.fill("#tag-search", "glycol chiller")            # by description
    page.wait_for_selector("#motor-list li >> text=WX-GLYCOL-2")
    assert page.locator("#motor-list li").count() == 1
    row = page.text_content("#motor-list li")
    assert f"last visit {days[2]}" in row and "visit overdue" not in row
    shot(page, "history-01-motor-list")

    page.click("#motor-list li a.visits-link")
    page.wait_for_selector("#visits tbody tr")
    assert page.locator("#visits tbody tr").count() == 3
    assert "baseline" in page.text_content("#visits tbody tr:first-child")
    # the charts are drawn in the page: one path per series, a ringed baseline point
    assert page.locator("#trends svg.trend-svg path.series").count() >= 3
    assert page.locator("#trends svg circle.point.baseline").count() >= 3
    assert "Current unbalance has risen" in page.text_content("#latest-changes")
    due = add_months(days[2], 12)
    assert f"next due {due}" in page.text_content("#visit-due")
    shot(page, "history-02-motor-visits")

    # offline: the saved copy is drawn again from the cache
    ctx.set_offline(True)
    page.reload()
    page.wait_for_selector("#visits tbody tr")
    assert "saved copy" in page.text_content("#visit-due")
    assert page.locator("#trends svg.trend-svg").count() >= 3
    ctx.set_offline(False)
