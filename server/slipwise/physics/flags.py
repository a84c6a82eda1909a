"""Flags: their thresholds and the combination mask that encodes them per row.

The judgements only (thresholds, masks); the plain-language findings and
cautions that go with a flag live in :mod:`slipwise.engine.findings`.
"""

from __future__ import annotations

from dataclasses import dataclass, fields

import numpy as np

from .winding import DEFAULT_UNBALANCE_LIMIT_PCT

FLAG_ORDER = (
    "speed_above_synchronous", "overloaded", "over_service_factor", "near_breakdown", "underloaded",
    "supply_out_of_tolerance", "voltage_unbalance", "current_unbalance", "readings_inconsistent",
    "starting_torque_low",
    # the commissioning sheet's tests (engine 1.2.0)
    "insulation_low", "polarization_index_low", "winding_resistance_unbalance", "overload_setting_high",
    "overload_setting_low", "vibration_high", "rotation_wrong", "instrument_calibration_expired",
)


class RangedSettings:
    """What a frozen dataclass of overridable limits shares: its names and the check of each value against
    its ``RANGES`` entry (``Thresholds`` here, ``trend.TrendThresholds``)."""

    RANGES: dict = {}

    @classmethod
    def names(cls) -> tuple[str, ...]:
        return tuple(f.name for f in fields(cls))

    def validate(self) -> list[tuple[str, str]]:
        """``(field, message)`` for each value outside its allowed range."""
        bad = []
        for name in self.names():
            value = getattr(self, name)
            lo, hi = self.RANGES[name]
            if not (isinstance(value, (int, float)) and np.isfinite(value) and lo <= value <= hi):
                bad.append((name, f"{name} must be a number from {lo:g} to {hi:g}"))
        return bad


@dataclass(frozen=True)
class Thresholds(RangedSettings):
    """Flag thresholds. Every one can be overridden.

    Attributes
    ----------
    underloaded_pct : float
        Load below which a motor is flagged underloaded [% of rated]; 40 %
        is common practice (efficiency and power factor fall off below it;
        US DOE motor fact sheets use the same figure).
    overloaded_pct : float
        Load above which a motor is flagged overloaded [% of rated]: rated
        output (IEC 60034-1 / NEMA MG 1 duty S1).
    near_breakdown_margin : float
        Breakdown torque over operating torque below which the point is
        flagged near breakdown [-]; 1.5 is common practice (a 15-20 % voltage
        dip cuts breakdown torque by 28-36 %).
    voltage_unbalance_pct : float
        NEMA voltage unbalance above which the supply is flagged [%]: NEMA
        MG 1 derating starts at 1 %.
    current_unbalance_pct : float
        Current unbalance above which it is flagged [%]; 10 % is common
        practice (current unbalance runs 6-10 times the voltage unbalance).
    inconsistency_factor : float
        Multiplier on the combined bands of two load methods before their
        disagreement is flagged [-].
    starting_margin : float
        Locked-rotor torque over the breakaway torque the load needs, below
        which a load that needs breakaway torque is flagged [-]; 1.3 is
        common practice (it covers a 10 % voltage dip at start, 0.9^2 = 0.81).
    winding_resistance_unbalance_pct : float
        Largest unbalance of the three line-to-line winding resistances [%];
        2 % is a common acceptance figure (common practice; no standard found
        that states it for motors; :mod:`slipwise.physics.winding`).
    right_size_load_pct : float
        Top of the load band below which a motor is a right-sizing candidate
        [% of rated] (issue 11, :mod:`slipwise.engine.energy`); 75 %: US DOE
        motors are designed for 50-100 % load with best efficiency near
        75 %, and running at 75-100 % of rating is the common aim (common
        practice).
    """

    underloaded_pct: float = 40.0
    overloaded_pct: float = 100.0
    near_breakdown_margin: float = 1.5
    voltage_unbalance_pct: float = 1.0
    current_unbalance_pct: float = 10.0
    inconsistency_factor: float = 1.0
    starting_margin: float = 1.3
    winding_resistance_unbalance_pct: float = DEFAULT_UNBALANCE_LIMIT_PCT
    # issue 11: right-sizing (engine/energy.py)
    right_size_load_pct: float = 75.0

    #: allowed ranges for overrides
    RANGES = {
        "underloaded_pct": (0.0, 100.0), "overloaded_pct": (50.0, 200.0),
        "near_breakdown_margin": (1.0, 5.0), "voltage_unbalance_pct": (0.1, 10.0),
        "current_unbalance_pct": (1.0, 50.0), "inconsistency_factor": (0.25, 5.0),
        "starting_margin": (1.0, 3.0), "winding_resistance_unbalance_pct": (0.5, 20.0),
        "right_size_load_pct": (40.0, 100.0),   # issue 11
    }

    def validate(self) -> list[tuple[str, str]]:
        """``(field, message)`` for each value outside its allowed range, and the two limits' order."""
        bad = super().validate()
        if self.underloaded_pct >= self.overloaded_pct:
            bad.append(("underloaded_pct", "underloaded_pct must be below overloaded_pct"))
        return bad


def combination_mask(flag_arrays: dict, outlier, on_drive, at_synchronous=None) -> np.ndarray:
    """One integer per row encoding its flags, the disagreeing method and the supply.

    Parameters
    ----------
    flag_arrays : dict of str -> array of bool
        One boolean array per code of :data:`FLAG_ORDER`.
    outlier : array of int
        Method index that disagrees (see :func:`load.fuse`), -1 none, -2 ambiguous.
    on_drive : array of bool
    at_synchronous : array of bool, optional
        Speed equal to synchronous within the tachometer's resolution.
    """
    n = len(next(iter(flag_arrays.values())))
    mask = np.zeros(n, dtype=np.int64)
    for bit, code in enumerate(FLAG_ORDER):
        mask |= np.asarray(flag_arrays[code], dtype=bool).astype(np.int64) << bit
    mask |= (np.asarray(outlier, dtype=np.int64) + 2) << len(FLAG_ORDER)
    mask |= np.asarray(on_drive, dtype=bool).astype(np.int64) << (len(FLAG_ORDER) + 3)
    if at_synchronous is not None:
        mask |= np.asarray(at_synchronous, dtype=bool).astype(np.int64) << (len(FLAG_ORDER) + 4)
    return mask


def decode_combination(mask: int) -> tuple[tuple[str, ...], int, bool, bool]:
    """What one value of :func:`combination_mask` holds.

    Returns
    -------
    codes : tuple of str
        Flag codes set, in :data:`FLAG_ORDER`.
    outlier : int
        Method index that disagrees, -1 none, -2 ambiguous.
    on_drive : bool
    at_synchronous : bool
    """
    m = int(mask)
    codes = tuple(code for bit, code in enumerate(FLAG_ORDER) if m >> bit & 1)
    outlier = ((m >> len(FLAG_ORDER)) & 0b111) - 2
    return codes, outlier, bool(m >> (len(FLAG_ORDER) + 3) & 1), bool(m >> (len(FLAG_ORDER) + 4) & 1)
