"""The supervisor's day at a desktop viewport: log, filters, sorting, summary, review, CSV record;
and the review seen by the technician."""

from __future__ import annotations

import csv
import io
import uuid

import pytest

from .conftest import DESKTOP, TABLET, shot, sign_in, wait_until

pytestmark = pytest.mark.browser

SITE = "Northgate water works"
# speeds on the 15 kW 1460 rpm nameplate: higher speed -> less slip -> less load
SPEEDS = [1492, 1470, 1480, 1461]


def fill_day(service):
    motors = [service.motor(f"NW-{n} blower", site=SITE) for n in (1, 2)]
    ids = []
    for i, speed in enumerate(SPEEDS):
        status, r = service.call("POST", "/api/v1/readings", {
            "client_id": str(uuid.uuid4()), "motor_id": motors[i % 2]["id"], "frequency_hz": 50, "speed_rpm": speed,
            "current_l1_a": 12 + 4 * i, "current_l2_a": 12 + 4 * i, "current_l3_a": 12.5 + 4 * i,
            "voltage_l12_v": 400, "voltage_l23_v": 401, "voltage_l31_v": 399}, token=service.tech_token)
        assert status == 201, r
        ids.append(r["id"])
    return motors, ids


def test_supervisor_review_and_csv_desktop(new_context, service):
    motors, ids = fill_day(service)
    ctx = new_context(DESKTOP)
    page = ctx.new_page()
    sign_in(page, "sam")
    asked = []
    page.on("request", lambda req: asked.append(req.url.split("/api/v1", 1)[-1]) if "/api/v1/readings" in req.url else None)
    page.click("#tabs a[data-screen=log]")
    page.wait_for_selector("#filters")
    page.select_option("#flt-site", SITE)
    wait_until(page, f"document.querySelectorAll('#log-table tbody tr').length === {len(ids)}")
    # summary: one count per reading, the chart drawn
    assert f"{len(ids)} reading(s), 0 reviewed" in page.text_content("#summary")
    assert page.locator("#summary svg.histogram rect.bar").count() >= 1
    # sorting by load: the server's load_pct values in ascending, then descending order
    loads = {}
    for rid in ids:
        status, r = service.call("GET", f"/api/v1/readings/{rid}")
        loads[rid] = r["result"]["load_pct"]
    page.click("#log-table th button[data-sort=load_pct]")
    order = [int(x) for x in page.eval_on_selector_all("#log-table tbody tr", "rows => rows.map(r => r.dataset.id)")]
    assert order == sorted(ids, key=lambda i: loads[i])
    page.click("#log-table th button[data-sort=load_pct]")
    order = [int(x) for x in page.eval_on_selector_all("#log-table tbody tr", "rows => rows.map(r => r.dataset.id)")]
    assert order == sorted(ids, key=lambda i: -loads[i])
    assert page.get_attribute("#log-table th:has(button[data-sort=load_pct])", "aria-sort") == "descending"
    shot(page, "sup-01-day-log")
    # the table was drawn from the lean listing, not from the whole records (issue 13)
    assert any(u.startswith("/readings/listing?") for u in asked), asked
    assert not any(u.startswith("/readings?") for u in asked), asked

    # CSV record with one click
    with page.expect_download() as dl:
        page.click("#csv")
    text = open(dl.value.path(), encoding="utf-8").read()
    rows = list(csv.DictReader(io.StringIO(text)))
    assert sorted(int(r["reading_id"]) for r in rows) == sorted(ids)
    assert {r["site"] for r in rows} == {SITE}
    assert all(r["technician"] == "tess" for r in rows)
    assert dl.value.suggested_filename.startswith("slipwise-record-")

    # review: ask for a retake with a comment
    target = ids[0]
    page.click(f"#log-table tbody tr[data-id='{target}'] a")
    page.wait_for_selector("#review-form")
    assert f"/readings/{target}" in asked  # the whole record, fetched when its row is opened
    page.click("#review-form input[value=retake]")
    page.click("#review-submit")
    page.wait_for_selector("#review-error:not(:empty)")  # the server asks for the comment
    assert "comment" in page.text_content("#review-error")
    page.fill("#review-comment", "Tachometer reading looks high; take it on the shaft end.")
    page.click("#review-submit")
    page.wait_for_selector("#review-state .state.retake")
    shot(page, "sup-02-detail-review")
    status, r = service.call("GET", f"/api/v1/readings/{target}")
    assert r["review"]["decision"] == "retake" and r["review"]["reviewer"] == "sam"
    assert r["review"]["comment"].startswith("Tachometer reading looks high")

    # the technician sees it on the tablet
    tpage = new_context(TABLET).new_page()
    sign_in(tpage, "tess")
    tpage.goto("/#/mine")
    tpage.wait_for_selector("#mine-list")
    item = tpage.locator(f"#mine-list li[data-id='{target}']")
    assert item.locator("[data-review]").get_attribute("data-review") == "retake"
    assert "shaft end" in item.text_content()
    shot(tpage, "tech-04-my-day")


