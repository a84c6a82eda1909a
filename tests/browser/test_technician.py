"""The technician's path at a tablet viewport, through the real page and server."""

from __future__ import annotations

import re
import time

import pytest

from .conftest import PHONE, TABLET, contrast, fill_reading, shot, sign_in, wait_for_worker, wait_until

pytestmark = pytest.mark.browser

# a reading on the 15 kW, 400 V, 1460 rpm nameplate of Service.motor: 1480 rpm at 50 Hz
GOOD = {"frequency_hz": "50", "speed_rpm": "1480", "current_l1_a": "19.8", "current_l2_a": "20.4",
        "current_l3_a": "20.1", "voltage_l12_v": "401", "voltage_l23_v": "398", "voltage_l31_v": "402"}


def test_technician_path_tablet(new_context, service):
    motor = service.motor("P-101 feed pump")
    service.motor("P-102 standby pump")
    ctx = new_context(TABLET)
    page = ctx.new_page()
    sign_in(page, "tess")
    shot(page, "tech-01-motors")
    page.fill("#tag-search", "P-101")
    wait_until(page, "document.querySelectorAll('#motor-list button').length === 1")
    page.click(f"#motor-list button[data-id='{motor['id']}']")
    page.wait_for_selector("#reading-form")
    for name in ("frequency_hz", "speed_rpm", "current_l1_a", "voltage_l12_v"):
        assert page.get_attribute(f"#rd-{name}", "inputmode") == "decimal"
    # validated as typed: an out-of-range value says what is wrong and the allowed range
    page.fill("#rd-frequency_hz", "500")
    err = page.text_content("#rd-frequency_hz-err")
    assert "500" in err and "1 to 120 Hz" in err
    fill_reading(page, GOOD)
    assert page.text_content("#rd-frequency_hz-err") == ""
    # provisional values while typing: ns = 1500 rpm, s = 20/1500 = 1.33 %
    assert "1500 rpm" in page.text_content("#provisional [data-key=sync_speed_rpm]")
    assert "1.33 %" in page.text_content("#provisional [data-key=slip_pct]")
    shot(page, "tech-02-reading-form")
    t0 = time.perf_counter()
    page.click("#submit-reading")
    page.wait_for_selector("#load-value")
    elapsed = time.perf_counter() - t0
    wait_until(page, "document.documentElement.dataset.resultMs !== undefined")
    result_ms = float(page.evaluate("document.documentElement.dataset.resultMs"))
    print(f"\nFIGURE result shown after submit: {elapsed * 1000:.0f} ms (page-measured {result_ms:.0f} ms)")
    assert elapsed <= 1.0 or result_ms <= 1000
    readings = service.readings_of(motor["id"])
    assert len(readings) == 1
    stored = readings[0]
    assert page.text_content("#load-value").strip() == f"{stored['result']['load_pct']:.0f} %"
    assert page.locator("svg.loadbar").count() == 1
    # the torque-speed picture is drawn by the page (two views, legend below them)
    page.wait_for_selector("#curve-views svg.curve-view path.c-motor")
    assert page.locator("#curve-views svg.curve-view").count() == 2
    assert "rpm" in page.text_content("#curve-caption")
    shot(page, "tech-03-result")
    assert page.locator("#outbox-count").get_attribute("data-waiting") == "0"


def test_phone_width_has_no_sideways_scroll(new_context, service):
    service.motor("P-301 narrow screen pump")
    page = new_context(PHONE).new_page()
    sign_in(page, "tess")
    assert page.evaluate("document.documentElement.scrollWidth") <= PHONE["width"]
    shot(page, "phone-01-motors")


# 1470 rpm says about 67 % load by slip, but 16 A on a 28.5 A motor says far less: the engine's
# methods disagree beyond their bands (readings_inconsistent), so the page asks to take them again
CONTRADICTING = {"frequency_hz": "50", "speed_rpm": "1470", "current_l1_a": "16", "current_l2_a": "16",
                 "current_l3_a": "16.5", "voltage_l12_v": "400", "voltage_l23_v": "401", "voltage_l31_v": "399"}


