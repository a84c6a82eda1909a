"""Offline: the cached page opens without a network, readings wait in the outbox, and each
reaches the server exactly once when the network returns, across reloads and lost answers."""

from __future__ import annotations

import json

import pytest

from .conftest import TABLET, fill_reading, shot, sign_in, wait_for_worker, wait_until

pytestmark = pytest.mark.browser

READINGS = [
    {"frequency_hz": "50", "speed_rpm": "1478", "current_l1_a": "21", "current_l2_a": "21.4", "current_l3_a": "20.8",
     "voltage_l12_v": "400", "voltage_l23_v": "404", "voltage_l31_v": "396"},
    {"frequency_hz": "49.9", "speed_rpm": "1470", "current_l1_a": "24.1", "current_l2_a": "24.6", "current_l3_a": "23.9",
     "voltage_l12_v": "398", "voltage_l23_v": "401", "voltage_l31_v": "399"},
    {"frequency_hz": "50.1", "speed_rpm": "1486", "current_l1_a": "16.2", "current_l2_a": "16.0", "current_l3_a": "16.5",
     "voltage_l12_v": "405", "voltage_l23_v": "403"},
]


def outbox_entries(page):
    return page.evaluate("""() => new Promise((ok, bad) => {
        const r = indexedDB.open('slipwise-field');
        r.onsuccess = () => { const q = r.result.transaction('outbox').objectStore('outbox').getAll();
                              q.onsuccess = () => { ok(q.result); r.result.close(); }; q.onerror = () => bad(q.error); };
        r.onerror = () => bad(r.error); })""")


def waiting(page) -> int:
    return int(page.get_attribute("#outbox-count", "data-waiting"))


def enter(page, motor_id, values):
    page.goto(f"/#/motor/{motor_id}")
    page.wait_for_selector("#reading-form")
    fill_reading(page, values)
    page.click("#submit-reading")
    page.wait_for_selector("#send-state .state")


def test_offline_entry_reload_reconnect_stores_each_once(new_context, service):
    motor = service.motor("P-201 offline pump")
    ctx = new_context(TABLET)
    page = ctx.new_page()
    sign_in(page, "tess")
    wait_for_worker(page)
    page.goto("/#/motors")
    page.wait_for_selector(f"#motor-list button[data-id='{motor['id']}']")  # the list is saved for offline use

    ctx.set_offline(True)
    page.reload()
    page.wait_for_selector("html[data-ready='1']")
    fcp = page.evaluate("performance.getEntriesByType('paint').find(e => e.name === 'first-contentful-paint')?.startTime")
    print(f"\nFIGURE offline first paint of the cached page: {fcp:.0f} ms (first-contentful-paint)")
    assert fcp is not None and fcp <= 1000
    assert "offline" in page.text_content("#net")
    page.wait_for_selector(f"#motor-list button[data-id='{motor['id']}']")
    shot(page, "offline-01-motors")

    for i, values in enumerate(READINGS, start=1):
        enter(page, motor["id"], values)
        assert "kept on this tablet" in page.text_content("#send-state")
        # the provisional result is there, labelled as such
        assert page.locator("#provisional .provisional-label").count() == 1
        assert waiting(page) == i
    shot(page, "offline-02-kept-provisional")
    client_ids = sorted(e["client_id"] for e in outbox_entries(page))
    assert len(client_ids) == 3

    page.reload()  # still offline: the outbox survives a reload
    page.wait_for_selector("html[data-ready='1']")
    assert waiting(page) == 3
    page.goto("/#/outbox")
    page.wait_for_selector("#outbox-list")
    assert page.locator("#outbox-list li[data-state=waiting]").count() == 3
    shot(page, "offline-03-outbox")
    assert service.readings_of(motor["id"]) == []

    ctx.set_offline(False)  # the browser fires "online": the page sends by itself
    wait_until(page, "document.querySelector('#outbox-count').dataset.waiting === '0'", 20)
    stored = service.readings_of(motor["id"])
    assert sorted(r["client_id"] for r in stored) == client_ids
    assert [r["inputs"]["speed_rpm"] for r in stored] == [1478, 1470, 1486]

    page.reload()  # a later page load sends nothing again
    page.wait_for_selector("html[data-ready='1']")
    assert waiting(page) == 0
    assert len(service.readings_of(motor["id"])) == 3
    page.goto("/#/outbox")
    page.wait_for_selector("#outbox-empty")


