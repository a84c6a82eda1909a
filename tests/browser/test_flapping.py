"""The outbox under a flapping network: 20 readings entered on the page while the network goes off and
on at random (a fixed, reproducible random schedule), also while a reading is on its way; afterwards
the server holds exactly those 20 readings, none twice. Checked through the API."""

from __future__ import annotations

import random
import time

import pytest

from .conftest import TABLET, fill_reading, shot, sign_in, wait_for_worker, wait_until

pytestmark = pytest.mark.browser

READINGS = 20
SCHEDULE = 20250603  # the random schedule is the same on every run


def reading(n: int) -> dict:
    """Reading n: its speed (1461 + n rpm) identifies it among the 20."""
    amps = 18.0 + (n % 5) * 0.7
    return {"frequency_hz": "50", "speed_rpm": str(1461 + n), "current_l1_a": f"{amps:.1f}",
            "current_l2_a": f"{amps + 0.3:.1f}", "current_l3_a": f"{amps - 0.2:.1f}", "voltage_l12_v": "401",
            "voltage_l23_v": "399", "voltage_l31_v": "403"}


def test_twenty_readings_under_a_flapping_network_are_stored_once_each(new_context, service):
    motor = service.motor("P-301 flapping link pump")
    ctx = new_context(TABLET)
    page = ctx.new_page()
    sign_in(page, "tess")
    wait_for_worker(page)
    page.goto("/#/motors")
    page.wait_for_selector(f"#motor-list button[data-id='{motor['id']}']")  # saved for offline use

    rnd = random.Random(SCHEDULE)
    offline = False
    toggles = 0

    def flip(p: float) -> None:
        nonlocal offline, toggles
        if rnd.random() < p:
            offline = not offline
            toggles += 1
            ctx.set_offline(offline)

    outcomes = {"sent at once": 0, "kept": 0}
    for n in range(READINGS):
        flip(0.5)  # the network may change before this reading ...
        page.goto(f"/#/motor/{motor['id']}")
        page.wait_for_selector("#reading-form")
        fill_reading(page, reading(n))
        page.click("#submit-reading")
        time.sleep(rnd.uniform(0, 0.05))
        flip(0.4)  # ... while it is on its way ...
        page.wait_for_selector("#load-value, #send-state .state")  # the stored result, or kept
        outcomes["sent at once" if page.locator("#load-value").count() else "kept"] += 1
        time.sleep(rnd.uniform(0, 0.3))
        flip(0.3)  # ... and after it was sent or kept
    shot(page, "flapping-01-last-reading")
    ctx.set_offline(False)  # the network settles: the page sends what it kept, by itself
    wait_until(page, "document.querySelector('#outbox-count').dataset.waiting === '0' && "
                     "document.querySelector('#outbox-count').dataset.rejected === '0'", 60)

    stored = service.readings_of(motor["id"])
    speeds = sorted(r["inputs"]["speed_rpm"] for r in stored)
    print(f"\nFIGURE flapping network: {toggles} network changes, {outcomes['sent at once']} readings answered at "
          f"once, {outcomes['kept']} kept and sent later; {len(stored)} stored")
    assert toggles >= 10 and outcomes["kept"] >= 3, "the schedule really took the network away"
    assert len(stored) == READINGS
    assert len({r["client_id"] for r in stored}) == READINGS
    assert speeds == [1461 + n for n in range(READINGS)], "each of the 20 readings once, none twice, none lost"
    page.reload()  # nothing is left to send again
    page.wait_for_selector("html[data-ready='1']")
    assert page.get_attribute("#outbox-count", "data-waiting") == "0"
    assert len(service.readings_of(motor["id"])) == READINGS