def test_take_again_when_readings_contradict(new_context, service):
    motor = service.motor("P-105 contradicting pump")
    page = new_context(TABLET).new_page()
    sign_in(page, "tess")
    page.goto(f"/#/motor/{motor['id']}")
    page.wait_for_selector("#reading-form")
    fill_reading(page, CONTRADICTING)
    page.click("#submit-reading")
    page.wait_for_selector("#take-again")
    first = service.readings_of(motor["id"])
    assert len(first) == 1 and "readings_inconsistent" in first[0]["result"]["flags"]
    assert page.locator(".finding[data-flag=readings_inconsistent] .caution").count() == 1
    shot(page, "tech-05-take-again")
    page.click("#take-again")
    page.wait_for_selector("#reading-form")
    assert page.input_value("#rd-speed_rpm") == "1470"  # the previous values, to correct what was misread
    page.fill("#rd-speed_rpm", "1481")
    page.click("#submit-reading")
    page.wait_for_selector("#load-value")
    both = service.readings_of(motor["id"])
    assert len(both) == 2
    assert both[1]["supersedes"] == first[0]["id"] and both[1]["inputs"]["speed_rpm"] == 1481


def test_register_motor_from_nameplate(new_context, service):
    ctx = new_context(TABLET)
    page = ctx.new_page()
    sign_in(page, "tess")
    page.goto("/#/motor/new")
    page.wait_for_selector("#np-rated_voltage_v")
    # every field has a label and a unit beside it; blanks are explained
    unlabeled = page.evaluate("[...document.querySelectorAll('#main input, #main select')]"
                              ".filter(e => e.type !== 'radio' && !e.hidden && e.labels.length === 0).map(e => e.id)")
    assert unlabeled == []
    assert "inferred from rated speed" in page.text_content("#np-poles-hint")
    page.fill("#t-site", "Harbour pumping station")
    page.fill("#t-tag", "P-110 new pump")
    page.check("input[name=power-unit][value=hp]")
    for name, value in {"rated_power_hp": "20", "rated_voltage_v": "460", "rated_current_a": "25",
                        "rated_frequency_hz": "60", "rated_speed_rpm": "1760"}.items():
        page.fill(f"#np-{name}", value)
    page.select_option("#np-driven_load", "variable_torque")
    shot(page, "tech-06-register-motor")
    page.click("form button[type=submit]")
    # the technician registers it and goes straight on to its first reading
    page.wait_for_selector("#reading-form")
    status, data = service.call("GET", "/api/v1/motors")
    made = [m for m in data["motors"] if m["tag"] == "P-110 new pump"]
    assert len(made) == 1 and made[0]["rated_power_hp"] == 20 and made[0]["rated_power_kw"] is None
    assert made[0]["driven_load"] == "variable_torque"


def test_keyboard_only_reading(new_context, service):
    motor = service.motor("P-120 keyboard pump")
    page = new_context(TABLET).new_page()
    page.goto("/")
    page.wait_for_selector("#login-user")
    assert page.evaluate("document.activeElement.id") == "login-user"
    page.keyboard.type("tess")
    page.keyboard.press("Tab")
    page.keyboard.type("tablet-pass-1")
    page.keyboard.press("Enter")
    page.wait_for_selector("#tag-search")
    page.focus("#tag-search")
    page.keyboard.type("P-120")
    page.keyboard.press("Tab")  # the first (only) motor in the list
    assert page.evaluate("document.activeElement.dataset.id") == str(motor["id"])
    page.keyboard.press("Enter")
    page.wait_for_selector("#reading-form")
    assert page.evaluate("document.activeElement.id") == "rd-frequency_hz"
    for value in ("50", "1479", "20", "20.2", "19.9", "400", "401", "399"):
        page.keyboard.type(value)
        page.keyboard.press("Tab")
    page.keyboard.press("Enter")  # submits the form
    page.wait_for_selector("#load-value")
    stored = service.readings_of(motor["id"])
    assert len(stored) == 1 and stored[0]["inputs"]["voltage_l31_v"] == 399


def test_session_survives_closing_the_tablet(browser, new_context, service):
    ctx = new_context(TABLET)
    page = ctx.new_page()
    sign_in(page, "tess")
    state = ctx.storage_state()
    ctx.close()
    again = new_context(TABLET, storage_state=state).new_page()
    again.goto("/")
    again.wait_for_selector("html[data-ready='1']")
    assert again.locator("#login-user").count() == 0
    assert "Tess Okafor" in again.text_content("#who")


