"""Accounts: users, password hashes, bearer tokens, sessions, login throttling."""

from __future__ import annotations

import base64
import functools
import hashlib
import hmac
import re
import secrets
from datetime import datetime, timedelta
from typing import Any

from sqlalchemy import Connection, bindparam, delete, select, update
from sqlalchemy.exc import IntegrityError
from werkzeug.security import check_password_hash, generate_password_hash

from . import audit
from .errors import ConflictError, NotFoundError, ValidationError
from .schema import ROLES, api_tokens, login_throttle, sessions, users
from .types import utcnow

# scrypt with N=2**15, r=8, p=1 takes 32 MiB and ~80 ms per hash on this kind of machine
# (RFC 7914; the parameters OWASP's password storage cheat sheet lists as a minimum for scrypt).
# Hashes are werkzeug's ("scrypt:N:r:p$salt$hex"); release 2 wrote its own format
# ("scrypt$N$r$p$b64salt$b64key"), which still verifies (see verify_password).
SCRYPT_N = 2 ** 15
SCRYPT_R = 8
SCRYPT_P = 1
PASSWORD_MIN_CHARS = 8
PASSWORD_MAX_CHARS = 1024
USERNAME_RE = re.compile(r"^[a-z0-9][a-z0-9._-]{0,63}$")

# login throttling: after `free` failures in a row a key is locked for 1, 2, 4 ... seconds, at most
# MAX_LOCK_SECONDS; a success clears it
MAX_LOCK_SECONDS = 300


def hash_password(password: str, n: int = SCRYPT_N) -> str:
    """werkzeug's scrypt hash of ``password`` (cost ``n``; 16 random bytes of salt)."""
    return generate_password_hash(password, method=f"scrypt:{int(n)}:{SCRYPT_R}:{SCRYPT_P}", salt_length=16)


def is_release_2_hash(stored: str) -> bool:
    return stored.startswith("scrypt$") and stored.count("$") == 5


def _verify_release_2(password: str, stored: str) -> bool:
    """Release 2's own format: scrypt$N$r$p$base64(salt)$base64(key)."""
    try:
        _, n, r, p, salt, key = stored.split("$")
        want = base64.b64decode(key)
        got = hashlib.scrypt(password.encode("utf-8"), salt=base64.b64decode(salt), n=int(n), r=int(r),
                             p=int(p), maxmem=256 * 1024 * 1024, dklen=len(want))
    except (ValueError, TypeError):
        return False
    return hmac.compare_digest(got, want)


def verify_password(password: str, stored: str | None) -> bool:
    if not stored:
        # spend the same time as a real check, so a missing user is not told apart by timing
        hash_password(password)
        return False
    if is_release_2_hash(stored):
        return _verify_release_2(password, stored)
    try:
        return check_password_hash(stored, password)
    except (ValueError, TypeError):
        return False


def token_hash(token: str) -> str:
    # tokens are 256-bit random values: a fast hash is enough (no dictionary to attack)
    return hashlib.sha256(token.encode("utf-8")).hexdigest()


def check_username(name: Any) -> str:
    if not isinstance(name, str) or not USERNAME_RE.match(name):
        raise ValidationError("username must be 1 to 64 characters: lower-case letters, digits, '.', '_' "
                              "or '-', starting with a letter or digit", "username")
    return name


def check_password(password: Any) -> str:
    if not isinstance(password, str) or not PASSWORD_MIN_CHARS <= len(password) <= PASSWORD_MAX_CHARS:
        raise ValidationError(f"password must be {PASSWORD_MIN_CHARS} to {PASSWORD_MAX_CHARS} characters",
                              "password")
    return password


def _public(row) -> dict:
    return {"id": row["id"], "username": row["username"], "full_name": row["full_name"], "role": row["role"],
            "active": bool(row["active"]), "created_at": row["created_at"].isoformat()}


def add_user(conn: Connection, username: str, role: str, password: str | None, full_name: str = "",
             actor: dict | None = None, scrypt_n: int = SCRYPT_N) -> dict:
    check_username(username)
    if role not in ROLES:
        raise ValidationError("role must be one of " + ", ".join(ROLES), "role")
    if password is not None:
        check_password(password)
    if len(full_name) > 200:
        raise ValidationError("full_name must be at most 200 characters", "full_name")
    try:
        with conn.begin_nested():
            new_id = conn.execute(users.insert().values(
                username=username, role=role, full_name=full_name, active=True, created_at=utcnow(),
                password_hash=hash_password(password, scrypt_n) if password is not None else None,
            )).inserted_primary_key[0]
    except IntegrityError:
        raise ConflictError(f"user {username} exists", "username") from None
    audit.record(conn, actor, "user.add", "user", new_id, {"username": username, "role": role})
    return get_user(conn, new_id)