def test_desk_review_keeps_the_place_steps_and_accepts_a_run(new_context, service):
    """Issue 12, item 4: rows marked by verdict; a reading opens at its top with previous/next and a way back
    to the same place; nothing preselected in the review; a run of clean readings accepted at once."""
    site = "Eastmoor sewage lift"
    motors = [service.motor(f"EL-{n} lift pump", site=site) for n in (1, 2)]
    ids = []
    for i in range(14):
        status, r = service.call("POST", "/api/v1/readings", {
            "client_id": str(uuid.uuid4()), "motor_id": motors[i % 2]["id"], "frequency_hz": 50, "speed_rpm": 1478,
            "current_l1_a": 20, "current_l2_a": 20.2, "current_l3_a": 19.9 if i != 5 else 15.0,
            "voltage_l12_v": 400, "voltage_l23_v": 401, "voltage_l31_v": 399}, token=service.tech_token)
        assert status == 201, r
        ids.append(r["id"])
    verdicts = {rid: service.call("GET", f"/api/v1/readings/{rid}")[1]["result"]["verdict"] for rid in ids}
    assert verdicts[ids[5]] != "sound" and sum(v == "sound" for v in verdicts.values()) >= 10
    page = new_context(DESKTOP).new_page()
    sign_in(page, "sam")
    page.click("#tabs a[data-screen=log]")
    page.wait_for_selector("#filters")
    page.select_option("#flt-site", site)
    wait_until(page, f"document.querySelectorAll('#log-table tbody tr').length === {len(ids)}")
    marked = dict(page.eval_on_selector_all("#log-table tbody tr", "rows => rows.map(r => [r.dataset.id, r.dataset.verdict])"))
    assert {int(k): v for k, v in marked.items()} == verdicts
    shot(page, "sup-03-day-log-verdicts")
    # open a row far down: the reading opens at its top, with previous/next
    page.evaluate("window.scrollTo(0, document.body.scrollHeight)")
    far = ids[12]
    page.click(f"#log-table tbody tr[data-id='{far}'] td:nth-child(3)")
    page.wait_for_selector("#review-form")
    assert page.evaluate("window.scrollY") == 0
    assert page.locator("#review-form input[name=decision]:checked").count() == 0  # nothing preselected
    page.click("#review-submit")
    assert "Choose a decision" in page.text_content("#review-error")
    assert f"13 of {len(ids)}" in page.text_content(".log-steps")
    page.wait_for_selector("#curve-views svg.curve-view")  # the screen has finished drawing
    page.click("#next-reading")
    wait_until(page, f"location.hash === '#/reading/{ids[13]}'")
    # the next reading's own screen (its steps say 14 of 14) before pressing Previous on it
    wait_until(page, f"(document.querySelector('.log-steps') || {{}}).textContent?.includes('14 of {len(ids)}')")
    page.click("#prev-reading")
    wait_until(page, f"location.hash === '#/reading/{far}'")
    page.click("#back-to-log")
    wait_until(page, f"document.querySelectorAll('#log-table tbody tr').length === {len(ids)}")
    assert page.locator(f"#log-table tbody tr[data-id='{far}'].last-opened").count() == 1
    assert page.evaluate("window.scrollY") > 0  # back at the place it was opened from
    # accept every clean reading at once: each gets its own review; the one that is not sound is left alone
    page.on("dialog", lambda d: d.accept())
    page.click("#select-clean")
    picked = page.locator("#log-table input.pick:checked").count()
    assert picked == sum(v == "sound" for v in verdicts.values())
    page.click("#accept-selected")
    wait_until(page, "document.querySelectorAll('#log-table input.pick').length === 0", 30)
    reviewed = {rid: service.call("GET", f"/api/v1/readings/{rid}")[1]["review"] for rid in ids}
    assert all((reviewed[r] or {}).get("decision") == "accepted" for r in ids if verdicts[r] == "sound")
    assert all(reviewed[r] is None for r in ids if verdicts[r] != "sound")


