"""The declaration: every input field and result column, once (name, unit, range, text rules, help).

CSV column names, JSON keys and flag codes defined here are public: engineers'
spreadsheets and scripts depend on them. Extend, never rename.

Units are in the names (``_v``, ``_a``, ``_hz``, ``_rpm``, ``_kw``, ``_pct``).
"""

from __future__ import annotations

from dataclasses import dataclass

# 1.1.0: verdicts on the band, saturation, breakdown band, (V/f)^2 slip law on mains, IE tables at 60 Hz.
# 1.1.1: load band: a kW reading good to half its last stated digit; a method clipped at zero in the fusion.
# 1.2.0: the commissioning sheet's de-energised tests, vibration and rotation (optional reading fields).
# 1.3.0: energy and cost of the operating point, right-sizing (the columns after the sheet's).
# A stored result keeps the version that made it; a newer engine never rewrites it.
ENGINE_VERSION = "1.3.0"


@dataclass(frozen=True)
class NumberField:
    """A numeric input with its allowed (inclusive) range and unit.

    ``label``, ``hint`` and ``shown_unit`` are the page's words for it (the API's ``help`` says
    the same for a script writer); blank ``shown_unit`` means ``unit``.
    """

    name: str
    low: float
    high: float
    unit: str
    required: bool = False
    default: float | None = None
    integer: bool = False
    help: str = ""
    label: str = ""
    hint: str = ""
    shown_unit: str = ""
    #: fields that must be given with this one (the engine refuses the reading naming the first missing)
    needs: tuple[str, ...] = ()

    kind = "number"

    def range_text(self) -> str:
        unit = f" {self.unit}" if self.unit else ""
        return f"{_fmt(self.low)} to {_fmt(self.high)}{unit}"


@dataclass(frozen=True)
class ChoiceField:
    """A text input restricted to a set of codes (matched without regard to case, stored as written here)."""

    name: str
    choices: tuple[str, ...]
    required: bool = False
    default: str | None = None
    help: str = ""
    label: str = ""
    hint: str = ""

    kind = "choice"

    def range_text(self) -> str:
        return "one of " + ", ".join(self.choices)


@dataclass(frozen=True)
class TextField:
    """Free text: at most ``max_chars`` characters (code points) after trimming.

    ``one_line`` refuses tab and line breaks too; ``refused_categories`` are Unicode general
    categories refused anywhere in the value (see :data:`TAG_REFUSED_CATEGORIES`).
    """

    name: str
    max_chars: int
    required: bool = False
    one_line: bool = False
    refused_categories: frozenset[str] = frozenset({"Cc", "Cs"})
    help: str = ""
    label: str = ""
    #: each non-blank line must match this (Python re and ECMA-262 alike), after trimming spaces and tabs
    line_pattern: str = ""
    hint: str = ""

    kind = "text"

    def range_text(self) -> str:
        lines = "one line of " if self.one_line else "text of "
        low = 1 if self.required else 0
        return f"{lines}{low} to {self.max_chars} characters"


def _fmt(x: float) -> str:
    return f"{x:g}"


DESIGNS = ("A", "B", "C", "D", "N", "H")
SUPPLIES = ("mains", "drive")
DRIVEN_LOADS = ("variable_torque", "constant_torque", "constant_power", "high_breakaway")

TAG_MAX_CHARS = 80

# Unicode categories a tag may not hold: controls (C0, DEL, C1), format characters (zero-width space,
# byte order mark, the bidirectional overrides that reorder what is shown - "Trojan Source",
# CVE-2021-42574), line and paragraph separators, private use, lone surrogates. Each would let two
# tags that look the same on a label, the page or the CSV be different records.
TAG_REFUSED_CATEGORIES = frozenset({"Cc", "Cf", "Zl", "Zp", "Co", "Cs"})

