"""A verdict offline: the reading kept on the tablet shows the provisional verdict and its band; when the
network returns and the outbox sends it, the open screen shows the server's result in place and says
whether the server's verdict is the one the tablet gave."""

from __future__ import annotations

import pytest

from .conftest import PHONE, TABLET, fill_reading, shot, sign_in, wait_for_worker, wait_until

pytestmark = pytest.mark.browser

# 15 kW, 400 V, 50 Hz, 1460 rpm (slip 40 rpm at rated load); 1472 rpm is about 30 rpm of slip: some
# 75 % load, balanced supply in zone A
READING = {"frequency_hz": "50", "speed_rpm": "1470", "current_l1_a": "23.4", "current_l2_a": "23.6",
           "current_l3_a": "23.2", "voltage_l12_v": "401", "voltage_l23_v": "399", "voltage_l31_v": "400"}


def _offline_entry(new_context, service, tag, viewport=TABLET):
    motor = service.motor(tag)
    ctx = new_context(viewport)
    page = ctx.new_page()
    sign_in(page, "tess")
    wait_for_worker(page)
    page.goto("/#/motors")
    page.wait_for_selector(f"#motor-list button[data-id='{motor['id']}']")  # the list (and its bases) saved
    ctx.set_offline(True)
    page.goto(f"/#/motor/{motor['id']}")
    page.wait_for_selector("#reading-form")
    fill_reading(page, READING)
    # as you type: the provisional verdict is already there
    assert page.get_attribute("#provisional #prov-verdict", "data-verdict") in ("sound", "watch", "act", "retake")
    page.click("#submit-reading")
    page.wait_for_selector("#send-state .state")
    assert "kept on this tablet" in page.text_content("#send-state")
    return motor, ctx, page


def test_offline_verdict_then_the_server_confirms_in_place(new_context, service):
    motor, ctx, page = _offline_entry(new_context, service, "P-301 offline verdict pump")
    word = page.get_attribute("#provisional #prov-verdict", "data-verdict")
    assert word == "sound"
    heading = page.text_content("#prov-h")
    assert heading.lower().count("provisional") == 1, heading
    load = page.text_content("#prov-load")
    assert "band" in load and "%" in load
    shot(page, "offline-verdict-01-provisional")
    url = page.url

    ctx.set_offline(False)  # the page sends by itself
    page.wait_for_selector("#verdict-change")
    assert page.url == url  # the same screen, updated in place
    note = page.text_content("#verdict-change")
    stored = service.readings_of(motor["id"])
    assert len(stored) == 1
    assert stored[0]["result"]["verdict"] == word
    assert f"The server confirms: {word.capitalize()}" in " ".join(note.split())
    assert page.get_attribute("#verdict-change", "data-changed") == "false"
    assert "stored by the server" in page.text_content("#send-state")
    assert page.get_attribute("#verdict", "data-verdict") == word   # the server's result, in place
    assert page.locator("#provisional-before").count() == 1        # what the tablet said, folded away
    wait_until(page, "document.querySelector('#outbox-count').dataset.waiting === '0'")
    shot(page, "offline-verdict-02-server-confirms")


def test_the_server_differs_and_says_so(new_context, service):
    """The nameplate is corrected at the desk while the tablet is in the plant room: the tablet's copy is
    stale, the server judges with the new revision and its verdict differs; the screen says so."""
    motor, ctx, page = _offline_entry(new_context, service, "P-302 revised at the desk", viewport=PHONE)
    before = page.get_attribute("#provisional #prov-verdict", "data-verdict")
    assert before == "sound"
    # the true rated speed is 1478 rpm: 22 rpm of rated slip, so 30 rpm now is well above rated load
    status, revised = service.call("PUT", f"/api/v1/motors/{motor['id']}",
                                   {**{k: motor[k] for k in ("site", "tag", "rated_power_kw", "rated_voltage_v",
                                                             "rated_current_a", "rated_frequency_hz")},
                                    "rated_speed_rpm": 1478, "revision": 1})
    assert status == 200, revised
    ctx.set_offline(False)
    page.wait_for_selector("#verdict-change")
    stored = service.readings_of(motor["id"])
    after = stored[0]["result"]["verdict"]
    assert after != before
    note = " ".join(page.text_content("#verdict-change").split())
    assert f"The server's verdict differs: {after.capitalize()} — see why" in note
    assert page.get_attribute("#verdict-change", "data-changed") == "true"
    assert page.get_attribute("#see-why", "href") == f"#/reading/{stored[0]['id']}"
    shot(page, "offline-verdict-03-server-differs-phone")
    page.click("#see-why")
    page.wait_for_selector("#verdict")
    assert page.get_attribute("#verdict", "data-verdict") == after
