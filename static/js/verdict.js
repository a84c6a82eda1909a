// The provisional verdict: the engine's rules, run on this device while the server is out of reach.
//
// It judges a reading with the motor's provisional basis (GET /api/v1/motors: `provisional_basis`,
// worked out by the server once per nameplate revision: rated point, fitted circuit, loss split,
// breakdown band, thresholds in force) and the same rules as the engine, in the same order:
//   load by slip, current and input power  server/slipwise/physics/load.py (slip_method, current_method,
//                                           input_power_method, fuse, widen)
//   no-load current with saturation         physics/typical.py saturated_no_load_current
//   losses at the operating point           physics/efficiency.py scaled_losses_w
//   breakdown torque at V and f             physics/circuit.py breakdown (Thevenin form)
//   margins, stability, starting            physics/torque_speed.py
//   supply zone, unbalance                  physics/supply.py
//   states, flags and the verdict word      engine/verdicts.py judge, supply_state; physics/verdict.py
//   the orchestration                       engine/pipeline.py _interpret_valid
// Every rule is checked against the engine's own results over generated cases
// (tests/vectors/provisional_verdict.json; tests/test_provisional_verdict.py and its browser twin).

const RPM_TO_RAD_S = (2 * Math.PI) / 60;
const SQRT3 = Math.sqrt(3);
const NOT_JUDGED = 0, CLEAR = 1, AT_LIMIT = 2, BEYOND = 3;
const STATE_WORDS = [null, "clear", "at_limit", "beyond"];
// physics/load.py
const SLIP_TOLERANCE = 0.2, SLIP_TOLERANCE_BELOW_1KW = 0.3;
const ALUMINIUM_K_DEGC = 225, AMBIENT_DEGC = 25, ROTOR_RISE_RATED_K = 75, ROTOR_THERMAL_TIME_MIN = 30;
const CURRENT_MODEL_ERROR_PU = 0.08, NO_LOAD_CURRENT_TOLERANCE = 0.2, POWER_FACTOR_ACCURACY = 0.02;
const STATOR_LOSS_BAND = [0.8, 1.2];
const FUSE_FLOOR = 1e-3;
// physics/meter.py
const MAX_DECIMALS = 12;
// physics/flags.py FLAG_ORDER and engine/verdicts.py ACT_FLAGS
export const FLAG_ORDER = ["speed_above_synchronous", "overloaded", "over_service_factor", "near_breakdown", "underloaded",
  "supply_out_of_tolerance", "voltage_unbalance", "current_unbalance", "readings_inconsistent", "starting_torque_low"];
const ACT_FLAGS = ["overloaded", "over_service_factor", "near_breakdown", "supply_out_of_tolerance", "voltage_unbalance",
  "current_unbalance", "starting_torque_low"];
/** The layout of provisional_basis this module reads (engine/basis.py BASIS_VERSION). */
export const BASIS_VERSION = 1;

const isNaNum = Number.isNaN;
const fmin = (a, b) => (isNaNum(a) ? b : isNaNum(b) ? a : Math.min(a, b)); // numpy fmin: NaN yields to a number
const fmax = (a, b) => (isNaNum(a) ? b : isNaNum(b) ? a : Math.max(a, b));
const clip0 = (x) => (isNaNum(x) ? x : Math.max(x, 0));

function num(x) {
  if (x === null || x === undefined || x === "") return NaN;
  const v = typeof x === "number" ? x : Number(String(x).trim().replace(",", "."));
  return Number.isFinite(v) ? v : NaN;
}

function meanPresent(values) {
  const xs = values.filter((v) => !isNaNum(v));
  return xs.length ? xs.reduce((a, b) => a + b, 0) / xs.length : NaN;
}

// --- physics/verdict.py ----------------------------------------------------------------------
function judgeMinimum(value, low, minimum) {
  if (isNaNum(value) || isNaNum(low) || isNaNum(minimum)) return NOT_JUDGED;
  return value < minimum ? BEYOND : low <= minimum ? AT_LIMIT : CLEAR;
}
function judgeMaximum(value, high, maximum) {
  if (isNaNum(value) || isNaNum(high) || isNaNum(maximum)) return NOT_JUDGED;
  return value > maximum ? BEYOND : high >= maximum ? AT_LIMIT : CLEAR;
}