_KW_HINT = "Shaft output from the nameplate. Give kW or hp, not both."
# --- nameplate -------------------------------------------------------------
NAMEPLATE_NUMBERS: tuple[NumberField, ...] = (
    NumberField("rated_power_kw", 0.06, 2000.0, "kW", help="rated shaft output; give this or rated_power_hp",
                label="Rated output", hint=_KW_HINT),
    NumberField("rated_power_hp", 0.08, 2700.0, "hp", help="rated shaft output; give this or rated_power_kw",
                label="Rated output", hint=_KW_HINT),
    NumberField("rated_voltage_v", 100.0, 15000.0, "V", required=True, help="rated line-to-line voltage",
                label="Rated voltage", hint="Line-to-line, for the connection in use (star or delta)."),
    NumberField("rated_current_a", 0.05, 5000.0, "A", required=True, help="rated line current at rated voltage",
                label="Rated current", hint="Line current at the rated voltage above."),
    NumberField("rated_frequency_hz", 16.0, 120.0, "Hz", required=True, label="Rated frequency"),
    NumberField("rated_speed_rpm", 100.0, 7200.0, "rpm", required=True, help="full-load speed",
                label="Rated speed", hint="Full-load speed, not synchronous speed."),
    NumberField("poles", 2, 24, "", integer=True, help="inferred from rated speed and frequency when blank",
                label="Poles", hint="Blank: inferred from rated speed and frequency.", shown_unit="poles"),
    NumberField("rated_power_factor", 0.30, 0.98, "", help="typical value for size and poles when blank",
                label="Rated power factor", hint="Blank: a typical value for the size and poles.",
                shown_unit="cos φ"),
    NumberField("rated_efficiency_pct", 40.0, 99.0, "%", help="IE2 nominal value for size and poles when blank",
                label="Rated efficiency", hint="Blank: the IE2 nominal value for the size and poles."),
    NumberField("service_factor", 1.0, 1.5, "", default=1.0, label="Service factor",
                hint="Blank: 1.0 (no margin above rated load).", shown_unit="SF"),
    NumberField("breakdown_torque_pct", 120.0, 450.0, "%",
                help="catalogue breakdown torque as % of rated torque; typical for the design when blank",
                label="Breakdown torque", hint="Catalogue value. Blank: typical for the design.",
                shown_unit="% of rated"),
    NumberField("locked_rotor_torque_pct", 50.0, 400.0, "%",
                help="catalogue locked-rotor torque as % of rated torque; typical for the design when blank",
                label="Locked-rotor torque", hint="Catalogue value. Blank: typical for the design.",
                shown_unit="% of rated"),
)
NAMEPLATE_CHOICES: tuple[ChoiceField, ...] = (
    ChoiceField("design", DESIGNS, help="NEMA A-D or IEC N/H; B at 60 Hz and N at 50 Hz when blank",
                label="Design", hint="NEMA A–D or IEC N/H. Blank: B on a 60 Hz nameplate, N on 50 Hz."),
    ChoiceField("supply", SUPPLIES, default="mains", label="Supply", hint="Blank: mains (direct on line)."),
    ChoiceField("driven_load", DRIVEN_LOADS, default="constant_torque",
                help="torque law of the driven machine; constant_torque (the stricter case) when blank",
                label="Driven machine",
                hint="Fans and pumps are variable torque. Blank: constant torque (the stricter case)."),
)
NAMEPLATE_FIELDS: tuple[str, ...] = ("tag",) + tuple(f.name for f in NAMEPLATE_NUMBERS) + tuple(
    f.name for f in NAMEPLATE_CHOICES)

# name; serial; calibration due date - each of name and serial at least one visible character
# (the visible character is spelled out, not \s: Python's and ECMA-262's \s differ)
_PART = r"[^;\x00-\x1f\x7f-\x9f]*[^;\x00-\x20\x7f-\x9f][^;\x00-\x1f\x7f-\x9f]*"
# a calendar date of this century exactly, leap days included, so the OpenAPI pattern admits no date the
# service then refuses (2000-11-31 was one, found by the schema fuzzing)
_DATE_20XX = (r"(20[0-9]{2}-(?:(?:0[13578]|1[02])-(?:0[1-9]|[12][0-9]|3[01])|(?:0[469]|11)-(?:0[1-9]|[12][0-9]|30)"
              r"|02-(?:0[1-9]|1[0-9]|2[0-8]))|20(?:0[048]|[2468][048]|[13579][26])-02-29)")
