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
