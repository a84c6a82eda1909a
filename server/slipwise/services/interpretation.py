"""The engine, as the services call it: its InputError becomes the store's ValidationError."""

from __future__ import annotations

import threading
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


_SCALARS = (str, int, float, bool, type(None))


class _Together:
    """Readings that arrive at the same time in one process, interpreted by one engine call.

    The engine's cost for one reading is almost all fixed (a few hundred numpy calls on arrays of one
    element); rows are independent (each row's result is the same whatever rows it is interpreted with).
    The first thread to arrive interprets what is waiting; the others wait for their row, and the next
    one waiting takes over when it is done. No thread waits for a batch to fill: a reading alone is
    interpreted at once, as before.
    """

    def __init__(self) -> None:
        self._lock = threading.Lock()
        self._waiting: list[_Pending] = []
        self._busy = False

    def interpret(self, record: Mapping[str, Any], thresholds: Any) -> dict:
        mine = _Pending(record, thresholds)
        with self._lock:
            self._waiting.append(mine)
            lead = not self._busy
            self._busy = True
        if not lead:
            mine.done.wait()
            if not mine.lead:
                return mine.answer()
        # this thread interprets everything waiting now (its own row among them, unless an earlier
        # batch answered it already), then hands over to a thread still waiting
        try:
            while not mine.answered:
                with self._lock:
                    batch, self._waiting = self._waiting, []
                _run(batch)
        finally:
            with self._lock:
                if self._waiting:
                    nxt = self._waiting[0]
                    nxt.lead = True
                    nxt.done.set()
                else:
                    self._busy = False
        return mine.answer()


class _Pending:
    __slots__ = ("record", "thresholds", "result", "error", "answered", "lead", "done")

    def __init__(self, record, thresholds):
        self.record, self.thresholds = record, thresholds
        self.result = self.error = None
        self.answered = self.lead = False
        self.done = threading.Event()

    def answer(self) -> dict:
        if self.error is not None:
            raise self.error
        return self.result


def _run(batch: list[_Pending]) -> None:
    """Interpret ``batch``: rows of the same thresholds and fields in one engine call; answer each."""
    from slipwise.engine import records as engine_records
    from slipwise.engine.inputs import records_to_columns
    from slipwise.engine.pipeline import interpret_columns
    groups: dict[tuple, list[_Pending]] = {}
    for p in batch:
        plain = all(isinstance(v, _SCALARS) for v in p.record.values())
        key = (id(p.thresholds), tuple(p.record)) if plain else (id(p),)
        groups.setdefault(key, []).append(p)
    try:
        for rows in groups.values():
            try:
                if len(rows) > 1:
                    out = interpret_columns(records_to_columns([p.record for p in rows]), rows[0].thresholds)
                    for i, p in enumerate(rows):
                        if out["error"][i]:
                            p.error = ValidationError(out["error"][i], out["error_field"][i])
                        else:
                            p.result = engine_records.row_record(out, i)
                    continue
            except Exception:  # noqa: BLE001 - not expected: then each row alone, with its own error
                pass
            for p in rows:
                if p.result is None and p.error is None:
                    try:
                        p.result = interpret(p.record, p.thresholds)
                    except Exception as e:  # noqa: BLE001 - raised in the thread that asked
                        p.error = e
    finally:
        for p in batch:
            if p.result is None and p.error is None:
                p.error = RuntimeError("the reading was not interpreted")
            p.answered = True
            if not p.lead:
                p.done.set()


_together = _Together()


def interpret_together(record: Mapping[str, Any], thresholds: Any = None) -> dict:
    """:func:`interpret`, sharing one engine call with the readings other threads interpret at the same time.

    Same result, same errors (ValidationError naming the field) as :func:`interpret` for the record alone.
    """
    return _together.interpret(record, thresholds)


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