TEXT_SELECTORS = ("h1", "h2", "label", ".hint", ".muted", ".unit", ".pill", ".btn", ".tabs a", ".facts dt", ".facts dd",
                  ".verdict", ".state", ".finding p", ".provisional-label", "input")


@pytest.mark.parametrize("scheme", ["light", "dark"])
def test_contrast_in_bright_and_dim_rooms(new_context, service, scheme):
    motor = service.motor(f"P-130 contrast pump {scheme}")
    page = new_context(TABLET, color_scheme=scheme).new_page()
    sign_in(page, "tess")
    assert page.get_attribute("#theme", "aria-pressed") == ("true" if scheme == "dark" else "false")
    page.goto(f"/#/motor/{motor['id']}")
    page.wait_for_selector("#reading-form")
    fill_reading(page, CONTRADICTING)
    ratios = contrast(page, TEXT_SELECTORS)
    page.click("#submit-reading")
    page.wait_for_selector("#take-again")
    for sel, r in contrast(page, TEXT_SELECTORS).items():
        if r is not None:
            ratios[sel] = min(r, ratios[sel] or r)
    shot(page, f"palette-{scheme}-result")
    print(f"\nFIGURE lowest text contrast ({scheme}): {min(r for r in ratios.values() if r):.1f}:1")
    # WCAG 2.1 AA asks 4.5:1 for body text; we hold every text to it
    low = {sel: round(r, 2) for sel, r in ratios.items() if r is not None and r < 4.5}
    assert low == {}
    page.click("#theme")  # the switch overrides the system setting
    assert page.evaluate("document.documentElement.dataset.theme") == ("bright" if scheme == "dark" else "dim")


def test_phone_width_reading_and_result(new_context, service):
    motor = service.motor("P-302 phone pump")
    page = new_context(PHONE).new_page()
    sign_in(page, "tess")
    page.goto(f"/#/motor/{motor['id']}")
    page.wait_for_selector("#reading-form")
    fill_reading(page, GOOD)
    assert page.evaluate("document.documentElement.scrollWidth") <= PHONE["width"]
    # touch targets for gloves: inputs and the main button at least 48 px high
    heights = page.evaluate("[...document.querySelectorAll('#reading-form input, #submit-reading')]"
                            ".filter(e => e.offsetParent).map(e => e.getBoundingClientRect().height)")
    assert min(heights) >= 48
    shot(page, "phone-02-reading-form")
    page.click("#submit-reading")
    page.wait_for_selector("#load-value")
    page.wait_for_selector("#curve-views svg.curve-view path.c-motor")  # the page-drawn picture
    assert page.evaluate("document.documentElement.scrollWidth") <= PHONE["width"]
    shot(page, "phone-03-result")


def test_blank_form_is_not_red_until_touched_or_sent(new_context, service):
    """A blank reading form opens without errors; a field turns red once typed in wrongly, and every
    missing required field does so when the technician presses send."""
    motor = service.motor("P-110 blank form pump")
    ctx = new_context(TABLET)
    page = ctx.new_page()
    sign_in(page, "tess")
    assert page.text_content("#tabs a[data-screen=mine]").strip() == "My readings"  # our own tab name
    page.goto(f"/#/motor/{motor['id']}")
    page.wait_for_selector("#reading-form")
    assert page.locator("#reading-form [aria-invalid=true]").count() == 0
    assert page.evaluate("[...document.querySelectorAll('#reading-form p.error')].every(p => p.textContent === '')")
    page.fill("#rd-speed_rpm", "99999")  # typed in: judged at once
    assert page.get_attribute("#rd-speed_rpm", "aria-invalid") == "true"
    assert page.get_attribute("#rd-frequency_hz", "aria-invalid") == "false"  # not touched yet
    page.fill("#rd-speed_rpm", "")
    page.click("#submit-reading")  # sent blank: now every missing required field says so
    assert page.get_attribute("#rd-frequency_hz", "aria-invalid") == "true"
    assert page.evaluate("document.activeElement.id") == "rd-frequency_hz"
    assert service.readings_of(motor["id"]) == []