def get_user(conn: Connection, user_id: int) -> dict:
    row = conn.execute(select(users).where(users.c.id == user_id)).mappings().first()
    if row is None:
        raise NotFoundError(f"no user {user_id}", "user_id")
    return _public(row)


def get_user_by_name(conn: Connection, username: str) -> dict:
    row = conn.execute(select(users).where(users.c.username == username)).mappings().first()
    if row is None:
        raise NotFoundError(f"no user named {username}", "username")
    return _public(row)


def list_users(conn: Connection) -> list[dict]:
    return [_public(r) for r in conn.execute(select(users).order_by(users.c.username)).mappings()]


def authenticate(conn: Connection, username: str, password: str) -> dict | None:
    row = conn.execute(select(users).where(users.c.username == username)).mappings().first()
    ok = verify_password(password, row["password_hash"] if row else None)
    if not ok or not row["active"]:
        return None
    return _public(row)


# --- bearer tokens -----------------------------------------------------------
def create_token(conn: Connection, username: str, label: str = "", actor: dict | None = None) -> str:
    user = get_user_by_name(conn, username)
    token = "swt_" + secrets.token_urlsafe(32)
    new_id = conn.execute(api_tokens.insert().values(user_id=user["id"], token_hash=token_hash(token),
                                                     label=label[:120], created_at=utcnow())).inserted_primary_key[0]
    audit.record(conn, actor, "token.create", "token", new_id, {"username": username, "label": label[:120]})
    return token


@functools.lru_cache(maxsize=1)
def _user_for_token_select():
    # built once (every request with a bearer token runs it); the token's hash goes in as a parameter
    return (select(users).join(api_tokens, api_tokens.c.user_id == users.c.id)
            .where(api_tokens.c.token_hash == bindparam("token_hash"), users.c.active.is_(True)))


def user_for_token(conn: Connection, token: str) -> dict | None:
    row = conn.execute(_user_for_token_select(), {"token_hash": token_hash(token)}).mappings().first()
    return _public(row) if row else None


# --- cookie sessions ---------------------------------------------------------
def create_session(conn: Connection, user: dict, lifetime: timedelta) -> tuple[str, datetime]:
    token = secrets.token_urlsafe(32)
    now = utcnow()
    conn.execute(sessions.insert().values(token_hash=token_hash(token), user_id=user["id"], created_at=now,
                                          expires_at=now + lifetime))
    # keep the table small: drop this user's expired sessions
    conn.execute(delete(sessions).where(sessions.c.user_id == user["id"], sessions.c.expires_at < now))
    return token, now + lifetime


def user_for_session(conn: Connection, token: str) -> dict | None:
    q = (select(users).join(sessions, sessions.c.user_id == users.c.id)
         .where(sessions.c.token_hash == token_hash(token), sessions.c.expires_at > utcnow(),
                users.c.active.is_(True)))
    row = conn.execute(q).mappings().first()
    return _public(row) if row else None


def end_session(conn: Connection, token: str) -> None:
    conn.execute(delete(sessions).where(sessions.c.token_hash == token_hash(token)))


# --- login throttling --------------------------------------------------------
def throttle_wait_seconds(conn: Connection, keys: list[str]) -> float:
    """Seconds until a login for any of ``keys`` may be tried again (0 when free)."""
    now = utcnow()
    rows = conn.execute(select(login_throttle.c.locked_until).where(login_throttle.c.key.in_(keys))).all()
    waits = [(r[0] - now).total_seconds() for r in rows if r[0] is not None]
    return max([0.0] + waits)


def register_failure(conn: Connection, keys: dict[str, int]) -> None:
    """Count a failed login against each key; ``keys`` maps key -> failures allowed before a lock."""
    now = utcnow()
    for key, free in keys.items():
        row = conn.execute(select(login_throttle.c.failures).where(login_throttle.c.key == key)).first()
        failures = (row[0] if row else 0) + 1
        locked = None
        if failures >= free:
            locked = now + timedelta(seconds=min(MAX_LOCK_SECONDS, 2 ** min(20, failures - free)))
        values = {"failures": failures, "last_failure_at": now, "locked_until": locked}
        if row:
            conn.execute(update(login_throttle).where(login_throttle.c.key == key).values(**values))
        else:
            try:
                with conn.begin_nested():
                    conn.execute(login_throttle.insert().values(key=key, **values))
            except IntegrityError:
                conn.execute(update(login_throttle).where(login_throttle.c.key == key).values(**values))


def clear_failures(conn: Connection, keys: list[str]) -> None:
    conn.execute(delete(login_throttle).where(login_throttle.c.key.in_(keys)))