_INSTRUMENT_LINE = rf"^{_PART};{_PART};[ ]*{_DATE_20XX}$"
# --- text ------------------------------------------------------------------
_TEXT_REFUSED = frozenset({"Cc", "Cs"})   # tab and newline are let through where one_line is False
TEXT_FIELDS: dict[str, TextField] = {f.name: f for f in (
    TextField("tag", TAG_MAX_CHARS, required=True, one_line=True, refused_categories=TAG_REFUSED_CATEGORIES,
              help="the motor's tag as on its label: one line of visible characters", label="Tag"),
    TextField("site", 120, required=True, help="site or plant name", label="Site"),
    TextField("location", 200, help="where the motor is on the site", label="Location"),
    TextField("description", 2000, help="what the motor drives", label="Description"),
    TextField("comment", 2000, help="the reviewer's reason; required for retake and rejected", label="Comment"),
    TextField("username", 64, required=True, one_line=True, help="login name", label="User name"),
    TextField("notes", 2000, help="the technician's notes on this reading", label="Notes"),
    TextField("instruments", 1000, line_pattern=_INSTRUMENT_LINE,
              help="the instruments used, one per line: name; serial; calibration due date (YYYY-MM-DD)",
              label="Instruments used",
              hint="One per line: name; serial; calibration due date, e.g. Insulation tester; IT-2231; 2025-03-31"),
)}

# --- reading ---------------------------------------------------------------
READING_NUMBERS: tuple[NumberField, ...] = (
    NumberField("frequency_hz", 1.0, 120.0, "Hz", required=True, help="supply (or drive output) frequency",
                label="Frequency", hint="Supply, or drive output, frequency."),
    NumberField("speed_rpm", 1.0, 7500.0, "rpm", required=True, help="shaft speed by tachometer",
                label="Shaft speed", hint="Tachometer on the motor shaft itself."),
    NumberField("current_l1_a", 0.0, 10000.0, "A", label="Current L1"),
    NumberField("current_l2_a", 0.0, 10000.0, "A", label="Current L2"),
    NumberField("current_l3_a", 0.0, 10000.0, "A", label="Current L3"),
    NumberField("voltage_l12_v", 10.0, 16000.0, "V", label="Voltage L1–L2"),
    NumberField("voltage_l23_v", 10.0, 16000.0, "V", label="Voltage L2–L3"),
    NumberField("voltage_l31_v", 10.0, 16000.0, "V", label="Voltage L3–L1"),
    NumberField("power_kw", 0.0, 3000.0, "kW", help="measured three-phase input power", label="Input power",
                hint="Optional: three-phase input from a power analyser."),
    NumberField("power_factor", 0.05, 1.0, "", help="measured displacement power factor", label="Power factor",
                hint="Optional: measured displacement power factor.", shown_unit="cos φ"),
    NumberField("tachometer_resolution_rpm", 0.01, 50.0, "rpm", default=1.0,
                help="reading resolution plus accuracy of the tachometer", label="Tachometer resolution",
                hint="Resolution plus accuracy. Blank: 1 rpm."),
    NumberField("current_accuracy_pct", 0.1, 20.0, "%", default=2.0, help="clamp meter accuracy, % of reading",
                label="Clamp meter accuracy", hint="Blank: 2 %.", shown_unit="% of reading"),
    NumberField("voltage_accuracy_pct", 0.1, 10.0, "%", default=1.0, help="voltmeter accuracy, % of reading",
                label="Voltmeter accuracy", hint="Blank: 1 %.", shown_unit="% of reading"),
    NumberField("power_accuracy_pct", 0.1, 20.0, "%", default=2.0, help="power meter accuracy, % of reading",
                label="Power meter accuracy", hint="Blank: 2 %.", shown_unit="% of reading"),
    NumberField("minutes_running", 0.0, 1.0e6, "min",
                help="time the motor has run before the reading; unknown means it may be cold",
                label="Running before reading", hint="Blank: unknown, the rotor may be cold (widens the band)."),
)
# --- energy and running cost (issue 11): optional on a reading; blank takes the site's default
# (services.sites: site settings a supervisor sets), a value on the reading overrides it.
ENERGY_NUMBERS: tuple[NumberField, ...] = (
    NumberField("operating_hours_per_year", 0.0, 8784.0, "h",
                help="hours the motor runs a year (8784 in a leap year); the site's default when blank",
                label="Running hours a year", hint="Blank: the site's default."),
    NumberField("energy_price_per_kwh", 0.0, 100000.0, "per kWh",
                help="average energy price per kWh in the site's currency (currency-neutral); the site's default "
                     "when blank", label="Energy price", hint="Per kWh, any currency. Blank: the site's default."),
)
ENERGY_FIELDS: tuple[str, ...] = tuple(f.name for f in ENERGY_NUMBERS)
READING_NUMBERS = READING_NUMBERS + ENERGY_NUMBERS
# --- end of energy inputs

