"""Typical motor data for nameplates that leave a value out.

Each table is typical catalogue practice, not a standard's limit: where a
nameplate lacks a value, the engine uses these and widens its bands.
"""

from __future__ import annotations

import numpy as np

#: Full-load power factor of 4-pole cage motors by rated output, typical
#: catalogue values (common practice, from memory).
_PF_KW = np.array([0.12, 0.37, 0.75, 1.5, 4.0, 7.5, 15.0, 37.0, 90.0, 250.0, 1000.0])
_PF_4POLE = np.array([0.62, 0.70, 0.74, 0.79, 0.82, 0.83, 0.84, 0.86, 0.87, 0.88, 0.88])
#: Shift of full-load power factor with pole count relative to 4 poles
#: (more poles, more magnetising current; common practice).
_PF_POLE_SHIFT = {2: 0.03, 4: 0.0, 6: -0.05, 8: -0.09}


def typical_power_factor(rated_power_kw, poles):
    """Typical full-load power factor of a cage induction motor.

    Parameters
    ----------
    rated_power_kw : numeric
        Rated output [kW].
    poles : numeric
        Poles [-]; above 8 the 8-pole shift is extended by -0.02 per pole pair.

    Returns
    -------
    numeric
        Power factor [-], within [0.45, 0.92].
    """
    p_kw = np.asarray(rated_power_kw, dtype=float)
    poles = np.asarray(poles, dtype=float)
    base = np.interp(np.log(np.clip(p_kw, _PF_KW[0], _PF_KW[-1])), np.log(_PF_KW), _PF_4POLE)
    shift = np.select([poles <= 2, poles <= 4, poles <= 6, poles <= 8],
                      [_PF_POLE_SHIFT[2], _PF_POLE_SHIFT[4], _PF_POLE_SHIFT[6], _PF_POLE_SHIFT[8]],
                      _PF_POLE_SHIFT[8] - 0.01 * (poles - 8))
    return np.clip(base + shift, 0.45, 0.92)


#: Share of the rated-point losses that does not depend on load (core loss
#: plus friction and windage): central value and the band used for the
#: efficiency and input-power estimates (common practice for cage motors of
#: 1-200 kW: core 15-25 %, friction and windage 5-15 % of total losses).
FIXED_LOSS_SHARE = 0.30
FIXED_LOSS_SHARE_LOW = 0.20
FIXED_LOSS_SHARE_HIGH = 0.45


def friction_windage_share_of_fixed(poles):
    """Share of the fixed losses due to friction and windage [-].

    Two-pole machines have larger fans and more windage (common practice).
    """
    poles = np.asarray(poles, dtype=float)
    return np.where(poles <= 2, 0.55, 0.35)


#: Stator/rotor leakage reactance split X1 / (X1 + X2) by design class,
#: IEEE Std 112 (Table of empirical distribution of leakage reactances; from
#: memory): design A and D 0.5, B 0.4, C 0.3; IEC N taken as B, H as C.
LEAKAGE_STATOR_SHARE = {"A": 0.5, "B": 0.4, "C": 0.3, "D": 0.5, "N": 0.4, "H": 0.3}

#: Typical breakdown torque by design [% of rated torque]: catalogue practice
#: for 4-pole machines (NEMA MG 1 gives minimums of 200-275 % for design B;
#: IEC 60034-12 minimums for N are 160-200 %); from memory.
BREAKDOWN_TORQUE_PCT = {"A": 260.0, "B": 240.0, "C": 210.0, "D": 280.0, "N": 270.0, "H": 230.0}

#: Typical locked-rotor torque by design [% of rated torque] (catalogue
#: practice, from memory; NEMA MG 1 design D minimum is 275 %).
LOCKED_ROTOR_TORQUE_PCT = {"A": 200.0, "B": 200.0, "C": 250.0, "D": 275.0, "N": 220.0, "H": 260.0}

#: Breakaway torque a driven machine needs to start, as % of its running
#: torque (common practice: fans and centrifugal pumps 10-20 %, conveyors and
#: positive-displacement machines about their running torque, loaded
#: conveyors, crushers and mixers 150-200 %).
BREAKAWAY_TORQUE_PCT = {"variable_torque": 15.0, "constant_torque": 100.0,
                        "constant_power": 100.0, "high_breakaway": 175.0}


def lookup(table: dict, codes) -> np.ndarray:
    """Vectorised dictionary lookup of float values by code strings."""
    codes = np.asarray(codes)
    out = np.full(codes.shape, np.nan)
    for key, value in table.items():
        out[codes == key] = value
    return out
