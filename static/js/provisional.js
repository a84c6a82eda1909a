// Provisional result, computed in the browser while the server's interpretation is not yet in.
//
// The parts that need no motor model: synchronous speed, slip, the slip-method load with
// voltage (flux) compensation, and NEMA maximum-deviation unbalance. The same arithmetic as
// server/physics (speed.py, load.slip_method, supply.max_deviation_unbalance_pct); the shared
// vectors in tests/vectors/provisional.json are checked against both so the two cannot drift.
// With the motor's provisional basis (cached with the motor list) also the provisional verdict
// and its band, by the engine's rules (verdict.js, checked by tests/vectors/provisional_verdict.json).

import { sheetStates, withTests } from "./sheet.js";
import { hasBasis, judgeReading } from "./verdict.js";

const RPM_PER_HZ_PER_POLE = 120; // 60 s/min times 2 poles per pole pair

function num(x) {
  if (x === null || x === undefined || x === "") return NaN;
  const v = typeof x === "number" ? x : Number(String(x).trim().replace(",", "."));
  return Number.isFinite(v) ? v : NaN;
}

function present(values) {
  return values.map(num).filter((v) => !Number.isNaN(v));
}

function mean(values) {
  return values.reduce((a, b) => a + b, 0) / values.length;
}

function isClose(a, b) {
  // numpy.isclose defaults, as server.physics.speed.infer_poles uses them
  return Math.abs(a - b) <= 1e-8 + 1e-5 * Math.abs(b);
}

/** Synchronous speed [rpm] = 120 f / p. */
export function synchronousSpeedRpm(frequencyHz, poles) {
  return (RPM_PER_HZ_PER_POLE * frequencyHz) / poles;
}

/** Largest even pole count whose synchronous speed 120 f / p is above the rated speed; NaN if none. */
export function inferPoles(ratedSpeedRpm, ratedFrequencyHz) {
  if (!(ratedSpeedRpm > 0)) return NaN;
  const ratio = (60 * ratedFrequencyHz) / ratedSpeedRpm;
  let pairs = Math.floor(ratio);
  if (isClose(ratio, pairs)) pairs -= 1; // rated speed exactly synchronous: one pair fewer
  return pairs >= 1 ? 2 * pairs : NaN;
}

/** NEMA MG 1 unbalance: 100 * max |x_i - mean| / mean [%]; null unless all three are given. */
export function maxDeviationUnbalancePct(a, b, c) {
  const xs = [num(a), num(b), num(c)];
  if (xs.some(Number.isNaN)) return null;
  const m = mean(xs);
  if (!(m > 0)) return null;
  return (100 * Math.max(...xs.map((x) => Math.abs(x - m)))) / m;
}

function finite(x) {
  return Number.isFinite(x) ? x : null;
}

/**
 * Provisional values for one nameplate + reading.
 *
 * @param {object} record contract field names: rated_frequency_hz, rated_speed_rpm, rated_voltage_v,
 *   poles (optional), supply ("mains" | "drive"), frequency_hz, speed_rpm, voltage_l12_v/_l23_v/_l31_v,
 *   current_l1_a/_l2_a/_l3_a.
 * @returns {object} poles, sync_speed_rpm, slip_pct, slip_rpm, load_slip_pct, voltage_unbalance_pct,
 *   current_unbalance_pct (null where not computable), notes (plain sentences on what is missing), and
 *   judged: the provisional verdict (verdict.js judgeReading) where the record carries the motor's
 *   provisional_basis and the reading can be judged, else null; has_basis: whether it carries one.
 */
export function provisional(record) {
  const notes = [];
  const fr = num(record.rated_frequency_hz);
  const nr = num(record.rated_speed_rpm);
  const vr = num(record.rated_voltage_v);
  const f = num(record.frequency_hz);
  const n = num(record.speed_rpm);
  const onDrive = record.supply === "drive";
  const given = num(record.poles);
  const poles = Number.isNaN(given) ? inferPoles(nr, fr) : given;

  const out = {
    poles: Number.isNaN(poles) ? null : poles,
    sync_speed_rpm: null, slip_pct: null, slip_rpm: null, load_slip_pct: null,
    voltage_unbalance_pct: maxDeviationUnbalancePct(record.voltage_l12_v, record.voltage_l23_v, record.voltage_l31_v),
    current_unbalance_pct: maxDeviationUnbalancePct(record.current_l1_a, record.current_l2_a, record.current_l3_a),
    notes,
    has_basis: hasBasis(record),
    basis_refused: record.provisional_basis === null, // the server found no circuit for this nameplate
    judged: null,
  };
  // the running reading judged as the engine judges it, then the sheet's tests folded in the same way
  if (out.has_basis) out.judged = withTests(judgeReading(record.provisional_basis, record), sheetStates(record, record));
  if (Number.isNaN(poles)) {
    notes.push("No pole count: check the rated speed and frequency.");
    return out;
  }
  if (Number.isNaN(f) || Number.isNaN(n)) {
    notes.push("Frequency and speed are needed for slip.");
    return out;
  }
  const ns = synchronousSpeedRpm(f, poles);
  const s = (ns - n) / ns; // per unit, at the measured frequency
  out.sync_speed_rpm = finite(ns);
  out.slip_pct = finite(100 * s);
  out.slip_rpm = finite(ns - n);

  const nsr = synchronousSpeedRpm(fr, poles);
  const sr = (nsr - nr) / nsr; // rated per-unit slip, at rated frequency
  if (!(s > 0)) {
    notes.push("Speed at or above synchronous: no slip-method load.");
    return out;
  }
  if (!(sr > 0) || Number.isNaN(vr)) {
    notes.push("The nameplate gives no rated slip: no slip-method load.");
    return out;
  }
  const volts = present([record.voltage_l12_v, record.voltage_l23_v, record.voltage_l31_v]);
  let v;
  if (volts.length) v = mean(volts);
  else if (onDrive) v = vr * Math.min(f / fr, 1); // the V/f the drive applies up to base frequency
  else {
    notes.push("A line voltage is needed on a mains supply for the slip-method load.");
    return out;
  }
  const speedRatio = n / nr;
  // torque ~ (V/f)^2 x slip speed, one law on mains and drive (server: physics.load.slip_torque_pu)
  const flux = v / f / (vr / fr);
  const torque = ((ns - n) / (sr * nsr)) * flux * flux;
  out.load_slip_pct = finite(100 * Math.max(torque, 0) * speedRatio);
  return out;
}
