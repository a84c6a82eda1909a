// The commissioning sheet on the reading form: the de-energised tests first (insulation, winding
// resistances, overload relay, rotation), vibration after the running values, then instruments and
// notes. Each test shows its provisional state at once, offline too, computed here from the criteria
// the server exports in /fields.json (sheet_criteria, read from server/slipwise/physics: one
// declaration); the server's states replace them once the reading is interpreted (testsBlock).

import { fmt, h } from "./dom.js";
import { CHOICE, CRITERIA, parseChoice, parseText, READING_TEST_NUMBERS, TEXT_FIELDS } from "./fields.js";

const NUM = Object.fromEntries(READING_TEST_NUMBERS.map((f) => [f.name, f]));
const STATE_TEXT = { clear: "clear", at_limit: "at the limit", beyond: "beyond" };
const KW_PER_HP = 0.7457; // 1 hp = 745.7 W (server/slipwise/physics/units.py)

// --- the judgements, on the verdict scale of server/slipwise/physics/verdict.py -------------------
function judgeMin(value, bandLow, minimum) {
  if (![value, bandLow, minimum].every(Number.isFinite)) return null;
  return value < minimum ? "beyond" : bandLow <= minimum ? "at_limit" : "clear";
}
function judgeMax(value, bandHigh, maximum) {
  if (![value, bandHigh, maximum].every(Number.isFinite)) return null;
  return value > maximum ? "beyond" : bandHigh >= maximum ? "at_limit" : "clear";
}
const worst = (...s) => ["beyond", "at_limit", "clear"].find((w) => s.includes(w)) || null;
const round9 = (x) => Math.round(x * 1e9) / 1e9; // as the physics rounds, far below any meter's resolution

function ratedKw(m) {
  return m.rated_power_kw != null ? m.rated_power_kw : m.rated_power_hp != null ? m.rated_power_hp * KW_PER_HP : NaN;
}
function isNema(m) {
  const design = m.design || (Math.abs(m.rated_frequency_hz - 60) < Math.abs(m.rated_frequency_hz - 50) ? "B" : "N");
  return CRITERIA.overload.nema_designs.includes(design);
}