def test_answer_lost_after_store_is_replayed_not_duplicated(new_context, service):
    """The server stores the reading but the answer never reaches the tablet: the entry stays,
    and its replay (same client_id) returns the stored record instead of a second row."""
    motor = service.motor("P-202 lost answer pump")
    ctx = new_context(TABLET)
    page = ctx.new_page()
    sign_in(page, "tess")

    def store_then_drop(route):
        # the body reaches the server and is stored (sent here with Tess's own token, so it is
        # the same person and content), but the answer never reaches the tablet
        status, _ = service.call("POST", "/api/v1/readings", json.loads(route.request.post_data),
                                 token=service.tech_token)
        assert status in (200, 201)  # 200: the browser retried the same POST, and the server knew it
        route.abort("failed")

    page.route("**/api/v1/readings", store_then_drop)
    enter(page, motor["id"], READINGS[0])
    assert "kept on this tablet" in page.text_content("#send-state")
    assert waiting(page) == 1
    assert len(service.readings_of(motor["id"])) == 1
    page.unroute("**/api/v1/readings")

    page.reload()  # replay on page load
    page.wait_for_selector("html[data-ready='1']")
    wait_until(page, "document.querySelector('#outbox-count').dataset.waiting === '0'")
    stored = service.readings_of(motor["id"])
    assert len(stored) == 1


def test_outbox_from_an_older_page_version_is_migrated(new_context, service):
    """Entries written by outbox schema 1 are kept and carried over, never dropped."""
    motor = service.motor("P-203 old outbox pump")
    ctx = new_context(TABLET)
    page = ctx.new_page()
    page.goto("/manifest.webmanifest")  # same origin, without the page's own scripts
    queued = {"client_id": "6f1c7f0e-3b1a-4c55-9d43-0d6f2b7c1a01", "motor_id": motor["id"], "status": "queued",
              "payload": {"client_id": "6f1c7f0e-3b1a-4c55-9d43-0d6f2b7c1a01", "motor_id": motor["id"],
                          "frequency_hz": 50, "speed_rpm": 1475, "current_l1_a": 22, "voltage_l12_v": 401}}
    refused = {"client_id": "6f1c7f0e-3b1a-4c55-9d43-0d6f2b7c1a02", "motor_id": motor["id"], "status": "refused",
               "message": "power_kw = 99 is more than five times the rated input (16.7 kW)",
               "payload": {"client_id": "6f1c7f0e-3b1a-4c55-9d43-0d6f2b7c1a02", "motor_id": motor["id"],
                           "frequency_hz": 50, "speed_rpm": 1475, "current_l1_a": 22, "voltage_l12_v": 401,
                           "power_kw": 99}}
    page.evaluate("""(entries) => new Promise((ok, bad) => {
        const r = indexedDB.open('slipwise-field', 1);
        r.onupgradeneeded = () => r.result.createObjectStore('outbox', { keyPath: 'client_id' });
        r.onsuccess = () => { const t = r.result.transaction('outbox', 'readwrite');
            for (const e of entries) t.objectStore('outbox').put(e);
            t.oncomplete = () => { r.result.close(); ok(true); }; t.onerror = () => bad(t.error); };
        r.onerror = () => bad(r.error); })""", [queued, refused])

    sign_in(page, "tess")
    wait_until(page, "document.querySelector('#outbox-count').dataset.waiting === '0'")
    stored = service.readings_of(motor["id"])
    assert [r["client_id"] for r in stored] == [queued["client_id"]]
    entries = outbox_entries(page)
    assert len(entries) == 1 and entries[0]["client_id"] == refused["client_id"]
    assert entries[0]["state"] == "rejected" and entries[0]["v"] == 2
    assert entries[0]["error"]["message"] == refused["message"]
    assert entries[0]["body"]["power_kw"] == 99
    page.goto("/#/outbox")
    page.wait_for_selector("#outbox-list li[data-state=rejected]")
    assert refused["message"] in page.text_content("#outbox-list")


def test_outbox_entries_wait_for_the_person_who_entered_them(new_context, service):
    """A shared tablet: Tess's unsent reading is never sent under Sam's session."""
    motor = service.motor("P-204 shared tablet pump")
    ctx = new_context(TABLET)
    page = ctx.new_page()
    page.on("dialog", lambda d: d.accept())  # "still in the outbox... sign out?"
    sign_in(page, "tess")
    page.wait_for_selector(f"#motor-list button[data-id='{motor['id']}']")  # saved for offline use
    ctx.set_offline(True)
    enter(page, motor["id"], READINGS[0])
    page.route("**/api/v1/readings", lambda route: route.abort("connectionrefused"))  # the server stays out of reach
    ctx.set_offline(False)
    page.click("#logout")
    page.wait_for_selector("#login-user")
    page.unroute("**/api/v1/readings")
    page.fill("#login-user", "sam")
    page.fill("#login-pass", "desk-pass-22")
    page.click("button[type=submit]")
    page.wait_for_selector("#tabs:not([hidden])")
    page.wait_for_timeout(500)
    assert service.readings_of(motor["id"]) == []
    assert waiting(page) == 1
    page.goto("/#/outbox")
    page.wait_for_selector("#outbox-list")
    assert "entered by tess" in page.text_content("#outbox-list")
    page.click("#logout")
    page.wait_for_selector("#login-user")
    page.fill("#login-user", "tess")
    page.fill("#login-pass", "tablet-pass-1")
    page.click("button[type=submit]")
    wait_until(page, "document.querySelector('#outbox-count').dataset.waiting === '0'")
    stored = service.readings_of(motor["id"])
    assert len(stored) == 1 and stored[0]["technician"] == "tess"