# --- site settings (issue 11): a supervisor sets a site's defaults; the energy ones are ENERGY_NUMBERS'
SITE_NUMBERS: tuple[NumberField, ...] = (
    NumberField("visit_interval_months", 1, 120, "months", integer=True, default=12,
                help="a motor whose last visit is older than this is overdue; 12 months when never set "
                     "(the common inspection interval, common practice)",
                label="Visit interval", hint="Blank: 12 months."),
)

CURRENT_FIELDS = ("current_l1_a", "current_l2_a", "current_l3_a")
VOLTAGE_FIELDS = ("voltage_l12_v", "voltage_l23_v", "voltage_l31_v")

# --- the commissioning sheet's tests (all optional; engine 1.2.0) -----------
WINDING_TYPES = ("random", "form")
INSULATION_CLASSES = ("A", "B", "F", "H")
WINDING_MATERIALS = ("copper", "aluminium")
STARTERS = ("direct", "star_delta", "soft", "drive")
FOUNDATIONS = ("rigid", "flexible")
YES_NO = ("yes", "no")
_IR_HINT = "Megohmmeter reading, winding to earth."
READING_TEST_NUMBERS: tuple[NumberField, ...] = (
    NumberField("insulation_resistance_1min_mohm", 0.0, 1.0e6, "MΩ",
                help="insulation resistance to earth after 1 minute of the DC test voltage",
                label="Insulation resistance, 1 min", hint=_IR_HINT + " After 1 minute.",
                needs=("winding_temperature_c",)),
    NumberField("insulation_resistance_10min_mohm", 0.0, 1.0e6, "MΩ",
                help="insulation resistance after 10 minutes (for the polarization index)",
                label="Insulation resistance, 10 min", hint="Optional: after 10 minutes, for the polarization index.",
                needs=("insulation_resistance_1min_mohm",)),
    NumberField("insulation_test_voltage_v", 50.0, 15000.0, "V", help="DC test voltage applied",
                label="Insulation test voltage", hint="DC voltage applied by the tester."),
    NumberField("winding_temperature_c", -40.0, 180.0, "°C",
                help="winding temperature during the insulation and resistance tests",
                label="Winding temperature", hint="During the tests; ambient for a motor that has stood cold."),
    NumberField("winding_resistance_l12_ohm", 1.0e-5, 1.0e5, "Ω", help="resistance between terminals 1 and 2",
                label="Winding resistance L1–L2", hint="Low-resistance ohmmeter (four-wire) at the motor terminals."),
    NumberField("winding_resistance_l23_ohm", 1.0e-5, 1.0e5, "Ω", help="resistance between terminals 2 and 3",
                label="Winding resistance L2–L3"),
    NumberField("winding_resistance_l31_ohm", 1.0e-5, 1.0e5, "Ω", help="resistance between terminals 3 and 1",
                label="Winding resistance L3–L1"),
    NumberField("overload_setting_a", 0.01, 10000.0, "A", help="current the overload relay is set to",
                label="Overload relay setting", hint="The relay's dial setting.", needs=("starter",)),
    NumberField("vibration_velocity_mm_s", 0.0, 100.0, "mm/s",
                help="largest broadband RMS velocity of the axes measured on the bearing housings",
                label="Vibration velocity", hint="Largest RMS velocity of the axes measured, running."),
)
READING_CHOICES: tuple[ChoiceField, ...] = (
    ChoiceField("winding_type", WINDING_TYPES, default="form",
                help="random-wound or form-wound stator winding; form (the stricter minimum at 1 kV and above, "
                     "the same 5 MΩ below) when blank",
                label="Winding type", hint="Random-wound (most low-voltage motors) or form-wound coils. Blank: form "
                                           "(stricter above 1 kV; the same minimum below)."),
    ChoiceField("insulation_class", INSULATION_CLASSES, default="F",
                help="thermal class of the insulation (nameplate); F (polarization index minimum 2.0) when blank",
                label="Insulation class", hint="Thermal class on the nameplate. Blank: F."),
    ChoiceField("winding_made_before_1970", YES_NO, default="no",
                help="winding made before about 1970: the IEEE 43 minimum is then kV + 1 MΩ",
                label="Winding made before 1970", hint="Blank: no."),
    ChoiceField("winding_material", WINDING_MATERIALS, default="copper", help="conductor of the stator winding",
                label="Winding conductor", hint="Blank: copper."),
    ChoiceField("starter", STARTERS, help="starter type; star_delta: the relay sits in the winding circuit",
                label="Starter", hint="Star-delta: the relay carries the winding current (FLA/√3)."),
    ChoiceField("foundation", FOUNDATIONS, default="rigid",
                help="machine support for the ISO 10816-3 zone boundaries; rigid (the lower boundaries) when blank",
                label="Foundation", hint="Rigid: the lowest natural frequency of machine and support is above "
                                         "the running speed (most floor-mounted motors). Blank: rigid."),
    ChoiceField("rotation_correct", YES_NO, help="the shaft turns the way the driven machine needs",
                label="Rotation correct", hint="Bumped or run: does the shaft turn the right way?"),
)
READING_TEXTS: tuple[str, ...] = ("instruments", "notes")
READING_FIELDS: tuple[str, ...] = (tuple(f.name for f in READING_NUMBERS) + ("taken_at",)
                                   + tuple(f.name for f in READING_TEST_NUMBERS)
                                   + tuple(f.name for f in READING_CHOICES) + READING_TEXTS)