/** Provisional states of the tests, {test: {state, text}}, from the motor and the values entered. */
export function sheetStates(m, v, today = new Date().toISOString().slice(0, 10)) {
  const out = {};
  const pick = (name) => v[name] ?? CHOICE[name]?.default ?? null;
  // insulation and polarization index: IEEE 43-2013
  const ins = CRITERIA.insulation;
  const r1 = v.insulation_resistance_1min_mohm;
  if (r1 != null && v.winding_temperature_c != null) {
    const r40 = r1 * 0.5 ** ((ins.reference_temperature_c - v.winding_temperature_c) / ins.halving_interval_c);
    const kind = pick("winding_type");
    const minimum = pick("winding_made_before_1970") === "yes" ? m.rated_voltage_v / 1000 + 1
      : kind === "form" && m.rated_voltage_v >= ins.form_wound_low_voltage_v ? ins.minimum_form_wound_mohm : ins.minimum_random_wound_mohm;
    const a = ins.tester_accuracy_pct / 100;
    out.insulation = { state: judgeMin(r40, r40 * (1 - a), minimum),
      text: `${fmt(r40, 2)} MΩ at 40 °C; minimum ${fmt(minimum, 1)} MΩ (IEEE 43-2013 Table 3)` };
    if (v.insulation_resistance_10min_mohm != null && r1 > 0) {
      const pi = v.insulation_resistance_10min_mohm / r1;
      const piMin = ins.pi_minimum[pick("insulation_class")];
      const state = r1 > ins.pi_not_judged_above_mohm ? null : judgeMin(pi, (pi * (1 - a)) / (1 + a), piMin);
      out.polarization_index = { state, text: `PI ${fmt(pi, 2)}; minimum ${fmt(piMin, 1)} (IEEE 43-2013)${state ? "" : "; not judged above 5,000 MΩ"}` };
    }
  }
  if (r1 != null || v.insulation_test_voltage_v != null) {
    const row = ins.test_voltage_table.find(([upper, inc]) => upper === null || (inc ? m.rated_voltage_v <= upper : m.rated_voltage_v < upper));
    const t = v.insulation_test_voltage_v;
    out.test_voltage = { state: t == null ? null : t >= row[2] && t <= row[3] ? "clear" : "at_limit",
      text: `suggested DC test voltage ${row[2] === row[3] ? row[2] : `${row[2]}–${row[3]}`} V for ${m.rated_voltage_v} V (IEEE 43-2013 Table 1)` };
  }
  // winding resistance balance (common practice 2 %)
  const r = ["l12", "l23", "l31"].map((p) => v[`winding_resistance_${p}_ohm`]);
  if (r.every((x) => x != null)) {
    const mean = (r[0] + r[1] + r[2]) / 3;
    const u = round9((100 * Math.max(...r.map((x) => Math.abs(x - mean)))) / mean);
    const w = CRITERIA.winding;
    out.winding = { state: judgeMax(u, u + 2 * w.meter_accuracy_pct, w.unbalance_limit_pct),
      text: `unbalance ${fmt(u, 2)} %; limit ${w.unbalance_limit_pct} % (common practice)` };
  } else if (r.some((x) => x != null)) out.winding = { state: null, text: "all three resistances are needed" };
  // overload relay: NEC 430.32(A)(1) on NEMA nameplates, IEC practice otherwise
  if (v.overload_setting_a != null && v.starter) {
    const o = CRITERIA.overload;
    const seen = v.starter === "star_delta" ? m.rated_current_a / Math.sqrt(3) : m.rated_current_a;
    const pct = round9((100 * v.overload_setting_a) / seen);
    const nema = isNema(m);
    const limit = nema ? (m.service_factor != null && m.service_factor >= o.nec_service_factor ? o.nec_limit_sf_or_rise_pct : o.nec_limit_other_pct) : o.iec_limit_pct;
    const high = pct > limit ? "beyond" : pct >= limit - o.dial_band_pct ? "at_limit" : "clear";
    const low = pct < 100 / o.trip_multiple ? "beyond" : pct < 100 / o.no_trip_multiple ? "at_limit" : "clear";
    out.overload = { state: worst(high, low),
      text: `${fmt(pct, 1)} % of the ${fmt(seen, 1)} A the relay carries${v.starter === "star_delta" ? " (FLA/√3, star-delta)" : ""}; at most ${limit} % (${nema ? "NEC 430.32(A)(1)" : "IEC practice"})` };
  }
  // rotation
  if (v.rotation_correct) out.rotation = { state: v.rotation_correct === "yes" ? "clear" : "beyond",
    text: v.rotation_correct === "yes" ? "turns the right way" : "swap two line leads with the supply isolated" };
  // vibration: ISO 10816-3 groups, ISO 10816-1 class I at 15 kW and below (boundaries from memory)
  if (v.vibration_velocity_mm_s != null) {
    const c = CRITERIA.vibration;
    const kw = ratedKw(m);
    const group = kw <= c.small_machine_max_kw ? "class I" : kw <= c.group_2_max_kw ? "group 2" : kw <= c.group_1_max_kw ? "group 1" : null;
    const bounds = group && c.boundaries_mm_s[`${group}/${pick("foundation")}`];
    if (bounds) {
      const x = v.vibration_velocity_mm_s;
      const zone = "ABCD"[bounds.filter((b) => x > b).length];
      out.vibration = { state: judgeMax(x, x * (1 + c.meter_accuracy_pct / 100), bounds[1]), zone,
        text: `zone ${zone}; B/C at ${bounds[1]} mm/s (ISO 10816, ${group}, ${pick("foundation")})` };
    }
  }
  // instruments: calibration due before the reading's date
  if (v.instruments) {
    const late = v.instruments.split("\n").map((l) => l.split(";").map((p) => p.trim())).filter((p) => p.length === 3 && p[2] < today);
    out.instruments = { state: late.length ? "beyond" : "clear",
      text: late.length ? `calibration due before today: ${late.map((p) => `${p[0]} (${p[1]})`).join(", ")}` : "calibration in date" };
  }
  return out;
}

/**
 * The provisional verdict with the tests folded in, as the engine folds them (engine/verdicts.py judge):
 * a test beyond its limit asks to act, an instrument past its calibration date asks for the readings again,
 * a test at its limit (or an insulation test voltage outside IEEE 43 Table 1) asks to watch.
 * `judged` is verdict.js judgeReading's answer (null without a basis), `states` sheetStates' answer.
 */
export function withTests(judged, states) {
  if (!judged) return judged;
  const tests = Object.entries(states || {}).filter(([, t]) => t.state);
  const beyond = (names) => tests.some(([k, t]) => names(k) && t.state === "beyond");
  const act = judged.verdict === "act" || beyond((k) => k !== "instruments");
  const retake = judged.verdict === "retake" || beyond((k) => k === "instruments");
  const watch = judged.verdict === "watch" || tests.some(([, t]) => t.state === "at_limit");
  const verdict = act ? "act" : retake ? "retake" : watch ? "watch" : "sound";
  return { ...judged, verdict, tests: Object.fromEntries(tests.map(([k, t]) => [k, t.state])) };
}

