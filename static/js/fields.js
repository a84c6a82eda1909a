// The contract's input fields as the page shows them: range, unit, label, help.
// Names, ranges and units mirror server/contract.py (a browser test compares the two).

export const NAMEPLATE_NUMBERS = [
  { name: "rated_power_kw", low: 0.06, high: 2000, unit: "kW", label: "Rated output", help: "Shaft output from the nameplate. Give kW or hp, not both." },
  { name: "rated_power_hp", low: 0.08, high: 2700, unit: "hp", label: "Rated output", help: "Shaft output from the nameplate. Give kW or hp, not both." },
  { name: "rated_voltage_v", low: 100, high: 15000, unit: "V", label: "Rated voltage", required: true, help: "Line-to-line, for the connection in use (star or delta)." },
  { name: "rated_current_a", low: 0.05, high: 5000, unit: "A", label: "Rated current", required: true, help: "Line current at the rated voltage above." },
  { name: "rated_frequency_hz", low: 16, high: 120, unit: "Hz", label: "Rated frequency", required: true },
  { name: "rated_speed_rpm", low: 100, high: 7200, unit: "rpm", label: "Rated speed", required: true, help: "Full-load speed, not synchronous speed." },
  { name: "poles", low: 2, high: 24, unit: "poles", label: "Poles", integer: true, help: "Blank: inferred from rated speed and frequency." },
  { name: "rated_power_factor", low: 0.3, high: 0.98, unit: "cos φ", label: "Rated power factor", help: "Blank: a typical value for the size and poles." },
  { name: "rated_efficiency_pct", low: 40, high: 99, unit: "%", label: "Rated efficiency", help: "Blank: the IE2 nominal value for the size and poles." },
  { name: "service_factor", low: 1, high: 1.5, unit: "SF", label: "Service factor", help: "Blank: 1.0 (no margin above rated load)." },
  { name: "breakdown_torque_pct", low: 120, high: 450, unit: "% of rated", label: "Breakdown torque", help: "Catalogue value. Blank: typical for the design." },
  { name: "locked_rotor_torque_pct", low: 50, high: 400, unit: "% of rated", label: "Locked-rotor torque", help: "Catalogue value. Blank: typical for the design." },
];

export const NAMEPLATE_CHOICES = [
  { name: "design", label: "Design", choices: ["A", "B", "C", "D", "N", "H"], help: "NEMA A–D or IEC N/H. Blank: B on a 60 Hz nameplate, N on 50 Hz." },
  { name: "supply", label: "Supply", choices: ["mains", "drive"], help: "Blank: mains (direct on line)." },
  { name: "driven_load", label: "Driven machine", choices: ["variable_torque", "constant_torque", "constant_power", "high_breakaway"], help: "Fans and pumps are variable torque. Blank: constant torque (the stricter case)." },
];

export const CHOICE_WORDS = {
  mains: "mains (direct on line)", drive: "variable-frequency drive",
  variable_torque: "variable torque (fan, centrifugal pump)", constant_torque: "constant torque (conveyor, positive-displacement pump)",
  constant_power: "constant power (winder, machine tool)", high_breakaway: "high breakaway (crusher, loaded conveyor start)",
};

export const READING_NUMBERS = [
  { name: "frequency_hz", low: 1, high: 120, unit: "Hz", label: "Frequency", required: true, help: "Supply, or drive output, frequency." },
  { name: "speed_rpm", low: 1, high: 7500, unit: "rpm", label: "Shaft speed", required: true, help: "Tachometer on the motor shaft itself." },
  { name: "current_l1_a", low: 0, high: 10000, unit: "A", label: "Current L1" },
  { name: "current_l2_a", low: 0, high: 10000, unit: "A", label: "Current L2" },
  { name: "current_l3_a", low: 0, high: 10000, unit: "A", label: "Current L3" },
  { name: "voltage_l12_v", low: 10, high: 16000, unit: "V", label: "Voltage L1–L2" },
  { name: "voltage_l23_v", low: 10, high: 16000, unit: "V", label: "Voltage L2–L3" },
  { name: "voltage_l31_v", low: 10, high: 16000, unit: "V", label: "Voltage L3–L1" },
  { name: "power_kw", low: 0, high: 3000, unit: "kW", label: "Input power", help: "Optional: three-phase input from a power analyser." },
  { name: "power_factor", low: 0.05, high: 1, unit: "cos φ", label: "Power factor", help: "Optional: measured displacement power factor." },
  { name: "tachometer_resolution_rpm", low: 0.01, high: 50, unit: "rpm", label: "Tachometer resolution", help: "Resolution plus accuracy. Blank: 1 rpm." },
  { name: "current_accuracy_pct", low: 0.1, high: 20, unit: "% of reading", label: "Clamp meter accuracy", help: "Blank: 2 %." },
  { name: "voltage_accuracy_pct", low: 0.1, high: 10, unit: "% of reading", label: "Voltmeter accuracy", help: "Blank: 1 %." },
  { name: "power_accuracy_pct", low: 0.1, high: 20, unit: "% of reading", label: "Power meter accuracy", help: "Blank: 2 %." },
  { name: "minutes_running", low: 0, high: 1e6, unit: "min", label: "Running before reading", help: "Blank: unknown, the rotor may be cold (widens the band)." },
];

