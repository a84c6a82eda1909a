"""The torque-speed picture of one reading: the motor's curves and the load's law."""

from __future__ import annotations

import math
from typing import Any, Mapping

import numpy as np

from .. import contract as C
from ..physics import circuit as ckt
from ..physics import supply, torque_speed, typical
from ..physics.flags import Thresholds
from ..physics.units import KILOWATT_W
from .inputs import InputError, Parsed, column, float_or_nan, records_to_columns
from .nameplate import nameplates
from .records import interpret_one


def _single_plate(record: Mapping[str, Any]) -> Parsed:
    """The parsed and fitted nameplate of one record; :class:`InputError` when it is invalid."""
    cols = records_to_columns([record])
    plates, errors = nameplates({k: column(cols, k, 1) for k in C.NAMEPLATE_FIELDS if k in cols}, 1)
    if not errors.ok[0]:
        raise InputError(errors.field[0], errors.message[0])
    return plates


def torque_speed_curve(record: Mapping[str, Any], thresholds: Thresholds | None = None, points: int = 200) -> dict:
    """Arrays for the torque-speed picture of one reading.

    Returns
    -------
    dict
        ``speed_rpm``; ``torque_measured_v_nm`` and ``torque_rated_v_nm`` (the
        motor's shaft torque at the measured and at rated voltage, at the
        measured frequency); ``load_torque_nm`` (the driven load's law through
        the operating point); floats ``operating_speed_rpm``,
        ``operating_torque_nm`` (None without an operating point),
        ``breakdown_speed_rpm``, ``breakdown_torque_nm`` (at measured voltage),
        ``rated_torque_nm``, ``sync_speed_rpm``, ``measured_voltage_v``,
        ``rated_voltage_v``; and ``driven_load``.
    """
    result = interpret_one(record, thresholds)
    plates = _single_plate(record)
    circuit = plates["_circuit"]
    f = float(record.get("frequency_hz"))
    f_r = float(plates["rated_frequency_hz"][0])
    v_r = float(plates["rated_voltage_v"][0])
    volts = [float_or_nan(record.get(k)) for k in C.VOLTAGE_FIELDS]
    volts = [x for x in volts if not math.isnan(x)]
    v = sum(volts) / len(volts) if volts else float(supply.drive_voltage_v(v_r, f, f_r))
    ns = float(result["sync_speed_rpm"])
    slip = np.concatenate([np.geomspace(1.0, 1e-4, points - 1), [0.0]])
    n = ns * (1.0 - slip)
    n_r = float(plates["rated_speed_rpm"][0])
    fw = float(circuit.friction_windage_w[0])
    fw_torque = torque_speed.torque_nm(fw * (n / n_r) ** 2, n)
    many = circuit.take(np.zeros(slip.size, dtype=int))

    def shaft(volt):
        return np.maximum(ckt.solve(many, volt, f, slip).torque_em_nm - fw_torque, 0.0)

    t_rated = float(torque_speed.torque_nm(float(plates["rated_kw"][0]) * KILOWATT_W, n_r))
    _, s_max = ckt.breakdown(circuit, v, f)
    law = str(plates["driven_load"][0])
    op_torque = None if result["torque_pct"] is None else result["torque_pct"] / 100.0 * t_rated
    op_speed = float(record.get("speed_rpm"))
    if op_torque is not None:
        need = typical.BREAKAWAY_TORQUE_PCT[law] / 100.0 * max(op_torque, 0.1 * t_rated)
        load_t = torque_speed.load_torque(n, law, op_speed, op_torque, ns, breakaway_torque=need)
    else:
        load_t = np.full(n.shape, np.nan)
    return {
        "speed_rpm": n, "torque_measured_v_nm": shaft(v), "torque_rated_v_nm": shaft(v_r), "load_torque_nm": load_t,
        "operating_speed_rpm": op_speed if op_torque is not None else None, "operating_torque_nm": op_torque,
        "breakdown_speed_rpm": ns * (1.0 - float(s_max[0])),
        "breakdown_torque_nm": (result["breakdown_torque_now_pct"] or 0.0) / 100.0 * t_rated,
        "rated_torque_nm": t_rated, "sync_speed_rpm": ns, "driven_load": law,
        "measured_voltage_v": v, "rated_voltage_v": v_r,
    }


