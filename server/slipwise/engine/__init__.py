"""The interpretation engine: contract fields in, contract results out.

It knows nothing of files, HTTP or SQL: the CLI and the web service call it
with plain columns or records. One concern per module:

``inputs``      parsing of CSV cells and JSON values into typed columns, per-row errors
``nameplate``   grouping rows by nameplate, validation, derivation, fitted-circuit cache
``readings``    reading fields and their cross-checks against the nameplate
``pipeline``    the per-row physics in chunks on a thread pool (formulas: :mod:`slipwise.physics`)
``thresholds``  flag thresholds from overrides
``findings``    the words of each flag: findings and cautions
``records``     results as records, and the one commissioning-record CSV writer
``curve``       the torque-speed picture of one reading
``basis``       the provisional basis: per nameplate, what the page judges a reading with offline
"""

from ..physics.flags import Thresholds
from .curve import torque_speed_curve
from .inputs import InputError
from .nameplate import clear_caches as _clear_nameplates
from .sheet import forget_untested as _forget_untested
from .pipeline import CHUNK_ROWS, interpret_columns
from .records import interpret_one, interpret_records
from .thresholds import thresholds_from_mapping

__all__ = ["InputError", "Thresholds", "interpret_columns", "interpret_one", "interpret_records",
           "torque_speed_curve", "thresholds_from_mapping", "CHUNK_ROWS", "clear_caches"]


def clear_caches() -> None:
    """Forget every fitted circuit, parsed nameplate and kept pattern (benchmarks and tests start cold)."""
    _clear_nameplates()
    _forget_untested()