def test_new_page_version_keeps_the_outbox(new_context, service, tmp_path):
    """A new service worker VERSION replaces the page's cache; the unsent readings stay."""
    import shutil
    from pathlib import Path

    motor = service.motor("P-205 upgrade pump")
    copy = tmp_path / "static"
    shutil.copytree(Path(service.app.config["STATIC_DIR"]), copy)
    old_dir = service.app.config["STATIC_DIR"]
    service.app.config["STATIC_DIR"] = str(copy)
    try:
        ctx = new_context(TABLET)
        page = ctx.new_page()
        sign_in(page, "tess")
        wait_for_worker(page)
        page.wait_for_selector(f"#motor-list button[data-id='{motor['id']}']")
        ctx.set_offline(True)
        enter(page, motor["id"], READINGS[1])
        before = page.evaluate("caches.keys()")
        sw = copy / "sw.js"
        text = sw.read_text(encoding="utf-8")
        assert 'const VERSION = "' in text
        sw.write_text(text.replace('const VERSION = "', 'const VERSION = "next-', 1), encoding="utf-8")
        page.route("**/api/v1/readings", lambda route: route.abort("failed"))  # keep it unsent meanwhile
        ctx.set_offline(False)
        page.reload()  # the browser looks for a new worker on navigation
        page.wait_for_selector("html[data-ready='1']")
        wait_until(page, "caches.keys().then(k => k.some(n => n.includes('next-')) && k.length === 1)", 20)
        after = page.evaluate("caches.keys()")
        assert before != after and len(after) == 1
        assert len(outbox_entries(page)) == 1  # the outbox is not the page cache: untouched
        page.unroute("**/api/v1/readings")
        page.reload()
        page.wait_for_selector("html[data-ready='1']")
        wait_until(page, "document.querySelector('#outbox-count').dataset.waiting === '0'")
        assert len(service.readings_of(motor["id"])) == 1
    finally:
        service.app.config["STATIC_DIR"] = old_dir


def test_my_readings_offline_keeps_what_was_stored_and_follows_the_outbox(new_context, service):
    """Issue 12, item 1: a reading stored minutes ago is on My readings offline, and the open screen follows
    the outbox when the network returns (no stale "1 in the outbox" while everything was sent)."""
    motor = service.motor("P-206 my readings pump")
    ctx = new_context(TABLET)
    page = ctx.new_page()
    sign_in(page, "tess")
    wait_for_worker(page)
    page.goto("/#/motors")
    page.wait_for_selector(f"#motor-list button[data-id='{motor['id']}']")
    page.goto(f"/#/motor/{motor['id']}")              # online: stored at once
    page.wait_for_selector("#reading-form")
    fill_reading(page, READINGS[0])
    page.click("#submit-reading")
    page.wait_for_selector("#load-value")
    ctx.set_offline(True)
    enter(page, motor["id"], READINGS[1])           # offline: into the outbox
    page.wait_for_selector("#send-state .state.waiting")
    page.goto("/#/mine")
    page.wait_for_selector("#mine-list li")
    said = page.text_content("#main")
    # the saved copy of this tablet: the reading it stored minutes ago (not "0 stored")
    first = service.readings_of(motor["id"])[0]["id"]
    assert "1 stored reading(s) (saved copy: offline), 1 in the outbox" in said, said
    assert page.locator(f"#mine-list li[data-id='{first}']").count() == 1
    ctx.set_offline(False)
    page.evaluate("window.dispatchEvent(new Event('online'))")
    wait_until(page, "document.querySelector('#main').textContent.includes('0 in the outbox')", 20)
    second = [r["id"] for r in service.readings_of(motor["id"])][1]
    wait_until(page, f"!!document.querySelector(\"#mine-list li[data-id='{second}']\")", 10)
    assert "(saved copy: offline)" not in page.text_content("#main")
