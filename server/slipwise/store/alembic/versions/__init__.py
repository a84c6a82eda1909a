"""One file per schema version: ``NNNN_what.py`` with ``revision = "NNNN"`` (the integer schema version)."""