#: The sheet's test fields (numbers, choices, text), in the order the page shows them.
TEST_FIELDS: tuple[str, ...] = (tuple(f.name for f in READING_TEST_NUMBERS) + tuple(f.name for f in READING_CHOICES)
                                + READING_TEXTS)
TAKEN_AT_HELP = ("ISO 8601 date and time of the reading, e.g. 2024-05-17T09:30:00+02:00 (a time without an offset "
                 "is the technician's local clock); the time of receipt when blank")

# --- review ----------------------------------------------------------------
REVIEW_DECISIONS = ("accepted", "retake", "rejected")
DECISIONS_NEEDING_COMMENT = ("retake", "rejected")

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
    # extensions since engine 1.1.0: verdicts on the band (engine/verdicts.py); absent from results
    # stored by engine 1.0.0 (see RESULT_COLUMNS_1_0)
    "verdict", "breakdown_margin_low", "limit_flags",
    "load_state", "breakdown_state", "supply_state", "voltage_unbalance_state", "current_unbalance_state",
    "starting_state",
    # extensions since engine 1.2.0: the commissioning sheet's tests (absent from earlier results)
    "insulation_resistance_40c_mohm", "insulation_minimum_mohm", "polarization_index",
    "winding_resistance_unbalance_pct", "overload_setting_pct", "vibration_zone",
    "polarization_index_minimum", "insulation_test_voltage_min_v", "insulation_test_voltage_max_v",
    "winding_resistance_25c_ohm", "overload_setting_max_pct", "overload_relay_current_a",
    "vibration_zone_bc_mm_s", "instruments_calibration_expired",
    "insulation_state", "polarization_index_state", "insulation_test_voltage_state", "winding_resistance_state",
    "overload_setting_state", "vibration_state", "rotation_state", "instruments_state",
    # extensions since engine 1.3.0 (issue 11): energy and cost of the operating point, right-sizing
    # (engine/energy.py); absent from results stored before
    "input_power_kw", "input_power_low_kw", "input_power_high_kw",
    "annual_energy_kwh", "annual_energy_cost",
    "right_size_rated_kw", "right_size_efficiency_pct", "right_size_savings_kwh",
    # end of the energy columns
)
#: The columns of a result stored by engine 1.0.0 (release 2): every later column may be absent from one.
RESULT_COLUMNS_1_0: tuple[str, ...] = RESULT_COLUMNS[:RESULT_COLUMNS.index("engine_version") + 1]