// --- physics/supply.py -----------------------------------------------------------------------
/** NEMA MG 1 maximum deviation from the mean over the mean [%]; NaN unless all three are there. */
export function maxDeviationPct(a, b, c) {
  const xs = [a, b, c];
  const m = (a + b + c) / 3;
  if (!(m > 0)) return NaN;
  return (100 * Math.max(...xs.map((x) => Math.abs(x - m)))) / m;
}
const deviationPct = (measured, rated) => (100 * (measured - rated)) / rated;
function iecZoneCode(dv, df) {
  if (isNaNum(dv) || isNaNum(df)) return 0;
  const eps = 1e-9;
  const inA = Math.abs(df) <= 2 + eps && Math.abs(dv) <= 5 + eps && Math.abs(dv - df) <= 5 + eps;
  const inB = df >= -5 - eps && df <= 3 + eps && Math.abs(dv) <= 10 + eps && Math.abs(dv - df) <= 10 + eps;
  return inA ? 1 : inB ? 2 : 3;
}
function withinNema(dv, df) {
  const eps = 1e-9, a = Math.abs(dv), b = Math.abs(df);
  return a <= 10 + eps && b <= 5 + eps && a + b <= 10 + eps; // false for NaN, as numpy's comparisons
}
const ZONE_LABELS = ["", "A", "B", "outside", "drive"];
const DRIVE_ZONE_CODE = 4;

// --- physics/meter.py ------------------------------------------------------------------------
/** The step of a reading's last stated digit: 10^-d for the decimals of its shortest text. */
function statedResolution(x) {
  if (!Number.isFinite(x)) return NaN;
  const text = String(Math.abs(x)); // JavaScript's shortest text that gives the same double, as Python's repr
  const m = /^(\d+)(?:\.(\d+))?(?:e([+-]\d+))?$/.exec(text);
  if (!m) return 10 ** -MAX_DECIMALS;
  const decimals = Math.max((m[2] ? m[2].length : 0) - (m[3] ? Number(m[3]) : 0), 0);
  return 10 ** -Math.min(decimals, MAX_DECIMALS);
}
function readingAccuracyPct(accuracyPct, reading) {
  const rounding = reading === 0 ? 0 : (100 * 0.5 * statedResolution(reading)) / Math.abs(reading);
  return Math.sqrt(accuracyPct ** 2 + rounding ** 2);
}

// --- physics/load.py -------------------------------------------------------------------------
const combineRel = (...rel) => Math.sqrt(rel.reduce((acc, r) => acc + Math.log1p(r) ** 2, 0));

function rotorResistanceRatio(load, minutes) {
  const l = isNaNum(load) ? NaN : Math.min(Math.max(load, 0), 2);
  const warm = isNaNum(minutes) ? 1 : 1 - Math.exp(-minutes / ROTOR_THERMAL_TIME_MIN);
  const temp = AMBIENT_DEGC + ROTOR_RISE_RATED_K * l ** 2 * warm;
  return (ALUMINIUM_K_DEGC + temp) / (ALUMINIUM_K_DEGC + AMBIENT_DEGC + ROTOR_RISE_RATED_K);
}

/** Shaft output by the slip method [pu of rated]: {value, low, high}. */
function slipMethod(slipRpm, ratedSlipRpm, flux, speedRatio, ratedKw, tachRpm, voltAccPct, minutes, onDrive) {
  const torque = (slipRpm / ratedSlipRpm) * flux ** 2;
  const tol = ratedKw < 1 ? SLIP_TOLERANCE_BELOW_1KW : SLIP_TOLERANCE;
  const tach = tachRpm / Math.max(Math.abs(slipRpm), 1e-9);
  let volt = (2 * voltAccPct) / 100;
  if (onDrive) volt *= 2; // PWM voltage read by a meter
  const halfLow = combineRel(tol, tach, volt);
  const halfHigh = combineRel(tol / (1 - tol), tach, volt);
  const thermal = isNaNum(minutes) ? 1 / rotorResistanceRatio(0, 0) : 1 / rotorResistanceRatio(torque, minutes);
  const tLow = torque * Math.exp(-halfLow);
  const tHigh = torque * Math.exp(halfHigh) * Math.max(thermal, 1);
  return { value: clip0(torque) * speedRatio, low: clip0(tLow) * speedRatio, high: clip0(tHigh) * speedRatio };
}

function saturatedNoLoadCurrent(i0r, phi, exps) {
  if (!(phi > 0)) return { value: NaN, low: NaN, high: NaN };
  const [kc, klo, khi] = phi >= 1 ? exps.above_rated : exps.below_rated;
  const a = i0r * phi ** klo, b = i0r * phi ** khi;
  return { value: clip0(i0r * phi ** kc), low: clip0(fmin(a, b)), high: clip0(fmax(a, b)) };
}

