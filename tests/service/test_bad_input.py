"""Bad input never gives a 500, a traceback or a partly stored record."""

from __future__ import annotations

import json

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from slipwise.contract import INPUT_FIELDS

from .conftest import MOTOR, count_rows, reading_body

FIELD_NAMES = sorted(set(INPUT_FIELDS) | {"client_id", "motor_id", "supersedes", "site", "tag", "decision",
                                           "comment", "username", "password", "revision", "location"})
scalars = st.one_of(st.none(), st.booleans(), st.integers(min_value=-2 ** 70, max_value=2 ** 70),
                    st.floats(allow_nan=True, allow_infinity=True), st.text(max_size=30),
                    st.sampled_from(["", "1e400", "NaN", "-0", "0x10", "١٢", "2025-02-30T10:00:00", "\x00", "=1+1"]))
values = st.recursive(scalars, lambda inner: st.lists(inner, max_size=3) | st.dictionaries(st.text(max_size=5),
                                                                                           inner, max_size=3),
                      max_leaves=6)
bodies = st.dictionaries(st.sampled_from(FIELD_NAMES) | st.text(max_size=8), values, max_size=8)

WRITES = ["/api/v1/readings", "/api/v1/motors", "/api/v1/motors/{motor}", "/api/v1/readings/{reading}/review",
          "/api/v1/interpret", "/api/v1/session"]
READS = ["/api/v1/readings", "/api/v1/motors", "/api/v1/export.csv", "/api/v1/audit", "/api/v1/health"]


def _check(r):
    assert r.status_code < 500, r.get_data(as_text=True)[:500]
    text = r.get_data(as_text=True)
    assert "Traceback" not in text
    if r.status_code >= 400:
        err = r.get_json()["error"]
        assert set(err) == {"code", "message", "field"} and err["message"]


@settings(max_examples=150, deadline=None, suppress_health_check=list(HealthCheck))
@given(route=st.sampled_from(WRITES), body=bodies, merge=st.booleans())
def test_random_json_bodies(app, sup, motor, reading, route, body, merge):
    url = route.format(motor=motor["id"], reading=reading["id"])
    if merge:  # start from a valid body and break some fields, so the deeper checks are reached
        base = reading_body(motor["id"]) if "readings" == url.rsplit("/", 1)[-1] else dict(MOTOR)
        body = {**base, **body}
    before = count_rows(app, "readings"), count_rows(app, "motor_revisions"), count_rows(app, "reviews")
    method = sup.put if route == "/api/v1/motors/{motor}" else sup.post
    r = method(url, json=body)
    _check(r)
    if r.status_code >= 400:
        assert (count_rows(app, "readings"), count_rows(app, "motor_revisions"), count_rows(app, "reviews")) == before


@settings(max_examples=100, deadline=None, suppress_health_check=list(HealthCheck))
@given(route=st.sampled_from(READS), params=st.dictionaries(
    st.sampled_from(["date", "site", "flag", "technician", "limit", "motor_id"]) | st.text(max_size=6),
    st.text(max_size=20) | st.sampled_from(["2025-02-30", "99999999999999999999999", "-1", "0", "2025-03-14"]),
    max_size=4))
def test_random_query_strings(sup, route, params):
    _check(sup.get(route, query_string=params))


@pytest.mark.parametrize("raw,ctype", [
    (b"{", "application/json"), (b"[1, 2]", "application/json"), (b"\xff\xfe", "application/json"),
    (b"[" * 50_000 + b"]" * 50_000, "application/json"), (b'{"speed_rpm": NaN}', "application/json"),
    (b'{"speed_rpm": 1e999}', "application/json"), (b"speed_rpm=1", "application/x-www-form-urlencoded"),
    (b"", "application/json"), (b"x" * 300_000, "application/json")])
def test_malformed_bodies(app, sup, raw, ctype):
    for url in ("/api/v1/readings", "/api/v1/motors", "/api/v1/session", "/api/v1/interpret"):
        r = sup.post(url, data=raw, content_type=ctype)
        _check(r)
        assert r.status_code in (400, 413, 415), (url, r.status_code)
    assert count_rows(app, "readings") == 0


def test_odd_paths(tech):
    for url in ("/api/v1/readings/99999999999999999999999999", "/api/v1/readings/0", "/api/v1/readings/-1",
                "/api/v1/motors/1e3", "/api/v1/readings/%00", "/api/v1/nothing", "/api/v2/readings"):
        r = tech.get(url)
        _check(r)
        assert r.status_code == 404, url
    r = tech.client.open("/api/v1/readings", method="PATCH", json={})
    _check(r)
    assert r.status_code == 405


def test_json_error_body_is_parseable(tech):
    r = tech.post("/api/v1/readings", json={"motor_id": 1})
    assert json.loads(r.get_data(as_text=True))["error"]["field"] == "client_id"
