"""``slipwise demo``: the demo scenario in an SQLite database in the data folder, then serve.

Reads ``motors.csv`` (contract nameplate columns plus site, location,
description), ``readings.csv`` (tag, reading columns, technician, taken_at;
optional site) and ``people.csv`` (username, role, full_name). Every motor and
reading goes through the same validation and services as POST /api/v1/motors
and POST /api/v1/readings. Loading
twice adds nothing: client_ids are derived from the rows.
"""

from __future__ import annotations

import csv
import json
import os
import secrets
import sys
import uuid
from pathlib import Path

from slipwise.contract import READING_FIELDS

DEFAULT_SAMPLES = Path(__file__).resolve().parents[2] / "field_samples"
DEMO_NAMESPACE = uuid.UUID("6f1c7c1e-4b7a-4d1e-9a57-2d0c5e7f4a10")
CREDENTIALS_FILE = "demo-accounts.json"


class DemoError(Exception):
    pass


def _rows(path: Path) -> list[dict[str, str]]:
    if not path.is_file():
        raise DemoError(f"demo file not found: {path}")
    with path.open(encoding="utf-8-sig", newline="") as f:
        return [{k.strip(): (v or "").strip() for k, v in row.items() if k} for row in csv.DictReader(f)]


def load(db, samples: Path, data_dir: Path) -> dict:
    """Load people, motors and readings; returns counts and the accounts with their passwords."""
    from slipwise.contract import FieldError, parse_text
    from slipwise.contract.models import nameplate_values, reading_values, taken_at
    from slipwise.services import accounts as account_services
    from slipwise.services import motors as motor_services
    from slipwise.services import readings as reading_services
    from slipwise.services.records import Submission
    from slipwise.store import accounts
    from slipwise.store.errors import StoreError
    from slipwise.store.types import utcnow

    people = _rows(samples / "people.csv")
    motor_rows = _rows(samples / "motors.csv")
    reading_rows = _rows(samples / "readings.csv")

    cred_path = data_dir / CREDENTIALS_FILE
    known = json.loads(cred_path.read_text()) if cred_path.exists() else {}
    creds = []
    with db.write() as conn:  # every account or none: a half-made list would lose the passwords just drawn
        existing = {u["username"] for u in accounts.list_users(conn)}
        for i, p in enumerate(people, start=2):
            name = p.get("username", "")
            password = known.get(name) or secrets.token_urlsafe(9)
            if name not in existing:
                try:
                    accounts.add_user(conn, name, p.get("role", ""), password, p.get("full_name", ""))
                except StoreError as e:
                    raise DemoError(f"people.csv line {i}: {e.message}") from None
            elif name not in known:
                continue  # made outside the demo: its password is not ours to print
            known[name] = password
            creds.append({"username": name, "role": p.get("role"), "full_name": p.get("full_name", ""),
                          "password": password})
    fd = os.open(cred_path, os.O_WRONLY | os.O_CREAT | os.O_TRUNC, 0o600)
    with os.fdopen(fd, "w") as f:
        json.dump(known, f, indent=1)

    motor_ids = {(m["site"], m["tag"]): m["id"] for m in motor_services.list_motors(db)}
    made = 0
    for i, row in enumerate(motor_rows, start=2):
        try:
            site = parse_text("site", row.get("site"))
            tag = parse_text("tag", row.get("tag"))
            fields = nameplate_values(row)
            fields["location"] = parse_text("location", row.get("location"))
            fields["description"] = parse_text("description", row.get("description"))
            if (site, tag) not in motor_ids:
                motor_ids[(site, tag)] = motor_services.register_motor(db, None, site, tag, fields)["id"]
                made += 1
        except (StoreError, FieldError) as e:
            raise DemoError(f"motors.csv line {i}: {e.message}") from None

    settings_changed = _load_site_settings(db, samples)   # issue 11: before the readings take the defaults

    by_tag: dict[str, list[int]] = {}
    for (site, tag), mid in motor_ids.items():
        by_tag.setdefault(tag, []).append(mid)
    users = {u["username"]: u for u in account_services.list_users(db)}

    skipped: list[str] = []
    # the earlier visits first, as they happened: a motor's history (and the certificates that print it)
    # counts only readings the record held before the one certified
    visits = _load_visits(db, samples, motor_ids, by_tag, users, skipped)
    stored = replayed = 0
    for i, row in enumerate(reading_rows, start=2):
        tag = row.get("tag", "")
        if row.get("site"):
            ids = [motor_ids[(row["site"], tag)]] if (row["site"], tag) in motor_ids else []
        else:
            ids = by_tag.get(tag, [])
        if len(ids) != 1:
            raise DemoError(f"readings.csv line {i}: tag {tag!r} names {len(ids)} motors; it must name one")
        user = users.get(row.get("technician", ""))
        if user is None:
            raise DemoError(f"readings.csv line {i}: technician {row.get('technician')!r} is not in people.csv")
        try:
            inputs = reading_values(row)
            taken = taken_at(row.get("taken_at"), utcnow())
            key = json.dumps([tag, row.get("site", ""), {k: row.get(k, "") for k in READING_FIELDS}], sort_keys=True)
            sub = Submission(str(uuid.uuid5(DEMO_NAMESPACE, key)), ids[0], None, inputs, *taken)
            _, created = reading_services.submit_reading(db, user, sub)
        except (StoreError, FieldError) as e:
            # the demo day holds deliberate typos (they show error reporting in `analyze`);
            # the service refuses them as it would a technician's, and the demo says so
            skipped.append(f"readings.csv line {i} not stored: {e.message}")
            continue
        stored += created
        replayed += not created
    return {"accounts": creds, "motors_added": made, "readings_added": stored, "readings_present": replayed,
            "skipped": skipped, "visits_added": visits, "site_settings_written": settings_changed}


