"""The role matrix: every route x anonymous, technician, supervisor."""

from __future__ import annotations

import itertools
import re

import pytest

from .conftest import MOTOR, READING, reading_body

_tags = itertools.count(1)

# route -> who may use it: "anyone", "technician" (and supervisors), "supervisor"
ACCESS = {
    ("POST", "/api/v1/session"): "anyone",
    ("GET", "/api/v1/session"): "technician",
    ("DELETE", "/api/v1/session"): "anyone",
    ("GET", "/api/v1/motors"): "technician",
    ("POST", "/api/v1/motors"): "technician",
    ("GET", "/api/v1/motors/<id:motor_id>"): "technician",
    ("PUT", "/api/v1/motors/<id:motor_id>"): "supervisor",
    ("POST", "/api/v1/readings"): "technician",
    ("GET", "/api/v1/readings"): "technician",
    ("GET", "/api/v1/readings/listing"): "technician",
    ("GET", "/api/v1/retakes"): "technician",
    ("GET", "/api/v1/readings/<id:reading_id>/torque-speed.json"): "technician",
    ("GET", "/api/v1/readings/<id:reading_id>"): "technician",
    ("GET", "/api/v1/readings/<id:reading_id>/torque-speed.svg"): "technician",
    # (the technician here took the reading; another technician gets 403: test_certificate.py)
    ("GET", "/api/v1/readings/<id:reading_id>/certificate.pdf"): "technician",
    ("POST", "/api/v1/readings/<id:reading_id>/review"): "supervisor",
    ("GET", "/api/v1/export.csv"): "supervisor",
    ("POST", "/api/v1/interpret"): "technician",
    ("GET", "/api/v1/health"): "anyone",
    ("GET", "/api/v1/audit"): "supervisor",
    ("GET", "/api/v1/openapi.json"): "anyone",
    ("GET", "/"): "anyone",
    ("GET", "/sw.js"): "anyone",
    ("GET", "/static/<path:path>"): "anyone",
    ("GET", "/<path:path>"): "anyone",
    # issue 11
    ("GET", "/api/v1/motors/<id:motor_id>/history"): "technician",
    ("GET", "/api/v1/sites"): "technician",
    ("GET", "/api/v1/sites/<id:site_id>"): "technician",
    ("PUT", "/api/v1/sites/<id:site_id>/settings"): "supervisor",
    ("GET", "/api/v1/sites/<id:site_id>/overview"): "technician",
    ("GET", "/api/v1/sites/<id:site_id>/overview.csv"): "supervisor",
}
RANK = {"anyone": 0, "technician": 1, "supervisor": 2}
WHO = {"anon": 0, "tech": 1, "sup": 2}


def _request(api, method, rule, motor, reading):
    url = (rule.replace("<id:motor_id>", str(motor["id"])).replace("<id:reading_id>", str(reading["id"]))
           .replace("<id:site_id>", "1").replace("<path:path>", "app.js"))
    nameplate = {k: v for k, v in MOTOR.items() if k not in ("site", "location", "description")}
    bodies = {
        ("POST", "/api/v1/session"): {"username": "tess", "password": "tess-password-1"},
        ("POST", "/api/v1/motors"): {**MOTOR, "tag": f"M-{next(_tags)}"},
        ("PUT", "/api/v1/motors/<id:motor_id>"): {**MOTOR, "rated_current_a": 28.0 + next(_tags) / 10},
        ("POST", "/api/v1/readings"): reading_body(motor["id"]),
        ("POST", "/api/v1/readings/<id:reading_id>/review"): {"decision": "accepted"},
        ("POST", "/api/v1/interpret"): {**nameplate, **READING},
        ("PUT", "/api/v1/sites/<id:site_id>/settings"): {"operating_hours_per_year": 4000},
    }
    kw = {"json": bodies[(method, rule)]} if (method, rule) in bodies else {}
    if (method, rule) == ("POST", "/api/v1/session"):
        return api.client.application.test_client().post(url, **kw)  # keep this client's own session
    return getattr(api, method.lower())(url, **kw)


def test_every_route_is_in_the_matrix(app):
    routes = {(m, r.rule) for r in app.url_map.iter_rules() for m in r.methods - {"HEAD", "OPTIONS"}}
    assert routes == set(ACCESS)


@pytest.mark.parametrize("who", ["anon", "tech", "sup"])
def test_role_matrix(app, request, who, motor, reading):
    api = request.getfixturevalue(who)
    expected_ok = {"GET": 200, "POST": 201, "PUT": 200, "DELETE": 204}
    seen = []
    # DELETE /session last: it logs the client out
    for method, rule in sorted(ACCESS, key=lambda k: k == ("DELETE", "/api/v1/session")):
        need = RANK[ACCESS[(method, rule)]]
        r = _request(api, method, rule, motor, reading)
        if WHO[who] >= need:
            ok = expected_ok[method]
            if (method, rule) == ("POST", "/api/v1/interpret"):
                ok = 200
            assert r.status_code == ok, (who, method, rule, r.status_code, r.get_data(as_text=True)[:300])
        else:
            want = 401 if who == "anon" else 403
            assert r.status_code == want, (who, method, rule, r.status_code)
            assert r.get_json()["error"]["code"] == ("unauthorized" if want == 401 else "forbidden")
        seen.append((method, rule))
    assert len(seen) == len(ACCESS)


def test_no_data_without_login(anon, motor, reading):
    for url in ("/api/v1/motors", f"/api/v1/motors/{motor['id']}", "/api/v1/readings",
                f"/api/v1/readings/{reading['id']}", "/api/v1/export.csv", "/api/v1/audit"):
        r = anon.get(url)
        assert r.status_code == 401
        assert not re.search(r"PMP-07|Harbour", r.get_data(as_text=True))
