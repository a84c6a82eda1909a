"""The page's own module against the shared vectors, its field list against the contract,
and the speed figures: start weight, requests to other hosts."""

from __future__ import annotations

import json
import urllib.request
from pathlib import Path
from urllib.parse import urlsplit

import pytest

from slipwise.contract import CHOICE_FIELDS, NUMBER_FIELDS

from .conftest import TABLET, sign_in, wait_for_worker

pytestmark = pytest.mark.browser

VECTORS = json.loads((Path(__file__).parents[1] / "vectors" / "provisional.json").read_text(encoding="utf-8"))
KEYS = ("poles", "sync_speed_rpm", "slip_pct", "slip_rpm", "load_slip_pct", "voltage_unbalance_pct",
        "current_unbalance_pct")


def test_provisional_module_matches_shared_vectors(new_context, service):
    page = new_context(TABLET).new_page()
    page.goto("/")
    got = page.evaluate("""(cases) => import('/js/provisional.js').then(m =>
        cases.map(c => m.provisional({...c.nameplate, ...c.reading})))""", VECTORS["cases"])
    tol = VECTORS["tolerance"]
    for case, result in zip(VECTORS["cases"], got):
        for key in KEYS:
            want = case["expected"][key]
            if want is None:
                assert result[key] is None, (case["name"], key, result[key])
            else:
                assert result[key] == pytest.approx(want, rel=tol["rel"], abs=tol["abs"]), (case["name"], key)


def test_page_fields_mirror_the_contract(new_context, service):
    page = new_context(TABLET).new_page()
    page.goto("/")
    fields = page.evaluate("""import('/js/fields.js').then(m => ({numbers: [...m.NAMEPLATE_NUMBERS, ...m.READING_NUMBERS,
                               ...m.READING_TEST_NUMBERS, ...m.SITE_NUMBERS],
                               choices: [...m.NAMEPLATE_CHOICES, ...m.READING_CHOICES]}))""")
    assert {f["name"] for f in fields["numbers"]} == set(NUMBER_FIELDS)
    for f in fields["numbers"]:
        spec = NUMBER_FIELDS[f["name"]]
        assert (f["low"], f["high"]) == (spec.low, spec.high), f["name"]
        assert bool(f.get("required")) == spec.required, f["name"]
        assert bool(f.get("integer")) == spec.integer, f["name"]
        assert f["unit"].startswith(spec.unit), f["name"]  # the page may say "% of rated" for "%"
        assert f["unit"], f["name"]  # every field shows a unit or a name beside it
    assert {c["name"]: tuple(c["choices"]) for c in fields["choices"]} == {
        k: v.choices for k, v in CHOICE_FIELDS.items()}


def test_start_weight_and_no_other_hosts(new_context, service):
    ctx = new_context(TABLET)
    hosts, urls = set(), []

    def on_request(req):
        hosts.add(urlsplit(req.url).netloc)
        if "/api/" not in req.url and req.url not in urls:
            urls.append(req.url)

    ctx.on("request", on_request)  # the page's requests and its service worker's precache
    page = ctx.new_page()
    page.goto("/")
    page.wait_for_selector("html[data-ready='1']")
    wait_for_worker(page)
    # the bytes of every file fetched to start, read again over HTTP without compression
    sizes = {}
    for url in urls:
        with urllib.request.urlopen(url, timeout=30) as resp:
            assert resp.headers.get("Content-Encoding") in (None, "identity")
            sizes[url] = len(resp.read())
    total_kb = sum(sizes.values()) / 1024
    print(f"\nFIGURE everything to start: {total_kb:.1f} KB uncompressed in {len(sizes)} files")
    assert len(sizes) >= 10 and min(sizes.values()) > 0
    assert total_kb <= 200, sizes
    sign_in(page, "tess")  # and a working session: still only this host
    page.goto("/#/mine")
    page.wait_for_selector("#tabs:not([hidden])")
    own = urlsplit(service.base).netloc
    print(f"FIGURE requests to other hosts: {len(hosts - {own})}")
    assert hosts == {own}