# --- issue 11: site settings and earlier visits (field_samples/sites.csv, visits.csv) --------------------------
def _load_site_settings(db, samples: Path) -> int:
    """Each site's defaults from sites.csv (optional file); written only where they differ from those in force."""
    from slipwise.contract.models import SiteSettingsInput, parse_body
    from slipwise.services import sites as site_services
    from slipwise.contract import FieldError

    path = samples / "sites.csv"
    if not path.is_file():
        return 0
    known = {s["name"]: s for s in site_services.list_sites(db)}
    written = 0
    for i, row in enumerate(_rows(path), start=2):
        site = known.get(row.get("site", ""))
        if site is None:
            raise DemoError(f"sites.csv line {i}: site {row.get('site')!r} has no motor in motors.csv")
        try:
            values = parse_body(SiteSettingsInput, {k: (v or None) for k, v in row.items() if k != "site"})
        except FieldError as e:
            raise DemoError(f"sites.csv line {i}: {e.message}") from None
        if values != {k: site_services.settings_of(site)[k] for k in values}:
            site_services.set_site_settings(db, None, site["id"], values)
            written += 1
    return written


def _load_visits(db, samples: Path, motor_ids: dict, by_tag: dict, users: dict, skipped: list) -> int:
    """Earlier visits of some motors (visits.csv, optional; the readings.csv columns plus review, reviewer).

    A visit with a review is reviewed by that supervisor when it is first stored (a replay adds nothing).
    """
    from slipwise.contract import FieldError
    from slipwise.contract.models import reading_values, taken_at
    from slipwise.services import readings as reading_services
    from slipwise.services.records import Submission
    from slipwise.store.errors import StoreError
    from slipwise.store.types import utcnow

    path = samples / "visits.csv"
    if not path.is_file():
        return 0
    added = 0
    for i, row in enumerate(_rows(path), start=2):
        tag = row.get("tag", "")
        ids = ([motor_ids[(row["site"], tag)]] if (row.get("site"), tag) in motor_ids else []) if row.get("site") \
            else by_tag.get(tag, [])
        user, reviewer = users.get(row.get("technician", "")), users.get(row.get("reviewer", ""))
        if len(ids) != 1 or user is None or (row.get("review") and reviewer is None):
            raise DemoError(f"visits.csv line {i}: tag, technician or reviewer unknown")
        try:
            taken = taken_at(row.get("taken_at"), utcnow())
            key = json.dumps(["visit", tag, {k: row.get(k, "") for k in READING_FIELDS}], sort_keys=True)
            sub = Submission(str(uuid.uuid5(DEMO_NAMESPACE, key)), ids[0], None, reading_values(row), *taken)
            record, created = reading_services.submit_reading(db, user, sub)
            if created and row.get("review"):
                reading_services.review_reading(db, reviewer, record.row["id"], row["review"],
                                                row.get("review_comment", ""))
        except (StoreError, FieldError) as e:
            skipped.append(f"visits.csv line {i} not stored: {e.message}")
            continue
        added += created
    return added


def run_demo(args, data_dir: Path) -> int:
    from slipwise.store import Database, sqlite_url
    from slipwise.store.errors import SchemaError

    samples = Path(args.samples).resolve() if args.samples else DEFAULT_SAMPLES
    url = args.database_url or sqlite_url(data_dir / "slipwise.sqlite3")
    data_dir.mkdir(parents=True, exist_ok=True)
    db = Database(url)
    try:
        db.upgrade()
        summary = load(db, samples, data_dir)
    except (DemoError, SchemaError) as e:
        print(f"slipwise demo: {e}", file=sys.stderr)
        return 2
    finally:
        db.dispose()
    print(f"demo database {db.describe()}")
    print(f"loaded from {samples}: {summary['motors_added']} motors and {summary['readings_added']} readings added"
          + (f" ({summary['readings_present']} already there)" if summary["readings_present"] else ""))
    if summary.get("visits_added"):
        print(f"earlier visits: {summary['visits_added']} readings added (field_samples/visits.csv)")
    for line in summary["skipped"]:
        print(f"  {line}")
    print("demo accounts (fictional people; passwords kept in "
          f"{data_dir / CREDENTIALS_FILE}):")
    for a in summary["accounts"]:
        print(f"  {a['username']:<12} {a['role']:<11} password {a['password']:<14} {a['full_name']}")
    sys.stdout.flush()
    if args.no_serve:
        return 0
    from slipwise.serving import serve
    config = {"DATA_DIR": str(data_dir), "DATABASE_URL": url}
    if getattr(args, "thresholds", None):
        config["THRESHOLDS"] = args.thresholds
    return serve(args, config)