function currentMethod(i, iR, i0, i0r, flux, speedRatio, accPct, i0Low, i0High) {
  const factor = flux * speedRatio, acc = accPct / 100;
  const load = (iMeas, i0Now, scale) => (Math.sqrt(Math.max(iMeas ** 2 - (i0Now * scale) ** 2, 0))
    / Math.sqrt(Math.max(iR ** 2 - (i0r * scale) ** 2, 1e-12))) * factor;
  const value = load(i, i0, 1);
  let low = Math.min(load(i * (1 - acc), i0High, 1 + NO_LOAD_CURRENT_TOLERANCE), load(i * (1 - acc), i0High, 1));
  let high = Math.max(load(i * (1 + acc), i0Low, 1 - NO_LOAD_CURRENT_TOLERANCE), load(i * (1 + acc), i0Low, 1));
  low = value - Math.sqrt((value - low) ** 2 + CURRENT_MODEL_ERROR_PU ** 2);
  high = value + Math.sqrt((high - value) ** 2 + CURRENT_MODEL_ERROR_PU ** 2);
  return { value: clip0(value), low: clip0(low), high: clip0(high) };
}

function inputPowerAccuracyPct(vAccPct, iAccPct, pf) {
  return 100 * Math.sqrt((vAccPct / 100) ** 2 + (iAccPct / 100) ** 2 + (POWER_FACTOR_ACCURACY / pf) ** 2);
}

function inputPowerMethod(pIn, accPct, core, fw, cu1, slip, pRated, fixedBand) {
  const acc = accPct / 100;
  const s = isNaNum(slip) ? NaN : Math.min(Math.max(slip, 0), 1);
  const out = (pin, kfix, kcu) => ((1 - s) * (pin - kfix * core - kcu * cu1) - kfix * fw) / pRated;
  return { value: clip0(out(pIn, 1, 1)), low: clip0(out(pIn * (1 - acc), fixedBand[1], STATOR_LOSS_BAND[1])),
    high: clip0(out(pIn * (1 + acc), fixedBand[0], STATOR_LOSS_BAND[0])) };
}

const widen = (e, k) => ({ value: e.value, low: e.value - (e.value - e.low) * k, high: e.value + (e.high - e.value) * k });

/** Inverse-variance fusion and the pairwise consistency test (load.fuse; the outlier is the server's). */
function fuse(methods) {
  const v = methods.map((e) => e.value), lo = methods.map((e) => e.low), hi = methods.map((e) => e.high);
  const sLo = v.map((x, k) => Math.max((x - lo[k]) / 2, FUSE_FLOOR));
  const sHi = v.map((x, k) => Math.max((hi[k] - x) / 2, FUSE_FLOOR));
  const sLoOpen = v.map((x, k) => (x <= lo[k] ? Math.max(sLo[k], sHi[k]) : sLo[k]));
  const ok = v.map((x, k) => Number.isFinite(x) && Number.isFinite(0.5 * (sLo[k] + sHi[k])));
  let wsum = 0, wv = 0, invLo = 0, invHi = 0;
  v.forEach((x, k) => {
    if (!ok[k]) return;
    const sigma = 0.5 * (sLo[k] + sHi[k]), w = 1 / sigma ** 2;
    wsum += w; wv += w * x; invLo += 1 / sLoOpen[k] ** 2; invHi += 1 / sHi[k] ** 2;
  });
  const value = wsum > 0 ? wv / wsum : NaN;
  const halfLo = 2 * Math.sqrt(1 / invLo), halfHi = 2 * Math.sqrt(1 / invHi);
  let consistent = true;
  for (let a = 0; a < v.length; a++) {
    for (let b = 0; b < v.length; b++) {
      if (a === b || !ok[a] || !ok[b]) continue;
      const allowed = Math.sqrt((v[a] - lo[a]) ** 2 + (hi[b] - v[b]) ** 2);
      if (v[a] - v[b] > allowed) consistent = false;
    }
  }
  return { fused: { value: clip0(value), low: clip0(value - halfLo), high: value + halfHi }, consistent };
}

// --- physics/circuit.py: breakdown torque at a voltage and frequency (Thevenin form) ----------
const cx = (re, im = 0) => ({ re, im });
const cadd = (a, b) => cx(a.re + b.re, a.im + b.im);
const cmul = (a, b) => cx(a.re * b.re - a.im * b.im, a.re * b.im + a.im * b.re);
const cdiv = (a, b) => { const d = b.re ** 2 + b.im ** 2; return cx((a.re * b.re + a.im * b.im) / d, (a.im * b.re - a.re * b.im) / d); };
const cabs2 = (a) => a.re ** 2 + a.im ** 2;

