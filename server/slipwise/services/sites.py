"""Sites and their settings (issue 11): defaults for a reading's energy inputs, the visit interval.

A supervisor sets a site's default ``operating_hours_per_year`` and
``energy_price_per_kwh`` once; a reading that leaves them blank takes them
(:func:`with_site_defaults`), a value on the reading overrides them. The
defaults used are stored in the reading's ``inputs`` (the fields as
interpreted), so the stored record says what its result was computed with.
"""

from __future__ import annotations

from typing import Any, Mapping

from sqlalchemy import RowMapping

from slipwise.contract import ENERGY_FIELDS, NUMBER_FIELDS
from slipwise.store import audit
from slipwise.store import sites as store
from slipwise.store.database import Database
from slipwise.store.errors import NotFoundError
from slipwise.store.types import utcnow

#: Visit interval where a site never set one [months]: the common yearly inspection (common practice).
DEFAULT_VISIT_INTERVAL_MONTHS = int(NUMBER_FIELDS["visit_interval_months"].default)
SETTING_FIELDS = ENERGY_FIELDS + ("visit_interval_months",)


def settings_of(row: Mapping[str, Any] | None) -> dict:
    """The settings in force from a site row (the default interval where never set)."""
    row = row or {}
    return {"operating_hours_per_year": row.get("operating_hours_per_year"),
            "energy_price_per_kwh": row.get("energy_price_per_kwh"),
            "visit_interval_months": row.get("visit_interval_months") or DEFAULT_VISIT_INTERVAL_MONTHS}


def with_site_defaults(inputs: Mapping[str, Any], site: Mapping[str, Any] | None) -> dict:
    """The reading's inputs with each blank energy field taken from the site's settings."""
    out = dict(inputs)
    for name in ENERGY_FIELDS:
        if out.get(name) is None and site is not None and site.get(name) is not None:
            out[name] = site[name]
    return out


def defaults_for_motor(conn, motor_id: int) -> RowMapping | None:
    """The settings in force at a motor's site (inside the caller's transaction)."""
    return store.settings_of_motor(conn, motor_id)


def list_sites(db: Database) -> list[RowMapping]:
    with db.read() as conn:
        return store.site_rows(conn)


def get_site(db: Database, site_id: int) -> RowMapping:
    with db.read() as conn:
        row = store.site_row(conn, site_id)
    if row is None:
        raise NotFoundError(f"no site with id {site_id}", "site_id")
    return row


def set_site_settings(db: Database, actor: Mapping[str, Any] | None, site_id: int,
                      values: Mapping[str, Any]) -> RowMapping:
    """Append the site's settings (``values``: validated; a blank energy field means no default)."""
    clean = {name: values.get(name) for name in SETTING_FIELDS}
    if clean["visit_interval_months"] is None:
        clean["visit_interval_months"] = DEFAULT_VISIT_INTERVAL_MONTHS
    with db.write() as conn:
        if store.site_row(conn, site_id) is None:
            raise NotFoundError(f"no site with id {site_id}", "site_id")
        store.insert_settings(conn, site_id, clean, actor["id"] if actor else None, utcnow())
        audit.record(conn, actor, "site.settings", "site", site_id, clean)
        return store.site_row(conn, site_id)
