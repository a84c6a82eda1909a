"""Behind a load balancer (``PROXY_HOPS``): the login throttle's per-address count is the client's address
from X-Forwarded-For, not the balancer's; without the setting the header is not believed."""

from __future__ import annotations

from slipwise.web.auth import ADDRESS_FREE_FAILURES
from tests.service.conftest import PASSWORDS, make_app


def _fail_from(client, address: str, n: int, username: str = "nobody") -> int:
    status = 0
    for i in range(n):
        status = client.post("/api/v1/session", json={"username": f"{username}-{i}", "password": "wrong"},
                             headers={"X-Forwarded-For": address}).status_code
    return status


def test_the_throttle_counts_per_client_behind_a_balancer(app, database, tmp_path, static_dir):
    behind = make_app(database, tmp_path, static_dir, PROXY_HOPS=1)
    client = behind.test_client()
    # one client guessing many user names is locked out by address ...
    assert _fail_from(client, "198.51.100.7", ADDRESS_FREE_FAILURES) == 401
    r = client.post("/api/v1/session", json={"username": "tess", "password": PASSWORDS["tess"]},
                    headers={"X-Forwarded-For": "198.51.100.7"})
    assert r.status_code == 429
    # ... while another client behind the same balancer still logs in
    r = client.post("/api/v1/session", json={"username": "tess", "password": PASSWORDS["tess"]},
                    headers={"X-Forwarded-For": "198.51.100.8"})
    assert r.status_code == 201, r.get_data(as_text=True)


def test_without_proxy_hops_the_forwarded_address_is_not_believed(app):
    client = app.test_client()
    assert _fail_from(client, "198.51.100.7", ADDRESS_FREE_FAILURES) == 401
    r = client.post("/api/v1/session", json={"username": "tess", "password": PASSWORDS["tess"]},
                    headers={"X-Forwarded-For": "198.51.100.99"})  # a forged header does not escape the lock
    assert r.status_code == 429