function breakdown(c, voltageV, frequencyHz) {
  const ratio = frequencyHz / c.rated_frequency_hz;
  const x1 = c.x1_ohm * ratio, x2 = c.x2_ohm * ratio, xm = c.xm_ohm * ratio;
  const rc = c.rc_ohm == null ? Infinity : c.rc_ohm * ratio; // null: no core branch (inf in the server)
  const y = cadd(cx(Number.isFinite(rc) ? 1 / rc : 0), cdiv(cx(1), cx(0, xm)));
  const zm = cdiv(cx(1), y);
  const z1 = cx(c.r1_ohm, x1);
  const vth = cdiv(cmul(cx(voltageV / SQRT3), zm), cadd(z1, zm));
  const zth = cdiv(cmul(z1, zm), cadd(z1, zm));
  const omegaSync = ((120 * frequencyHz) / c.poles) * RPM_TO_RAD_S;
  const root = Math.sqrt(zth.re ** 2 + (zth.im + x2) ** 2);
  const tmax = (3 * cabs2(vth)) / (2 * omegaSync * (zth.re + root));
  const b = c.r2_ohm / root, a = b * c.r2_rise;
  const sMax = a > 0 ? (1 - Math.sqrt(Math.max(1 - 4 * a * b, 0))) / (2 * a) : b;
  return { torqueEmNm: tmax, slip: sMax };
}

// --- physics/torque_speed.py -----------------------------------------------------------------
const torqueNm = (powerW, speedRpm) => powerW / Math.max(speedRpm * RPM_TO_RAD_S, 1e-9);
function klossSlope(s, sk, tk, ns) {
  const x = s / sk + sk / s;
  return -((2 * tk * (sk / s ** 2 - 1 / sk)) / x ** 2) / ns;
}
function loadTorqueSlope(law, n0, t0) {
  if (law === "variable_torque") return (2 * t0) / n0;
  if (law === "constant_power") return -t0 / n0;
  return 0;
}
const startingMargin = (lrtPct, v, vr, share, torquePct) => (lrtPct * (v / vr) ** 2) / (share * Math.max(torquePct, 10));
const marginOf = (bt, ot) => (ot > 0 ? bt / ot : NaN);

// --- engine/verdicts.py supply_state -----------------------------------------------------------
function supplyState(zoneCode, isNema, onDrive, dv, df, accPct) {
  if (onDrive) return NOT_JUDGED;
  if (!isNema) return [NOT_JUDGED, CLEAR, AT_LIMIT, BEYOND][zoneCode] ?? NOT_JUDGED;
  if (isNaNum(dv) || isNaNum(df)) return NOT_JUDGED;
  const near = Math.sign(dv) * Math.max(Math.abs(dv) - accPct, 0);
  const far = Math.sign(dv) * (Math.abs(dv) + accPct);
  return withinNema(far, df) ? CLEAR : withinNema(near, df) ? AT_LIMIT : BEYOND;
}

const orNull = (x) => (Number.isFinite(x) ? x : null);

/** Whether a motor record carries a basis this module can judge with. */
export function hasBasis(motor) {
  const b = motor && motor.provisional_basis;
  return !!(b && b.version === BASIS_VERSION && b.circuit && b.thresholds);
}

/**
 * The provisional verdict of one reading.
 *
 * @param {object} basis the motor's provisional_basis (from the server, cached with the motor list)
 * @param {object} reading contract reading fields (numbers or text; blank = absent)
 * @returns {object|null} null when the reading cannot be judged (no frequency, speed or current, or no
 *   voltage on mains: the server refuses those too); else verdict, the state columns, flags, limit_flags
 *   and the engine's result columns of the same names (null where the engine gives null).
 */