// --- the form sections ------------------------------------------------------------------------------
const TESTS = [
  ["insulation", "Insulation resistance", ["insulation_resistance_1min_mohm", "insulation_resistance_10min_mohm", "insulation_test_voltage_v", "winding_temperature_c"],
    ["winding_type", "insulation_class", "winding_made_before_1970"], ["insulation", "polarization_index", "test_voltage"]],
  ["winding", "Winding resistances", ["winding_resistance_l12_ohm", "winding_resistance_l23_ohm", "winding_resistance_l31_ohm"], ["winding_material"], ["winding"]],
  ["overload", "Overload relay", ["overload_setting_a"], ["starter"], ["overload"]],
  ["rotation", "Direction of rotation", [], ["rotation_correct"], ["rotation"]],
];
const LABELS = { insulation: "Insulation", polarization_index: "Polarization index", test_voltage: "Test voltage", winding: "Balance",
  overload: "Setting", rotation: "Rotation", vibration: "Vibration", instruments: "Instruments" };

function selectField(c, value) {
  const id = `sh-${c.name}`;
  const select = h("select", { id, name: c.name, "aria-describedby": `${id}-hint` },
    h("option", { value: "" }, c.default ? `blank (${c.default})` : "not recorded"),
    c.choices.map((x) => h("option", { value: x, selected: x === value || null }, x.replace("_", "-"))));
  return { c, select, el: h("div", { class: "field" }, h("label", { for: id }, c.label), select,
    h("p", { class: "hint", id: `${id}-hint` }, c.help)) };
}

function areaField(name, value) {
  const t = TEXT_FIELDS[name];
  const id = `sh-${name}`;
  const input = h("textarea", { id, name, rows: name === "notes" ? 3 : 3, "aria-describedby": `${id}-err` });
  input.value = value || "";
  const error = h("p", { class: "error", id: `${id}-err`, "aria-live": "polite" });
  return { t, input, error, el: h("div", { class: "field wide" }, h("label", { for: id }, t.label, h("span", { class: "muted" }, " (optional)")),
    input, t.help ? h("p", { class: "hint" }, t.help) : null, error) };
}

/**
 * The sheet's sections for the reading form. ``numberField`` is the form's own number input.
 * Returns {before, after, fields, read(), refresh(motor)}.
 */
