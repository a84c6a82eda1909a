"""Password hashes: werkzeug's scrypt format now; release 2's own scrypt format still verifies."""

from __future__ import annotations

from werkzeug.security import check_password_hash

from slipwise.store import accounts

from . import release_2


def _release_2_users() -> list[dict]:
    return [u for u in release_2.ROWS["tables"]["users"] if u["password_hash"]]


def test_release_2_hashes_from_the_fixture_verify():
    users = _release_2_users()
    assert {u["username"] for u in users} == set(release_2.PASSWORDS)
    costs = set()
    for user in users:
        stored = user["password_hash"]
        assert accounts.is_release_2_hash(stored), stored  # scrypt$N$r$p$salt$key
        costs.add(stored.split("$")[1])
        assert accounts.verify_password(release_2.PASSWORDS[user["username"]], stored)
        assert not accounts.verify_password(release_2.PASSWORDS[user["username"]] + "x", stored)
    assert costs == {"32768", "1024", "16384"}  # the default cost and two lower ones, as release 2 stored them


def test_new_hashes_are_werkzeug_scrypt():
    stored = accounts.hash_password("correct horse battery", n=2 ** 10)
    method, salt, digest = stored.split("$")
    assert method == "scrypt:1024:8:1" and len(salt) == 16 and len(digest) == 128  # 64-byte key, hex
    assert not accounts.is_release_2_hash(stored)
    assert check_password_hash(stored, "correct horse battery")  # werkzeug reads it by itself
    assert accounts.verify_password("correct horse battery", stored)
    assert not accounts.verify_password("correct horse batterz", stored)
    assert accounts.hash_password("correct horse battery").startswith("scrypt:32768:8:1$")  # default cost


def test_malformed_hashes_do_not_verify():
    for stored in ("scrypt$x$8$1$AAAA$AAAA", "scrypt:abc$salt$00", "plain-text-password", "pbkdf2:sha1$$"):
        assert not accounts.verify_password("plain-text-password", stored)
    assert not accounts.verify_password("anything-at-all", None)