def test_site_view_ranks_savings_and_keeps_defaults(new_context, service):
    """Issue 11: a supervisor's view of a site: motors by last verdict, overdue visits, right-sizing candidates
    as a bar of yearly savings, the site's defaults (each save a new entry), the CSV."""
    site = "Westfold cooling plant"
    # a 30 kW pump running light (about a third of its rating): a right-sizing candidate
    big = service.motor("WF-CWP-1 cooling water pump", site=site, rated_power_kw=30, rated_current_a=55,
                        rated_speed_rpm=1470, driven_load="variable_torque")
    small = service.motor("WF-CWP-2 cooling water pump", site=site)
    for m, amps, speed in ((big, 24.0, 1494), (small, 20.0, 1478)):
        status, r = service.call("POST", "/api/v1/readings", {
            "client_id": str(uuid.uuid4()), "motor_id": m["id"], "frequency_hz": 50, "speed_rpm": speed,
            "current_l1_a": amps, "current_l2_a": amps, "current_l3_a": amps, "voltage_l12_v": 400,
            "voltage_l23_v": 400, "voltage_l31_v": 400, "operating_hours_per_year": 6000,
            "energy_price_per_kwh": 0.2}, token=service.tech_token)
        assert status == 201, r
    sites = service.call("GET", "/api/v1/sites")[1]["sites"]
    sid = next(x["id"] for x in sites if x["name"] == site)
    overview = service.call("GET", f"/api/v1/sites/{sid}/overview")[1]
    page = new_context(DESKTOP).new_page()
    sign_in(page, "sam")
    page.click("#tabs a[data-screen=sites]")
    page.wait_for_selector("#site-pick")
    page.select_option("#site-pick", str(sid))
    # the chosen site's own table (the first site's screen is replaced when the choice changes)
    wait_until(page, "(document.querySelector('#site-motors') || {}).textContent?.includes('WF-CWP-1') && "
                     "document.querySelectorAll('#site-motors tbody tr').length === 2")
    assert page.locator("#by-verdict li").count() >= 1
    candidates = [m["tag"] for m in overview["right_sizing"] if (m["right_size_savings_kwh"] or 0) > 0]
    assert page.locator("#right-sizing svg.savings rect.bar").count() == len(candidates)
    if candidates:
        assert candidates[0] in page.get_attribute("#right-sizing svg.savings", "aria-label")
    shot(page, "sup-04-site-view")
    page.fill("#set-visit_interval_months", "6")
    page.click("#site-settings button[type=submit]")
    wait_until(page, f"document.querySelector('#set-visit_interval_months').value === '6'", 10)
    after = service.call("GET", f"/api/v1/sites/{sid}")[1]
    assert after["settings"]["visit_interval_months"] == 6
