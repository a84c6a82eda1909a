"""The engine, as the services call it: its InputError becomes the store's ValidationError."""

from __future__ import annotations

from typing import Any, Mapping

from slipwise.contract import NAMEPLATE_FIELDS
from slipwise.store.errors import ValidationError


def interpret(record: Mapping[str, Any], thresholds: Any = None) -> dict:
    """The engine's result for one flat record (see ``records.engine_record``)."""
    from slipwise.engine import InputError, interpret_one
    try:
        return interpret_one(record, thresholds)
    except InputError as e:
        raise ValidationError(e.message, e.field) from None


def torque_speed(record: Mapping[str, Any], thresholds: Any = None) -> dict:
    """The torque-speed curves of one flat record (``slipwise.engine.torque_speed_curve``)."""
    from slipwise.engine import InputError, torque_speed_curve
    try:
        return torque_speed_curve(record, thresholds)
    except InputError as e:
        raise ValidationError(e.message, e.field) from None


def with_stored_result(curve: Mapping[str, Any], result: Mapping[str, Any], speed_rpm: float) -> dict:
    """The torque-speed curve with its points taken from a reading's stored result.

    A stored result is evidence: the operating point, the breakdown point and
    the synchronous speed drawn are the ones the result recorded, not a
    re-interpretation by the engine running now. The motor's curves (which
    depend only on the nameplate revision and the supply) stay as the engine
    draws them.

    Parameters
    ----------
    curve : mapping
        From ``slipwise.engine.torque_speed_curve`` for the stored record:
        ``speed_rpm`` [rpm], ``rated_torque_nm`` [N·m], ``load_torque_nm`` [N·m],
        ``operating_speed_rpm`` [rpm], ``operating_torque_nm`` [N·m], ...
    result : mapping
        The stored result: ``torque_pct`` and ``breakdown_torque_now_pct``
        [% of rated torque], ``sync_speed_rpm`` [rpm].
    speed_rpm : float
        The measured shaft speed stored with the reading [rpm].

    Returns
    -------
    dict
        ``curve`` with ``operating_torque_nm``, ``breakdown_torque_nm`` [N·m],
        ``sync_speed_rpm`` [rpm] from the stored result and ``load_torque_nm``
        [N·m] through the stored operating point.
    """
    import numpy as np

    from slipwise.physics.torque_speed import load_torque

    out = dict(curve)
    rated = curve["rated_torque_nm"]
    torque_pct = result.get("torque_pct")
    breakdown_pct = result.get("breakdown_torque_now_pct")
    if result.get("sync_speed_rpm") is not None:
        out["sync_speed_rpm"] = float(result["sync_speed_rpm"])
    out["breakdown_torque_nm"] = None if breakdown_pct is None else breakdown_pct / 100.0 * rated
    speed = np.asarray(curve["speed_rpm"], dtype=float)
    operating_speed = float(speed_rpm)
    if torque_pct is None:
        out["operating_torque_nm"] = out["operating_speed_rpm"] = None
        out["load_torque_nm"] = np.full(speed.shape, np.nan)
        return out
    stored = torque_pct / 100.0 * rated
    out["operating_torque_nm"], out["operating_speed_rpm"] = stored, operating_speed
    now = curve.get("operating_torque_nm")
    if now and curve.get("operating_speed_rpm") == operating_speed:
        # every load law passes through its operating point in proportion to its torque there
        # (slipwise.physics.torque_speed.load_torque): rescale to the stored point
        out["load_torque_nm"] = np.asarray(curve["load_torque_nm"], dtype=float) * (stored / now)
    else:
        out["load_torque_nm"] = load_torque(speed, curve["driven_load"], operating_speed, stored, out["sync_speed_rpm"])
    return out


def check_nameplate(tag: str, fields: Mapping[str, Any], thresholds: Any = None) -> None:
    """Refuse a nameplate the engine could not use, by interpreting a reading at the rated point.

    Only errors on nameplate fields count: the synthetic reading is there to
    exercise the nameplate's own cross-checks (speed below synchronous, ...).
    """
    volts, amps = fields.get("rated_voltage_v"), fields.get("rated_current_a")
    record = {"tag": tag, **{k: v for k, v in fields.items() if k in NAMEPLATE_FIELDS},
              "frequency_hz": fields.get("rated_frequency_hz"), "speed_rpm": fields.get("rated_speed_rpm"),
              "current_l1_a": amps, "current_l2_a": amps, "current_l3_a": amps,
              "voltage_l12_v": volts, "voltage_l23_v": volts, "voltage_l31_v": volts}
    try:
        interpret(record, thresholds)
    except ValidationError as e:
        if e.field in NAMEPLATE_FIELDS:
            raise
