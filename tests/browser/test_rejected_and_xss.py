"""A reading the server refuses stays visible, with the server's message, until corrected;
a hostile motor tag is shown as text."""

from __future__ import annotations

import pytest

from .conftest import DESKTOP, TABLET, fill_reading, shot, sign_in, wait_until

pytestmark = pytest.mark.browser

# 99 kW measured on a 15 kW motor: within the contract's 0-3000 kW, so the page lets it through,
# but more than five times the rated input, which the engine refuses (server/engine.py, power_kw)
BAD = {"frequency_hz": "50", "speed_rpm": "1475", "current_l1_a": "22", "current_l2_a": "22", "current_l3_a": "22",
       "voltage_l12_v": "401", "voltage_l23_v": "400", "voltage_l31_v": "399", "power_kw": "99"}


def test_rejected_reading_is_shown_kept_and_corrected(new_context, service):
    motor = service.motor("P-401 refused reading pump")
    ctx = new_context(TABLET)
    page = ctx.new_page()
    sign_in(page, "tess")
    # the technician opens the motor list upstairs first: that saves it for offline use (going offline
    # before the list arrived left the form nothing to show, a race CI once lost)
    page.wait_for_selector(f"#motor-list button[data-id='{motor['id']}']")
    ctx.set_offline(True)  # entered in the basement...
    page.goto(f"/#/motor/{motor['id']}")
    page.wait_for_selector("#reading-form")
    fill_reading(page, BAD)
    page.click("#submit-reading")
    page.wait_for_selector("#send-state .state.waiting")
    ctx.set_offline(False)  # ...sent upstairs, and refused
    wait_until(page, "document.querySelector('#outbox-count').dataset.rejected === '1'", 20)
    wait_until(page, "document.querySelector('#outbox-count').dataset.waiting === '0'", 10)
    status, reply = service.call("POST", "/api/v1/interpret", {"motor_id": motor["id"], **{k: float(v) for k, v in BAD.items()}})
    assert status == 400 and reply["error"]["field"] == "power_kw"
    server_message = reply["error"]["message"]

    page.reload()  # kept across a reload
    page.wait_for_selector("html[data-ready='1']")
    page.goto("/#/outbox")
    page.wait_for_selector("#outbox-list li[data-state=rejected]")
    assert page.text_content("#outbox-list .reject-message").strip() == server_message
    shot(page, "reject-01-outbox")
    assert service.readings_of(motor["id"]) == []

    page.click("#outbox-list li[data-state=rejected] a.btn-bad")
    page.wait_for_selector("#server-message")
    assert server_message in page.text_content("#server-message")
    assert page.get_attribute("#rd-power_kw", "aria-invalid") == "true"
    assert page.evaluate("document.activeElement.id") == "rd-power_kw"
    assert page.input_value("#rd-speed_rpm") == "1475"  # everything typed is still there
    shot(page, "reject-02-correct")
    page.fill("#rd-power_kw", "")
    page.click("#submit-reading")
    page.wait_for_selector("#load-value")
    stored = service.readings_of(motor["id"])
    assert len(stored) == 1 and stored[0]["inputs"]["power_kw"] is None and stored[0]["inputs"]["speed_rpm"] == 1475
    # the outbox count is refreshed asynchronously after the send
    wait_until(page, "document.querySelector('#outbox-count').dataset.rejected === '0'", 10)
    wait_until(page, "document.querySelector('#outbox-count').dataset.waiting === '0'", 10)


HOSTILE = "<img src=x onerror=alert(1)>"


def test_hostile_motor_tag_is_text(new_context, service):
    motor = service.motor(HOSTILE, site="<b>Site</b> & Co")
    status, reading = service.call("POST", "/api/v1/readings", {
        "client_id": "0b9f3c4e-8d7a-4e21-9f00-5a1d2c3b4e5f", "motor_id": motor["id"], "frequency_hz": 50,
        "speed_rpm": 1478, "current_l1_a": 21, "voltage_l12_v": 400})
    assert status == 201, reading
    dialogs = []
    ctx = new_context(DESKTOP)
    page = ctx.new_page()
    page.on("dialog", lambda d: (dialogs.append(d.message), d.dismiss()))
    sign_in(page, "sam")
    page.fill("#tag-search", "onerror")
    button = page.locator(f"#motor-list button[data-id='{motor['id']}']")
    assert button.locator(".tag").text_content() == HOSTILE
    assert page.locator("#motor-list img").count() == 0
    shot(page, "xss-01-motors")
    page.goto(f"/#/reading/{reading['id']}")
    page.wait_for_selector("#load-value")
    assert page.text_content("h1") == HOSTILE
    page.goto("/#/log")
    page.wait_for_selector("#log-table")
    assert page.locator("#log-table td a", has_text="onerror").first.text_content() == HOSTILE
    assert page.locator("#main img:not(.picture)").count() == 0
    page.wait_for_timeout(300)
    assert dialogs == []
