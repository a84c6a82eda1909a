"""Application services: one function per use case, called by the web views, the CLI and the demo loader.

A service opens the transaction, calls the engine (interpretation) and the
store (rows in, rows out), and returns rows or plain values; rendering them
(API JSON, CSV, terminal text) is the caller's job. Refusals are the store's
exceptions (``NotFoundError``, ``ConflictError``, ``ValidationError``), which
every caller already translates.

Modules: ``records`` (the parsed submission, the engine's input record, JSON
text for storage), ``interpretation`` (the engine, its input errors as
ValidationError), ``motors`` (register, revise, read), ``readings`` (submit,
review, read, day log, export rows, interpret without storing), ``accounts``
(users and tokens for the CLI), ``audit`` (the trail, read back), ``sites`` (a site's settings: default running
hours and energy price, visit interval; issue 11), ``history`` (a motor's visits with baseline and changes, a
site's view; issue 11).
"""
