"""The bridge to the interpretation engine: its input errors become API errors."""

from __future__ import annotations

from typing import Any, Mapping

from slipwise.contract import NAMEPLATE_FIELDS
from slipwise.store.errors import ValidationError

from .state import state


def interpret(record: Mapping[str, Any]) -> dict:
    from slipwise.engine import InputError, interpret_one
    try:
        return interpret_one(record, state().thresholds)
    except InputError as e:
        raise ValidationError(e.message, e.field) from None


def torque_speed(record: Mapping[str, Any]) -> dict:
    from slipwise.engine import InputError, torque_speed_curve
    try:
        return torque_speed_curve(record, state().thresholds)
    except InputError as e:
        raise ValidationError(e.message, e.field) from None


def check_nameplate(tag: str, fields: Mapping[str, Any]) -> None:
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
        interpret(record)
    except ValidationError as e:
        if e.field in NAMEPLATE_FIELDS:
            raise
