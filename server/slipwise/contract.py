"""The public data contract: input fields, output columns, allowed ranges.

CSV column names, JSON keys and flag codes defined here are public: engineers'
spreadsheets and scripts depend on them. Extend, never rename.

Units are in the names (``_v``, ``_a``, ``_hz``, ``_rpm``, ``_kw``, ``_pct``).
"""

from __future__ import annotations

from dataclasses import dataclass

ENGINE_VERSION = "1.0.0"


@dataclass(frozen=True)
class NumberField:
    """A numeric input with its allowed (inclusive) range and unit."""

    name: str
    low: float
    high: float
    unit: str
    required: bool = False
    default: float | None = None
    integer: bool = False
    help: str = ""

    def range_text(self) -> str:
        unit = f" {self.unit}" if self.unit else ""
        return f"{_fmt(self.low)} to {_fmt(self.high)}{unit}"


@dataclass(frozen=True)
class ChoiceField:
    """A text input restricted to a set of codes."""

    name: str
    choices: tuple[str, ...]
    required: bool = False
    default: str | None = None
    help: str = ""

    def range_text(self) -> str:
        return "one of " + ", ".join(self.choices)


def _fmt(x: float) -> str:
    return f"{x:g}"


DESIGNS = ("A", "B", "C", "D", "N", "H")
SUPPLIES = ("mains", "drive")
DRIVEN_LOADS = ("variable_torque", "constant_torque", "constant_power", "high_breakaway")

TAG_MAX_CHARS = 80

# --- nameplate -------------------------------------------------------------
NAMEPLATE_NUMBERS: tuple[NumberField, ...] = (
    NumberField("rated_power_kw", 0.06, 2000.0, "kW", help="rated shaft output; give this or rated_power_hp"),
    NumberField("rated_power_hp", 0.08, 2700.0, "hp", help="rated shaft output; give this or rated_power_kw"),
    NumberField("rated_voltage_v", 100.0, 15000.0, "V", required=True, help="rated line-to-line voltage"),
    NumberField("rated_current_a", 0.05, 5000.0, "A", required=True, help="rated line current at rated voltage"),
    NumberField("rated_frequency_hz", 16.0, 120.0, "Hz", required=True),
    NumberField("rated_speed_rpm", 100.0, 7200.0, "rpm", required=True, help="full-load speed"),
    NumberField("poles", 2, 24, "", integer=True, help="inferred from rated speed and frequency when blank"),
    NumberField("rated_power_factor", 0.30, 0.98, "", help="typical value for size and poles when blank"),
    NumberField("rated_efficiency_pct", 40.0, 99.0, "%", help="IE2 nominal value for size and poles when blank"),
    NumberField("service_factor", 1.0, 1.5, "", default=1.0),
    NumberField("breakdown_torque_pct", 120.0, 450.0, "%",
                help="catalogue breakdown torque as % of rated torque; typical for the design when blank"),
    NumberField("locked_rotor_torque_pct", 50.0, 400.0, "%",
                help="catalogue locked-rotor torque as % of rated torque; typical for the design when blank"),
)
NAMEPLATE_CHOICES: tuple[ChoiceField, ...] = (
    ChoiceField("design", DESIGNS, help="NEMA A-D or IEC N/H; B at 60 Hz and N at 50 Hz when blank"),
    ChoiceField("supply", SUPPLIES, default="mains"),
    ChoiceField("driven_load", DRIVEN_LOADS, default="constant_torque",
                help="torque law of the driven machine; constant_torque (the stricter case) when blank"),
)
NAMEPLATE_FIELDS: tuple[str, ...] = ("tag",) + tuple(f.name for f in NAMEPLATE_NUMBERS) + tuple(
    f.name for f in NAMEPLATE_CHOICES)