export const FIELD = Object.fromEntries([...NAMEPLATE_NUMBERS, ...READING_NUMBERS].map((f) => [f.name, f]));

const WORD_UNITS = new Set(["cos φ", "SF", "poles"]); // names, not units: left out of "0.3 to 0.98"

export function fmtRange(f) {
  return WORD_UNITS.has(f.unit) ? `${f.low} to ${f.high}` : `${f.low} to ${f.high} ${f.unit}`;
}

/** Parse one typed value: {value, error}. Blank gives value null. Accepts a decimal comma. */
export function parseField(f, raw) {
  const text = String(raw ?? "").trim();
  if (text === "") {
    return f.required ? { value: null, error: `${f.label} is needed (${fmtRange(f)}).` } : { value: null, error: null };
  }
  if (!/^[+-]?(\d+([.,]\d*)?|[.,]\d+)([eE][+-]?\d+)?$/.test(text)) {
    return { value: null, error: `${f.label}: "${text.slice(0, 20)}" is not a number. Allowed: ${fmtRange(f)}.` };
  }
  const v = Number(text.replace(",", "."));
  if (v < f.low || v > f.high) {
    return { value: v, error: `${f.label} ${v} ${f.unit} is outside ${fmtRange(f)}.` };
  }
  if (f.integer && !Number.isInteger(v)) {
    return { value: v, error: `${f.label} must be a whole number (${fmtRange(f)}).` };
  }
  return { value: v, error: null };
}

/** Checks of a reading against its motor's nameplate, as the engine makes them; plain sentences. */
export function crossCheck(np, r) {
  const out = {};
  const onDrive = np.supply === "drive";
  if (r.frequency_hz != null && np.rated_frequency_hz && !onDrive && Math.abs(r.frequency_hz / np.rated_frequency_hz - 1) > 0.2) {
    out.frequency_hz = `Frequency ${r.frequency_hz} Hz is more than 20 % from the rated ${np.rated_frequency_hz} Hz on a mains supply. If a drive feeds this motor, its nameplate record should say supply: drive.`;
  }
  const volts = ["voltage_l12_v", "voltage_l23_v", "voltage_l31_v"].map((k) => r[k]).filter((v) => v != null);
  if (volts.length && np.rated_voltage_v) {
    const m = volts.reduce((a, b) => a + b, 0) / volts.length;
    const ratio = m / np.rated_voltage_v;
    if ((ratio < 0.5 && !onDrive) || ratio < 0.05 || ratio > 1.5) {
      out.voltage_l12_v = `The mean line voltage ${m.toFixed(0)} V is outside ${onDrive ? 5 : 50} to 150 % of the rated ${np.rated_voltage_v} V. Check the meter range and the nameplate voltage.`;
    }
  } else if (!volts.length && !onDrive) {
    out.voltage_l12_v = "At least one line voltage is needed on a mains supply.";
  }
  const amps = ["current_l1_a", "current_l2_a", "current_l3_a"].map((k) => r[k]).filter((v) => v != null);
  if (!amps.length) out.current_l1_a = "At least one line current is needed.";
  else if (np.rated_current_a) {
    const m = amps.reduce((a, b) => a + b, 0) / amps.length;
    if (m <= 0 || m > 8 * np.rated_current_a) out.current_l1_a = `The mean current ${m} A is outside 0 to 800 % of the rated ${np.rated_current_a} A.`;
  }
  return out;
}