def test_result_reads_number_first_and_skips_a_margin_the_machine_does_not_need(new_context, service):
    """Margins read "2.91×" (the number first); a missing value is a bare dash, never "– %"; a centrifugal
    pump needs no breakaway torque, so no starting margin is shown for it (its starting state is not judged)."""
    conveyor = service.motor("CV-120 margin conveyor", driven_load="constant_torque")
    pump = service.motor("P-121 margin pump", driven_load="variable_torque")
    ctx = new_context(TABLET)
    page = ctx.new_page()
    sign_in(page, "tess")
    shown = {}
    for motor in (conveyor, pump):
        page.goto(f"/#/motor/{motor['id']}")
        page.wait_for_selector("#reading-form")
        fill_reading(page, {k: v for k, v in GOOD.items() if k != "current_l2_a"})
        page.click("#submit-reading")
        page.wait_for_selector("#load-value")
        stored = service.readings_of(motor["id"])[0]["result"]
        text = page.text_content("main")
        assert "– %" not in text
        assert not re.search(r"×\s*\d", text), "a margin reads sign first"
        shown[motor["tag"]] = (stored, text)
    stored, text = shown["CV-120 margin conveyor"]
    assert f"{stored['breakdown_margin']:.2f}×" in text
    assert stored["starting_state"] and "Starting margin" in text
    stored, text = shown["P-121 margin pump"]
    assert stored["starting_state"] in ("", None) and "Starting margin" not in text


def test_a_shared_caution_is_printed_once(new_context, service):
    """Three findings with the same caution print it once (under the first); a different caution still shows."""
    page = new_context(TABLET).new_page()
    sign_in(page, "tess")
    counts = page.evaluate("""async () => {
      const { findingsList } = await import('/js/result.js');
      const same = 'Isolate before you touch the terminals.';
      const ul = findingsList([
        { flag: 'overloaded', text: 'a', caution: same, state: 'beyond' },
        { flag: 'over_service_factor', text: 'b', caution: same, state: 'beyond' },
        { flag: 'near_breakdown', text: 'c', caution: same, state: 'beyond' },
        { flag: 'underloaded', text: 'd', caution: 'Another caution.', state: 'beyond' }]);
      return [...ul.querySelectorAll('li')].map((li) => li.querySelectorAll('.caution').length);
    }""")
    assert counts == [1, 0, 0, 1]


def test_times_carry_their_zone(new_context, service):
    """A site's wall-clock time is shown with its UTC offset, in one format (ISO 8601 offsets)."""
    page = new_context(TABLET).new_page()
    sign_in(page, "tess")
    shown = page.evaluate("""async () => {
      const { showTime } = await import('/js/dom.js');
      return ['2026-12-03T10:40:00-06:00', '2026-12-03T10:40:00+0100', '2026-12-03T16:40:00Z', '2026-12-03T10:40', null]
        .map(showTime);
    }""")
    assert shown == ["2026-12-03 10:40 UTC-06:00", "2026-12-03 10:40 UTC+01:00", "2026-12-03 16:40 UTC", "2026-12-03 10:40", "–"]


def test_retake_asked_on_an_earlier_day_reaches_the_technician_and_closes(new_context, service):
    """Issue 12, item 2: the supervisor's retake request from an earlier day is on the technician's list with
    a way to take the reading again; the form says its values are the old ones; answering closes it."""
    import uuid

    motor = service.motor("P-130 retake pump")
    status, old = service.call("POST", "/api/v1/readings", {
        "client_id": str(uuid.uuid4()), "motor_id": motor["id"], "taken_at": "2025-01-20T09:15:00+01:00",
        **{k: float(v) for k, v in GOOD.items()}}, token=service.tech_token)
    assert status == 201, old
    status, _ = service.call("POST", f"/api/v1/readings/{old['id']}/review",
                             {"decision": "retake", "comment": "tachometer tape missing, speed doubtful"})
    assert status == 201
    page = new_context(TABLET).new_page()
    sign_in(page, "tess")
    page.goto("/#/mine")
    page.wait_for_selector(f"#retakes li[data-id='{old['id']}']")
    assert "tachometer tape missing" in page.text_content("#retakes")
    shot(page, "retake-01-my-readings")
    page.click(f"#retakes li[data-id='{old['id']}'] a.btn")
    page.wait_for_selector("#retake-note")
    note = page.text_content("#retake-note")
    assert f"replaces reading {old['id']}" in note and "tachometer tape missing" in note and "overwrite" in note
    assert page.input_value("#rd-speed_rpm") == "1480"  # the old value, said so above
    page.fill("#rd-speed_rpm", "1478")
    page.click("#submit-reading")
    page.wait_for_selector("#load-value")
    stored = service.readings_of(motor["id"])
    assert [r["supersedes"] for r in stored] == [None, old["id"]] and stored[1]["inputs"]["speed_rpm"] == 1478
    page.goto("/#/mine")
    page.wait_for_selector("#mine-list, p.panel")
    assert page.locator("#retakes").count() == 0  # answered: off the list


