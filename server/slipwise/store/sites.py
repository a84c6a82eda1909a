"""Sites and their settings (issue 11): default running hours and energy price, visit interval.

Rows in, rows out. ``site_settings`` is append-only: a change is a new row and
the latest row of a site is the one in force.
"""

from __future__ import annotations

import functools
from datetime import datetime
from typing import Any, Mapping

from sqlalchemy import Connection, RowMapping, bindparam, func, select

from .schema import site_settings, sites, users


def _latest_ids():
    return (select(site_settings.c.site_id, func.max(site_settings.c.id).label("settings_id"))
            .group_by(site_settings.c.site_id).subquery())


def _site_select():
    latest = _latest_ids()
    return (select(sites.c.id, sites.c.name, site_settings.c.operating_hours_per_year,
                   site_settings.c.energy_price_per_kwh, site_settings.c.visit_interval_months,
                   site_settings.c.set_at, users.c.username.label("set_by"))
            .select_from(sites)
            .outerjoin(latest, latest.c.site_id == sites.c.id)
            .outerjoin(site_settings, site_settings.c.id == latest.c.settings_id)
            .outerjoin(users, users.c.id == site_settings.c.set_by))


def site_rows(conn: Connection) -> list[RowMapping]:
    """Every site by name, with the settings in force (None where never set)."""
    return conn.execute(_site_select().order_by(sites.c.name)).mappings().all()


def site_row(conn: Connection, site_id: int) -> RowMapping | None:
    return conn.execute(_site_select().where(sites.c.id == site_id)).mappings().first()


def site_row_by_name(conn: Connection, name: str) -> RowMapping | None:
    return conn.execute(_site_select().where(sites.c.name == name)).mappings().first()


def insert_settings(conn: Connection, site_id: int, values: Mapping[str, Any], set_by: int | None,
                    set_at: datetime) -> int:
    """Append a settings row for a site; returns its id."""
    return conn.execute(site_settings.insert().values(
        site_id=site_id, operating_hours_per_year=values.get("operating_hours_per_year"),
        energy_price_per_kwh=values.get("energy_price_per_kwh"),
        visit_interval_months=values["visit_interval_months"], set_at=set_at, set_by=set_by)).inserted_primary_key[0]


@functools.lru_cache(maxsize=1)
def _motor_site_select():
    # built once (every submission runs it): the site row of the motor's site, one statement
    from .schema import motors
    return _site_select().where(sites.c.id == select(motors.c.site_id).where(motors.c.id == bindparam("motor_id"))
                                .scalar_subquery())


def settings_of_motor(conn: Connection, motor_id: int) -> RowMapping | None:
    """The settings in force at a motor's site (the site row of :func:`site_row`), None without the motor."""
    return conn.execute(_motor_site_select(), {"motor_id": motor_id}).mappings().first()
