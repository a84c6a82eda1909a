// The contract's input fields as the page shows them: range, unit, label, help, and the checks.
// They come from the server's declaration (/fields.json, precached by the service worker), so the
// page checks a field exactly as the API will; the rules themselves are in fieldrules.js.

import { fieldsFrom, fmtRange, parseChoice, parseField, parseText } from "./fieldrules.js";

const DECLARATION = await (await fetch("/fields.json")).json();
const FIELDS = fieldsFrom(DECLARATION);

export const NAMEPLATE_NUMBERS = FIELDS.NAMEPLATE_NUMBERS;
export const NAMEPLATE_CHOICES = FIELDS.NAMEPLATE_CHOICES;
export const READING_NUMBERS = FIELDS.READING_NUMBERS;
export const READING_TEST_NUMBERS = FIELDS.READING_TEST_NUMBERS;
export const READING_CHOICES = FIELDS.READING_CHOICES;
export const CRITERIA = FIELDS.CRITERIA;
export const CHOICE = FIELDS.CHOICE;
export const SITE_NUMBERS = FIELDS.SITE_NUMBERS;   // issue 11: a site's settings
export const TEXT_FIELDS = FIELDS.TEXT;
export const FIELD = FIELDS.FIELD;
export { fmtRange, parseChoice, parseField, parseText };

export const CHOICE_WORDS = {
  mains: "mains (direct on line)", drive: "variable-frequency drive",
  variable_torque: "variable torque (fan, centrifugal pump)", constant_torque: "constant torque (conveyor, positive-displacement pump)",
  constant_power: "constant power (winder, machine tool)", high_breakaway: "high breakaway (crusher, loaded conveyor start)",
};

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