#: The verdict words of the ``verdict`` column and the state words of the ``*_state`` columns.
VERDICT_WORDS: tuple[str, ...] = ("sound", "watch", "act", "retake")
STATE_WORDS: tuple[str, ...] = ("clear", "at_limit", "beyond")
TEXT_RESULT_COLUMNS = frozenset({"efficiency_class", "supply_zone", "flags", "findings", "error",
                                 "operating_side", "error_field", "engine_version",
                                 "verdict", "limit_flags", "load_state", "breakdown_state", "supply_state",
                                 "voltage_unbalance_state", "current_unbalance_state", "starting_state",
                                 "vibration_zone", "instruments_calibration_expired",
                                 "insulation_state", "polarization_index_state", "insulation_test_voltage_state",
                                 "winding_resistance_state", "overload_setting_state", "vibration_state",
                                 "rotation_state", "instruments_state"})
INTEGER_RESULT_COLUMNS = frozenset({"poles"})

FLAG_CODES: tuple[str, ...] = (
    "underloaded", "overloaded", "over_service_factor", "near_breakdown",
    "voltage_unbalance", "current_unbalance", "supply_out_of_tolerance",
    "speed_above_synchronous", "readings_inconsistent",
    # extensions
    "starting_torque_low",
    # extensions since engine 1.2.0: the commissioning sheet's tests
    "insulation_low", "polarization_index_low", "winding_resistance_unbalance", "overload_setting_high",
    "overload_setting_low", "vibration_high", "rotation_wrong", "instrument_calibration_expired",
)

NUMBER_FIELDS = {f.name: f for f in NAMEPLATE_NUMBERS + READING_NUMBERS + READING_TEST_NUMBERS + SITE_NUMBERS}
CHOICE_FIELDS = {f.name: f for f in NAMEPLATE_CHOICES + READING_CHOICES}
# Record ids are INTEGER columns: 32-bit on PostgreSQL, so a larger id can never exist.
MAX_ID = 2 ** 31 - 1

__all__ = ["ENGINE_VERSION", "DESIGNS", "SUPPLIES", "DRIVEN_LOADS", "TAG_MAX_CHARS", "TAG_REFUSED_CATEGORIES", "NAMEPLATE_NUMBERS", "NAMEPLATE_CHOICES", "NAMEPLATE_FIELDS", "TEXT_FIELDS", "READING_NUMBERS", "CURRENT_FIELDS", "VOLTAGE_FIELDS", "READING_FIELDS", "READING_TEST_NUMBERS", "READING_CHOICES", "READING_TEXTS", "TEST_FIELDS", "WINDING_TYPES", "INSULATION_CLASSES", "WINDING_MATERIALS", "STARTERS", "FOUNDATIONS", "YES_NO", "TAKEN_AT_HELP", "REVIEW_DECISIONS", "DECISIONS_NEEDING_COMMENT", "INPUT_FIELDS", "RESULT_COLUMNS", "RESULT_COLUMNS_1_0", "VERDICT_WORDS", "STATE_WORDS", "TEXT_RESULT_COLUMNS", "INTEGER_RESULT_COLUMNS", "FLAG_CODES", "NUMBER_FIELDS", "CHOICE_FIELDS", "MAX_ID", "ENERGY_NUMBERS", "ENERGY_FIELDS", "SITE_NUMBERS", "NumberField", "ChoiceField", "TextField"]