def test_retake_button_on_the_reading_itself(new_context, service):
    import uuid

    motor = service.motor("P-131 retake pump")
    status, old = service.call("POST", "/api/v1/readings", {
        "client_id": str(uuid.uuid4()), "motor_id": motor["id"], **{k: float(v) for k, v in GOOD.items()}},
        token=service.tech_token)
    assert status == 201, old
    assert service.call("POST", f"/api/v1/readings/{old['id']}/review",
                        {"decision": "retake", "comment": "phase 2 clamp reading"})[0] == 201
    page = new_context(TABLET).new_page()
    sign_in(page, "tess")
    page.goto(f"/#/reading/{old['id']}")
    page.wait_for_selector("#take-again-asked")
    # one time format on the page (issue 12, item 6): every date-time reads "YYYY-MM-DD HH:MM UTC±hh:mm"
    text = page.text_content("main")
    stamps = re.findall(r"\d{4}-\d{2}-\d{2}[ T]\d{2}:\d{2}(?::\d{2})?(?: ?UTC[+-]?\d{0,2}:?\d{0,2})?", text)
    assert len(stamps) >= 3 and all(re.fullmatch(r"\d{4}-\d{2}-\d{2} \d{2}:\d{2} UTC(?:[+-]\d{2}:\d{2})?", x) for x in stamps), stamps
    assert "Sam Lindqvist" in page.text_content("#review-state")  # the reviewer by full name
    page.click("#take-again-asked")
    page.wait_for_selector("#retake-note")
    assert "phase 2 clamp reading" in page.text_content("#retake-note")


def test_register_form_wording(new_context, service):
    """Issue 12, item 9: rated output is not "(optional)"; the driven machine is asked up front; a power factor
    typed as a percentage gets the fraction suggested; a synchronous speed typed as the rated speed is named as
    such in plain words (no internal field name); a duplicate tag links to the motor already registered."""
    existing = service.motor("P-140 wording pump")
    page = new_context(TABLET).new_page()
    sign_in(page, "tess")
    page.goto("/#/motor/new")
    page.wait_for_selector("#np-rated_voltage_v")
    assert "optional" not in page.text_content("label[for=np-rated_power_kw]")
    # the driven machine sits with the required nameplate values, not among the optional ones
    assert page.locator("fieldset:has(#np-rated_voltage_v) #np-driven_load").count() == 1
    page.fill("#np-rated_power_factor", "85")
    assert "0.85" in page.text_content("#np-rated_power_factor-err")  # cos φ 85 → did you mean 0.85
    page.fill("#np-rated_power_factor", "")
    page.fill("#t-site", "Harbour pumping station")
    page.fill("#t-tag", "P-141 wording pump")
    for name, value in {"rated_power_kw": "15", "rated_voltage_v": "400", "rated_current_a": "28.5",
                        "rated_frequency_hz": "50", "rated_speed_rpm": "1500"}.items():
        page.fill(f"#np-{name}", value)
    page.click("form button[type=submit]")
    wait_until(page, "document.querySelector('#np-rated_speed_rpm-err').textContent !== ''")
    said = page.text_content("#np-rated_speed_rpm-err")
    assert "synchronous speed of a 4-pole motor" in said and "rated_speed_rpm" not in said and "Rated speed" in said
    shot(page, "register-01-synchronous-speed")
    page.fill("#np-rated_speed_rpm", "1460")
    page.fill("#t-tag", existing["tag"])
    page.click("form button[type=submit]")
    page.wait_for_selector("#existing-motor")
    assert page.get_attribute("#existing-motor", "href") == f"#/motor/{existing['id']}"


