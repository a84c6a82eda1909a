"""Change from a baseline: a motor's later visits against its first accepted one (issue 11).

Each function compares a quantity at a later visit with the same quantity at
the baseline and says whether the change is worth a finding. Numbers in,
booleans out, vectorised over visits; NaN on either side (not measured)
gives False. Thresholds are :class:`TrendThresholds`, every one documented
and overridable.

References
----------
.. [1] IEEE Std 43-2013, Recommended Practice for Testing Insulation
   Resistance of Electric Machinery: insulation resistance is best read as a
   trend of values corrected to 40 deg C, taken under like conditions; a
   marked fall between tests calls for investigation even above the
   minimum (clause 12, from memory; no numeric fall is prescribed).
.. [2] ISO 10816-1:1995, Mechanical vibration, Part 1: General guidelines,
   clause 5.3 (criterion II, change in vibration magnitude): a change of
   25 % of the zone B/C boundary value is significant, whether the new value
   is still in zone A or B (from memory).
.. [3] NEMA MG 1, 14.36 (and its commentary): a small voltage unbalance gives
   a current unbalance of about 6 to 10 times as much (rule of thumb, from
   memory).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .flags import RangedSettings


@dataclass(frozen=True)
class TrendThresholds(RangedSettings):
    """What change from the baseline is worth a finding. Every one can be overridden.

    Attributes
    ----------
    insulation_fall_pct : float
        Fall of the insulation resistance at 40 deg C from the baseline [% of
        the baseline]; 50 %: a halving between visits under like conditions
        is a marked fall (IEEE 43 [1]_ asks for trending without a number;
        50 % is our choice, common practice).
    polarization_index_fall_pct : float
        Fall of the polarization index from the baseline [% of the baseline];
        20 % (our choice: a PI of 4 falling to 3.2 still passes IEEE 43's
        2.0 but says the insulation is taking up moisture or dirt).
    winding_unbalance_rise_pct : float
        Rise of the winding resistance unbalance [percentage points]; 1 point
        (our choice: common limits on the unbalance itself are 1-2 %, common
        practice).
    vibration_rise_share : float
        Rise of the vibration velocity as a share of the zone B/C boundary
        [-]; 0.25 (ISO 10816-1 [2]_, from memory).
    load_drift_pct : float
        Change of the load from the baseline [percentage points of rated
        output] beyond both bands' widths; 15 points (our choice).
    current_unbalance_per_voltage : float
        Current unbalance the supply explains per point of voltage unbalance
        [-]; 10 (the top of NEMA MG 1's 6-10x rule of thumb [3]_, from memory,
        so only a rise the supply cannot explain is reported).
    current_unbalance_margin_pct : float
        Rise of the current unbalance beyond what the voltage unbalance
        explains [percentage points]; 2 points (our choice: clamp readings of
        one meter, their accuracy largely cancels in the ratio).
    """

    insulation_fall_pct: float = 50.0
    polarization_index_fall_pct: float = 20.0
    winding_unbalance_rise_pct: float = 1.0
    vibration_rise_share: float = 0.25
    load_drift_pct: float = 15.0
    current_unbalance_per_voltage: float = 10.0
    current_unbalance_margin_pct: float = 2.0

    RANGES = {
        "insulation_fall_pct": (5.0, 95.0), "polarization_index_fall_pct": (5.0, 90.0),
        "winding_unbalance_rise_pct": (0.1, 20.0), "vibration_rise_share": (0.05, 2.0),
        "load_drift_pct": (1.0, 100.0), "current_unbalance_per_voltage": (1.0, 20.0),
        "current_unbalance_margin_pct": (0.1, 50.0),
    }



def _f(x):
    return np.asarray(x, dtype=float)


def _out(a):
    return a[()] if np.ndim(a) == 0 else a


def _at_least(x, mark):
    """``x >= mark`` with a relative tolerance of 1e-9: a change exactly at the mark, as read, is reported
    (4.0 -> 3.2 is a 20 % fall even though the binary floats give 19.999999999999996)."""
    x, mark = _f(x), _f(mark)
    return x >= mark - 1e-9 * np.maximum(np.abs(mark), 1.0)


def fall_pct(baseline, now):
    """Fall from the baseline [% of the baseline]: ``100 (b - x) / b``; NaN where ``b <= 0`` or unknown.

    Examples
    --------
    >>> float(fall_pct(200.0, 80.0))
    60.0
    """
    b, x = _f(baseline), _f(now)
    with np.errstate(divide="ignore", invalid="ignore"):
        return _out(np.where(b > 0.0, 100.0 * (b - x) / b, np.nan))


def insulation_falling(ir_40c_baseline_mohm, ir_40c_now_mohm, th: TrendThresholds = TrendThresholds()):
    """Insulation resistance at 40 deg C fallen markedly since the baseline [1]_.

    Parameters
    ----------
    ir_40c_baseline_mohm, ir_40c_now_mohm : numeric
        Insulation resistance corrected to 40 deg C [MOhm].
    """
    return _out(_at_least(fall_pct(ir_40c_baseline_mohm, ir_40c_now_mohm), th.insulation_fall_pct))


def polarization_index_falling(pi_baseline, pi_now, th: TrendThresholds = TrendThresholds()):
    """Polarization index fallen since the baseline [-] by at least ``polarization_index_fall_pct``."""
    return _out(_at_least(fall_pct(pi_baseline, pi_now), th.polarization_index_fall_pct))


def winding_unbalance_rising(unbalance_baseline_pct, unbalance_now_pct, th: TrendThresholds = TrendThresholds()):
    """Winding resistance unbalance risen [percentage points] by at least ``winding_unbalance_rise_pct``."""
    return _out(_at_least(_f(unbalance_now_pct) - _f(unbalance_baseline_pct), th.winding_unbalance_rise_pct))


def vibration_rising(velocity_baseline_mm_s, velocity_now_mm_s, zone_bc_mm_s, th: TrendThresholds = TrendThresholds()):
    """Vibration risen by a quarter (``vibration_rise_share``) of the zone B/C boundary [2]_.

    Parameters
    ----------
    velocity_baseline_mm_s, velocity_now_mm_s : numeric
        Broadband RMS velocity [mm/s].
    zone_bc_mm_s : numeric
        Zone B/C boundary for the machine [mm/s]
        (:data:`slipwise.physics.vibration.ZONE_BOUNDARIES_MM_S`).

    Examples
    --------
    >>> bool(vibration_rising(1.0, 1.8, 2.8))    # +0.8 >= 0.25 x 2.8 = 0.7
    True
    """
    rise = _f(velocity_now_mm_s) - _f(velocity_baseline_mm_s)
    return _out(_at_least(rise, th.vibration_rise_share * _f(zone_bc_mm_s)))


def load_drifting(load_baseline_pct, load_now_pct, band_baseline_pct, band_now_pct,
                  th: TrendThresholds = TrendThresholds()):
    """Load moved from the baseline by more than ``load_drift_pct`` and more than the bands' widths.

    Parameters
    ----------
    load_baseline_pct, load_now_pct : numeric
        Load [% of rated output].
    band_baseline_pct, band_now_pct : numeric
        Half-widths of the load bands [percentage points]; NaN is taken as 0.
    """
    change = np.abs(_f(load_now_pct) - _f(load_baseline_pct))
    bands = np.nan_to_num(_f(band_baseline_pct)) + np.nan_to_num(_f(band_now_pct))
    return _out(_at_least(change, th.load_drift_pct) & (change > bands))


def unexplained_current_unbalance_pct(iu_baseline_pct, iu_now_pct, vu_baseline_pct, vu_now_pct,
                                      th: TrendThresholds = TrendThresholds()):
    """Rise of the current unbalance beyond what the rise of the voltage unbalance explains [points].

    Notes
    -----
    ``(IU_now - IU_base) - k max(0, VU_now - VU_base)`` with ``k`` =
    ``current_unbalance_per_voltage`` (NEMA MG 1 rule of thumb [3]_).

    Examples
    --------
    >>> float(unexplained_current_unbalance_pct(2.0, 8.0, 0.5, 0.7))   # 6 - 10 x 0.2
    4.0
    """
    dv = np.maximum(_f(vu_now_pct) - _f(vu_baseline_pct), 0.0)
    return _out(_f(iu_now_pct) - _f(iu_baseline_pct) - th.current_unbalance_per_voltage * dv)


def current_unbalance_rising(iu_baseline_pct, iu_now_pct, vu_baseline_pct, vu_now_pct,
                             th: TrendThresholds = TrendThresholds()):
    """Current unbalance risen faster than the voltage unbalance explains (by ``current_unbalance_margin_pct``)."""
    return _out(_at_least(unexplained_current_unbalance_pct(iu_baseline_pct, iu_now_pct, vu_baseline_pct, vu_now_pct,
                                                            th), th.current_unbalance_margin_pct))