# --- reading ---------------------------------------------------------------
READING_NUMBERS: tuple[NumberField, ...] = (
    NumberField("frequency_hz", 1.0, 120.0, "Hz", required=True, help="supply (or drive output) frequency"),
    NumberField("speed_rpm", 1.0, 7500.0, "rpm", required=True, help="shaft speed by tachometer"),
    NumberField("current_l1_a", 0.0, 10000.0, "A"),
    NumberField("current_l2_a", 0.0, 10000.0, "A"),
    NumberField("current_l3_a", 0.0, 10000.0, "A"),
    NumberField("voltage_l12_v", 10.0, 16000.0, "V"),
    NumberField("voltage_l23_v", 10.0, 16000.0, "V"),
    NumberField("voltage_l31_v", 10.0, 16000.0, "V"),
    NumberField("power_kw", 0.0, 3000.0, "kW", help="measured three-phase input power"),
    NumberField("power_factor", 0.05, 1.0, "", help="measured displacement power factor"),
    NumberField("tachometer_resolution_rpm", 0.01, 50.0, "rpm", default=1.0,
                help="reading resolution plus accuracy of the tachometer"),
    NumberField("current_accuracy_pct", 0.1, 20.0, "%", default=2.0, help="clamp meter accuracy, % of reading"),
    NumberField("voltage_accuracy_pct", 0.1, 10.0, "%", default=1.0, help="voltmeter accuracy, % of reading"),
    NumberField("power_accuracy_pct", 0.1, 20.0, "%", default=2.0, help="power meter accuracy, % of reading"),
    NumberField("minutes_running", 0.0, 1.0e6, "min",
                help="time the motor has run before the reading; unknown means it may be cold"),
)
CURRENT_FIELDS = ("current_l1_a", "current_l2_a", "current_l3_a")
VOLTAGE_FIELDS = ("voltage_l12_v", "voltage_l23_v", "voltage_l31_v")
READING_FIELDS: tuple[str, ...] = tuple(f.name for f in READING_NUMBERS) + ("taken_at",)

INPUT_FIELDS: tuple[str, ...] = NAMEPLATE_FIELDS + READING_FIELDS

# --- output ----------------------------------------------------------------
# The contract's columns first, in this order; extensions after.
RESULT_COLUMNS: tuple[str, ...] = (
    "poles", "sync_speed_rpm", "slip_pct",
    "load_pct", "load_low_pct", "load_high_pct",
    "load_slip_pct", "load_current_pct", "load_power_pct",
    "output_kw", "torque_pct",
    "efficiency_pct", "efficiency_low_pct", "efficiency_high_pct", "efficiency_class",
    "voltage_unbalance_pct", "voltage_unbalance_factor_pct", "current_unbalance_pct", "derating_factor",
    "voltage_deviation_pct", "frequency_deviation_pct", "supply_zone",
    "breakdown_margin", "flags", "findings", "error",
    # extensions
    "slip_rpm", "torque_low_pct", "torque_high_pct",
    "predicted_current_a", "predicted_power_factor",
    "breakdown_torque_now_pct", "starting_margin", "operating_side",
    "error_field", "engine_version",
    # extensions: verdicts on the band (engine/verdicts.py)
    "verdict", "breakdown_margin_low", "limit_flags",
    "load_state", "breakdown_state", "supply_state", "voltage_unbalance_state", "current_unbalance_state",
    "starting_state",
)
#: The verdict words of the ``verdict`` column and the state words of the ``*_state`` columns.
VERDICT_WORDS: tuple[str, ...] = ("sound", "watch", "act", "retake")
STATE_WORDS: tuple[str, ...] = ("clear", "at_limit", "beyond")
TEXT_RESULT_COLUMNS = frozenset({"efficiency_class", "supply_zone", "flags", "findings", "error",
                                 "operating_side", "error_field", "engine_version",
                                 "verdict", "limit_flags", "load_state", "breakdown_state", "supply_state",
                                 "voltage_unbalance_state", "current_unbalance_state", "starting_state"})
INTEGER_RESULT_COLUMNS = frozenset({"poles"})

FLAG_CODES: tuple[str, ...] = (
    "underloaded", "overloaded", "over_service_factor", "near_breakdown",
    "voltage_unbalance", "current_unbalance", "supply_out_of_tolerance",
    "speed_above_synchronous", "readings_inconsistent",
    # extensions
    "starting_torque_low",
)

NUMBER_FIELDS = {f.name: f for f in NAMEPLATE_NUMBERS + READING_NUMBERS}
CHOICE_FIELDS = {f.name: f for f in NAMEPLATE_CHOICES}