export function sheetForm(motor, values, numberField) {
  const nums = Object.fromEntries(READING_TEST_NUMBERS.map((f) => [f.name, numberField(f, values[f.name], "sh")]));
  const choices = Object.fromEntries(Object.values(CHOICE).filter((c) => !("design supply driven_load".split(" ").includes(c.name)))
    .map((c) => [c.name, selectField(c, values[c.name])]));
  const texts = { instruments: areaField("instruments", values.instruments), notes: areaField("notes", values.notes) };
  const lines = {};
  const stateLine = (key) => (lines[key] = h("p", { class: "test-state", dataset: { test: key }, "aria-live": "polite" }));
  const section = (id, legend, numNames, choiceNames, keys, hint) => h("fieldset", { class: "panel sheet-test", id: `test-${id}` },
    h("legend", {}, legend), hint ? h("p", { class: "hint" }, hint) : null,
    h("div", { class: "grid" }, numNames.map((n) => nums[n].el), choiceNames.map((n) => choices[n].el)), keys.map(stateLine));
  const before = [h("h2", { class: "sheet-head" }, "Before energising"),
    h("p", { class: "caution" }, "Isolated tests: the motor isolated, locked off and proved dead; an insulation test puts a high DC voltage on the winding — discharge it after every test. Qualified persons only; local electrical codes and licensed practice prevail."),
    ...TESTS.map(([id, legend, n, c, keys]) => section(id, legend, n, c, keys, id === "rotation" ? "Bumped or first run, uncoupled where running backwards could harm the driven machine." : null)),
    h("h2", { class: "sheet-head" }, "Running")];
  const after = [section("vibration", "Vibration", ["vibration_velocity_mm_s"], ["foundation"], ["vibration"]),
    h("fieldset", { class: "panel sheet-test", id: "test-instruments" }, h("legend", {}, "Instruments and notes"),
      texts.instruments.el, stateLine("instruments"), texts.notes.el)];

  const read = () => {
    const out = {};
    let firstBad = null;
    for (const fld of Object.values(nums)) {
      const r = fld.validate();
      if (r.error && !firstBad) firstBad = fld.input;
      if (r.value != null && !r.error) out[fld.f.name] = r.value;
    }
    for (const { c, select } of Object.values(choices)) {
      const r = parseChoice(c, select.value, READING_TEST_NUMBERS[0].rules);
      if (r.value != null) out[c.name] = r.value;
    }
    for (const [name, t] of Object.entries(texts)) {
      const r = parseText(t.t, t.input.value);
      t.error.textContent = r.error || "";
      if (r.error && !firstBad) firstBad = t.input;
      if (r.value && !r.error) out[name] = r.value;
    }
    // a value that needs another (the declaration's "needs"): named as the server will name it
    for (const f of READING_TEST_NUMBERS) {
      for (const other of f.needs || []) {
        if (out[f.name] != null && out[other] == null) {
          const target = nums[other] || choices[other];
          const msg = `${(NUM[other] || CHOICE[other]).label} is needed with ${f.label.toLowerCase()}.`;
          if (nums[other]) nums[other].error.textContent = msg;
          if (!firstBad) firstBad = target.input || target.select;
        }
      }
    }
    return { out, firstBad };
  };
  const refresh = (out) => {
    const states = sheetStates(motor, out);
    for (const [key, line] of Object.entries(lines)) {
      const s = states[key];
      line.dataset.state = s && s.state ? s.state : "";
      line.replaceChildren(...(s ? [h("span", { class: ["state", s.state || "none"] }, `${LABELS[key]}: ${s.state ? STATE_TEXT[s.state] : "not judged"}`),
        " ", h("span", { class: "provisional-label" }, "provisional"), ` ${s.text}`] : []));
    }
    return states;
  };
  const fields = { ...nums, ...Object.fromEntries(Object.entries(choices).map(([k, c]) => [k, { input: c.select, error: null }])),
    ...Object.fromEntries(Object.entries(texts).map(([k, t]) => [k, { input: t.input, error: t.error }])) };
  return { before, after, fields, read, refresh };
}

// --- the server's states, on a stored or interpreted reading ------------------------------------------
const SERVER_TESTS = [
  ["insulation_state", "Insulation", (r) => `${fmt(r.insulation_resistance_40c_mohm, 2)} MΩ at 40 °C; minimum ${fmt(r.insulation_minimum_mohm, 1)} MΩ (IEEE 43-2013 Table 3)`],
  ["polarization_index_state", "Polarization index", (r) => `PI ${fmt(r.polarization_index, 2)}; minimum ${fmt(r.polarization_index_minimum, 1)} (IEEE 43-2013)`],
  ["insulation_test_voltage_state", "Test voltage", (r) => `IEEE 43-2013 Table 1: ${fmt(r.insulation_test_voltage_min_v, 0)}–${fmt(r.insulation_test_voltage_max_v, 0)} V`],
  ["winding_resistance_state", "Winding balance", (r) => `unbalance ${fmt(r.winding_resistance_unbalance_pct, 2)} %`],
  ["overload_setting_state", "Overload relay", (r) => `${fmt(r.overload_setting_pct, 1)} % of ${fmt(r.overload_relay_current_a, 1)} A; at most ${fmt(r.overload_setting_max_pct, 0)} %`],
  ["rotation_state", "Rotation", () => ""],
  ["vibration_state", "Vibration", (r) => `zone ${r.vibration_zone || "–"}; B/C at ${fmt(r.vibration_zone_bc_mm_s, 1)} mm/s (ISO 10816)`],
  ["instruments_state", "Instruments", (r) => r.instruments_calibration_expired ? `calibration overdue: ${r.instruments_calibration_expired}` : "calibration in date"],
];

/** The server's states of the sheet's tests (null when the result holds none: engine before 1.2.0, no tests). */
export function testsBlock(result) {
  const rows = SERVER_TESTS.filter(([col]) => result[col]);
  if (!rows.length) return null;
  return h("section", { class: "panel", "aria-labelledby": "tests-h", id: "sheet-tests" },
    h("h2", { id: "tests-h" }, "Commissioning tests"),
    h("ul", { class: "tests" }, rows.map(([col, label, detail]) => h("li", { dataset: { test: col } },
      h("span", { class: ["state", result[col]], dataset: { state: result[col] } }, `${label}: ${STATE_TEXT[result[col]]}`), " ", detail(result)))));
}