def test_picture_enlarges_and_reopens_offline(new_context, service):
    """Issue 12, item 7: the page-drawn picture opens large on a tap and is there again offline."""
    motor = service.motor("P-150 picture pump")
    ctx = new_context(TABLET)
    page = ctx.new_page()
    sign_in(page, "tess")
    page.goto(f"/#/motor/{motor['id']}")
    page.wait_for_selector("#reading-form")
    fill_reading(page, GOOD)
    page.click("#submit-reading")
    page.wait_for_selector("#curve-views svg.curve-view")
    # the legend is a list under the views: no legend element inside a plot area
    assert page.locator("#curve-views .curve-legend").count() == 0 and page.locator(".curve-legend").count() >= 1
    page.click("#curve-views")
    page.wait_for_selector("#curve-dialog[open] svg.curve-view")
    big = page.evaluate("document.querySelector('#curve-dialog svg.curve-view').getBoundingClientRect().width")
    small = page.evaluate("document.querySelector('#curve-views svg.curve-view').getBoundingClientRect().width")
    assert big > small
    shot(page, "curve-01-enlarged")
    page.click("#curve-dialog button[type=submit]")
    reading_id = service.readings_of(motor["id"])[0]["id"]
    page.goto("/#/motors")
    page.wait_for_selector("#motor-list")
    ctx.set_offline(True)
    page.goto(f"/#/reading/{reading_id}")
    page.wait_for_selector("#curve-views svg.curve-view path.c-motor")
    assert "rpm" in page.text_content("#curve-caption")


def test_register_offline_says_the_network_is_needed(new_context, service):
    """The register screen is not precached (it needs the server anyway): offline it says so plainly."""
    ctx = new_context(TABLET)
    page = ctx.new_page()
    sign_in(page, "tess")
    wait_for_worker(page)
    ctx.set_offline(True)
    page.goto("/#/motor/new")
    wait_until(page, "document.querySelector('#main h1') && document.querySelector('#main h1').textContent === 'Register a motor'")
    assert "needs the network" in page.text_content("#main")


def test_portrait_form_puts_the_verdict_before_send_and_phases_in_a_row(new_context, service):
    """Issue 12, item 8, on a portrait tablet and a phone: the as-you-type panel sits just above the send
    button; the three phases share one row; a current's hint speaks of this motor's rating; a speed at or
    above synchronous is questioned before it is sent (and sent as measured on a second press)."""
    motor = service.motor("P-160 portrait pump")
    for viewport in (TABLET, PHONE):
        page = new_context(viewport).new_page()
        sign_in(page, "tess")
        page.goto(f"/#/motor/{motor['id']}")
        page.wait_for_selector("#reading-form")
        order = page.evaluate("""() => { const a = document.querySelector('#provisional'), b = document.querySelector('#submit-reading');
            return !!(a.compareDocumentPosition(b) & Node.DOCUMENT_POSITION_FOLLOWING); }""")
        assert order, viewport
        tops = page.evaluate("['l1','l2','l3'].map(p => Math.round(document.querySelector('#rd-current_' + p + '_a').getBoundingClientRect().top))")
        assert len(set(tops)) == 1, (viewport, tops)
        assert "rated 28.5 A" in page.text_content("#currents-hint")
        assert page.evaluate("document.documentElement.scrollWidth") <= viewport["width"]
    fill_reading(page, {**GOOD, "speed_rpm": "1504"})
    page.click("#submit-reading")
    assert "above the synchronous 1500 rpm" in page.text_content("#reading-error")
    assert service.readings_of(motor["id"]) == []  # not sent on the first press
    page.click("#submit-reading")
    page.wait_for_selector("#verdict, #send-state .state")
    end = time.monotonic() + 15
    while not (stored := service.readings_of(motor["id"])) and time.monotonic() < end:
        time.sleep(0.2)
    assert len(stored) == 1 and stored[0]["inputs"]["speed_rpm"] == 1504
