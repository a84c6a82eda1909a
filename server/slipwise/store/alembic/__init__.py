"""Alembic migration scripts for the slipwise schema (``env.py``, ``versions/``, ``script.py.mako``).

Run through ``slipwise.store.migrations.upgrade`` (``slipwise db upgrade``, or ``serve`` at start), which
passes a locked connection in; there is no ``alembic.ini``. See DEVELOPERS.md, "Adding a migration".
"""