export function judgeReading(basis, reading) {
  if (!basis || basis.version !== BASIS_VERSION) return null;
  const th = basis.thresholds, d = basis.reading_defaults || {};
  const r = {};
  for (const k of ["frequency_hz", "speed_rpm", "current_l1_a", "current_l2_a", "current_l3_a", "voltage_l12_v",
    "voltage_l23_v", "voltage_l31_v", "power_kw", "power_factor", "minutes_running", "tachometer_resolution_rpm",
    "current_accuracy_pct", "voltage_accuracy_pct", "power_accuracy_pct"]) {
    const v = num(reading[k]);
    r[k] = isNaNum(v) && d[k] != null ? d[k] : v;
  }
  const vMean = meanPresent([r.voltage_l12_v, r.voltage_l23_v, r.voltage_l31_v]);
  const iMean = meanPresent([r.current_l1_a, r.current_l2_a, r.current_l3_a]);
  const onDrive = basis.supply === "drive";
  const f = r.frequency_hz, n = r.speed_rpm;
  if (isNaNum(f) || isNaNum(n) || isNaNum(iMean) || (isNaNum(vMean) && !onDrive)) return null;

  const poles = basis.poles, fr = basis.rated_frequency_hz, vr = basis.rated_voltage_v, ir = basis.rated_current_a;
  const nr = basis.rated_speed_rpm, ratedKw = basis.rated_kw, pRatedW = ratedKw * 1000;
  const ns = (120 * f) / poles, nsr = basis.sync_rated_rpm, sr = basis.rated_slip;
  const s = (ns - n) / ns, slipRpm = ns - n;
  const above = s <= 0;
  const sRun = above ? NaN : s;
  const vDrive = vr * Math.min(f / fr, 1);
  const v = isNaNum(vMean) ? vDrive : vMean;
  const flux = v / f / (vr / fr);
  const speedRatio = n / nr, freqRatio = f / fr, currentRatio = iMean / ir;

  // --- load, three methods, fused
  const bySlip = slipMethod(slipRpm, sr * nsr, flux, speedRatio, ratedKw, r.tachometer_resolution_rpm,
    r.voltage_accuracy_pct, r.minutes_running, onDrive);
  const i0r = basis.no_load_current_a;
  const i0 = saturatedNoLoadCurrent(i0r, flux, basis.saturation_exponents);
  const byCurrent = currentMethod(iMean, ir, i0.value, i0r, flux, speedRatio, r.current_accuracy_pct, i0.low, i0.high);
  const L = basis.losses_w;
  const coreNow = L.core * flux ** 2 * freqRatio, fwNow = L.friction_windage * speedRatio ** 2;
  const statorNow = L.stator * currentRatio ** 2;
  const pk = r.power_kw * 1000;
  const pIn = isNaNum(pk) ? SQRT3 * vMean * iMean * r.power_factor : pk;
  const accIn = isNaNum(pk) ? inputPowerAccuracyPct(r.voltage_accuracy_pct, r.current_accuracy_pct, r.power_factor)
    : readingAccuracyPct(r.power_accuracy_pct, r.power_kw);
  const byPower = inputPowerMethod(pIn, accIn, coreNow, fwNow, statorNow, s, pRatedW, basis.fixed_loss_band);
  const methods = [bySlip, byCurrent, byPower].map((e) => (above ? { value: NaN, low: NaN, high: NaN } : e));
  let { fused, consistent } = fuse(methods);
  if (th.inconsistency_factor !== 1) ({ consistent } = fuse(methods.map((e) => widen(e, th.inconsistency_factor))));
  const loadPu = fused.value;
  const torquePu = loadPu / speedRatio;
  const atSync = above && n - ns <= r.tachometer_resolution_rpm;

  // --- breakdown, stability, starting
  const bd = breakdown(basis.circuit, v, f);
  const tRated = torqueNm(pRatedW, nr);
  const bdPct = (100 * (bd.torqueEmNm - torqueNm(fwNow, n))) / tRated;
  const torqueLowPct = (100 * fused.low) / speedRatio, torqueHighPct = (100 * fused.high) / speedRatio;
  const scale = basis.breakdown_torque_low_pct / basis.breakdown_torque_pct;
  const margin = marginOf(bdPct, Math.max(100 * torquePu, 1));
  const marginLow = marginOf(bdPct * fmin(scale, 1), Math.max(torqueHighPct, 1));
  const motorSlope = klossSlope(sRun, bd.slip, (bdPct / 100) * tRated, ns);
  const loadSlope = loadTorqueSlope(basis.driven_load, n, torquePu * tRated);
  const stable = motorSlope < loadSlope && sRun < bd.slip;
  const hasPoint = !above && !isNaNum(loadPu);
  const unstable = hasPoint && !stable;
  const noStart = onDrive || above;
  const starting = noStart ? NaN : startingMargin(basis.locked_rotor_torque_pct, v, vr, basis.breakaway_share, 100 * torquePu);
  const startingLow = noStart ? NaN : startingMargin(basis.locked_rotor_torque_pct, v, vr, basis.breakaway_share, torqueHighPct);

  // --- supply
  const vu = maxDeviationPct(r.voltage_l12_v, r.voltage_l23_v, r.voltage_l31_v);
  const iu = maxDeviationPct(r.current_l1_a, r.current_l2_a, r.current_l3_a);
  const vDev = deviationPct(vMean, onDrive ? vDrive : vr);
  const fDev = onDrive ? NaN : deviationPct(f, fr);
  const zone = onDrive ? DRIVE_ZONE_CODE : iecZoneCode(vDev, fDev);

  // --- states (engine/verdicts.py judge)
  const basisLow = onDrive ? torqueLowPct : 100 * fused.low;
  const basisHigh = onDrive ? torqueHighPct : 100 * fused.high;
  const project = onDrive && basis.driven_load === "variable_torque"; // a fan's torque at rated speed
  const toRated = (b) => (project ? b * (nr / n) ** 2 : b);
  const underLow = toRated(basisLow), underHigh = toRated(basisHigh);
  const over = judgeMaximum(basisLow, basisHigh, th.overloaded_pct);
  const overSf = basis.service_factor_given ? judgeMaximum(basisLow, basisHigh, 100 * basis.service_factor) : NOT_JUDGED;
  const under = judgeMinimum(underHigh, underLow, th.underloaded_pct);
  let bdState = judgeMinimum(marginLow, marginLow, th.near_breakdown_margin);
  bdState = above ? NOT_JUDGED : unstable ? BEYOND : bdState;
  const supplySt = supplyState(zone, basis.is_nema, onDrive, vDev, fDev, r.voltage_accuracy_pct);
  const vUnb = judgeMaximum(vu, vu, th.voltage_unbalance_pct);
  const iUnb = judgeMaximum(iu, iu, th.current_unbalance_pct);
  const start = basis.needs_breakaway ? judgeMinimum(starting, startingLow, th.starting_margin) : NOT_JUDGED;
  const inconsistent = !above && !consistent;
  const byCode = { overloaded: over, over_service_factor: overSf, near_breakdown: bdState, underloaded: under,
    supply_out_of_tolerance: supplySt, voltage_unbalance: vUnb, current_unbalance: iUnb, starting_torque_low: start };
  const beyond = { speed_above_synchronous: above, readings_inconsistent: inconsistent };
  for (const [code, st] of Object.entries(byCode)) beyond[code] = st === BEYOND;
  const flags = FLAG_ORDER.filter((c) => beyond[c]);
  const limitFlags = FLAG_ORDER.filter((c) => byCode[c] === AT_LIMIT);
  const act = (above && !atSync) || ACT_FLAGS.some((c) => beyond[c]);
  const watch = beyond.underloaded || atSync || Object.values(byCode).some((st) => st === AT_LIMIT);
  const verdict = act ? "act" : inconsistent ? "retake" : watch ? "watch" : "sound";

  return {
    verdict, flags, limit_flags: limitFlags,
    load_state: STATE_WORDS[Math.max(over, overSf, under)], breakdown_state: STATE_WORDS[bdState],
    supply_state: STATE_WORDS[supplySt], voltage_unbalance_state: STATE_WORDS[vUnb],
    current_unbalance_state: STATE_WORDS[iUnb], starting_state: STATE_WORDS[start],
    load_pct: orNull(100 * loadPu), load_low_pct: orNull(100 * fused.low), load_high_pct: orNull(100 * fused.high),
    load_slip_pct: orNull(100 * methods[0].value), load_current_pct: orNull(100 * methods[1].value),
    load_power_pct: orNull(100 * methods[2].value),
    torque_pct: orNull(100 * torquePu), torque_low_pct: orNull(torqueLowPct), torque_high_pct: orNull(torqueHighPct),
    breakdown_torque_now_pct: orNull(bdPct),
    breakdown_margin: above ? null : orNull(margin), breakdown_margin_low: above ? null : orNull(marginLow),
    starting_margin: orNull(starting),
    voltage_unbalance_pct: orNull(vu), current_unbalance_pct: orNull(iu),
    voltage_deviation_pct: orNull(vDev), frequency_deviation_pct: orNull(fDev),
    supply_zone: ZONE_LABELS[zone] || null,
    operating_side: hasPoint ? (stable ? "stable" : "unstable") : null,
    slip_pct: orNull(100 * s), sync_speed_rpm: orNull(ns),
  };
}
