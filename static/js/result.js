// A reading's result, drawn so that a technician reads it in five seconds: the load and its band
// against the limits, the findings as sentences with their cautions, supply quality, margins.

import { fmt, h, qty, s, times } from "./dom.js";
import { testsBlock } from "./sheet.js";

// The thresholds the bar is drawn with: the server's defaults (server/physics/flags.py, Thresholds)
// until a session brings the ones in force (kept for offline use); the flags come from the server.
const THRESHOLDS_KEY = "slipwise.thresholds";
export const LIMITS = { underloaded_pct: 40, overloaded_pct: 100 };
try {
  Object.assign(LIMITS, JSON.parse(localStorage.getItem(THRESHOLDS_KEY) || "{}"));
} catch { /* a damaged entry: keep the defaults */ }

/** Take the thresholds a session reported (GET/POST /api/v1/session). */
export function useThresholds(t) {
  if (!t || typeof t.underloaded_pct !== "number" || typeof t.overloaded_pct !== "number") return;
  LIMITS.underloaded_pct = t.underloaded_pct;
  LIMITS.overloaded_pct = t.overloaded_pct;
  localStorage.setItem(THRESHOLDS_KEY, JSON.stringify(LIMITS));
}

export const FLAG_WORDS = {
  underloaded: "Underloaded",
  overloaded: "Overloaded",
  over_service_factor: "Above the service factor",
  near_breakdown: "Close to breakdown torque",
  voltage_unbalance: "Voltage unbalance",
  current_unbalance: "Current unbalance",
  supply_out_of_tolerance: "Supply outside tolerance",
  speed_above_synchronous: "Speed above synchronous",
  readings_inconsistent: "Readings contradict each other",
  starting_torque_low: "Starting torque margin low",
  insulation_low: "Insulation resistance low",
  polarization_index_low: "Polarization index low",
  insulation_test_voltage: "Insulation test voltage outside the table",
  winding_resistance_unbalance: "Winding resistances unbalanced",
  overload_setting_high: "Overload relay set too high",
  overload_setting_low: "Overload relay set too low",
  vibration_high: "Vibration high",
  rotation_wrong: "Wrong direction of rotation",
  instrument_calibration_expired: "Instrument out of calibration",
  right_size_candidate: "A smaller or better motor would save energy",   // a note (issue 11), not a flag
};
/** A supervisor's review decision in words. */
export function reviewWord(d) {
  return { accepted: "accepted", retake: "retake asked", rejected: "rejected" }[d] || d;
}

const SEVERE = new Set(["overloaded", "over_service_factor", "near_breakdown", "readings_inconsistent", "speed_above_synchronous",
  "insulation_low", "polarization_index_low", "rotation_wrong", "overload_setting_high", "vibration_high",
  "winding_resistance_unbalance"]);

export const SAFETY_NOTE = "These results support a qualified person's judgement; they do not replace it. Before any work on "
  + "the motor or its supply, isolate, lock off and prove dead. Local electrical codes and licensed practice prevail.";

/** The server's verdict words (engine/verdicts.py), their look and what each asks of the technician. */
const VERDICTS = {
  sound: { cls: "ok", text: "Sound", meaning: "every judged quantity is clear of its limit" },
  watch: { cls: "warn", text: "Watch", meaning: "something is at the limit (its band straddles it), or the motor is underloaded" },
  act: { cls: "bad", text: "Act", meaning: "a safety or supply quantity is beyond its limit: see the findings" },
  retake: { cls: "bad", text: "Retake", meaning: "the readings contradict each other and cannot be judged" },
};

/** The reading's verdict: the server's word, or for a result stored before verdicts one read from its flags. */
export function verdict(result) {
  let word = result.verdict;
  if (!VERDICTS[word]) {
    const flags = new Set(result.flags || []);
    if ([...flags].some((f) => f !== "underloaded" && f !== "readings_inconsistent")) word = "act";
    else if (flags.has("readings_inconsistent")) word = "retake";
    else word = flags.size ? "watch" : "sound";
  }
  return { word, ...VERDICTS[word] };
}

/** The load bar: zones underloaded / normal / overloaded, the band, the estimate. */
export function loadBar({ load, low, high, serviceFactor = 1, label }) {
  // about one user unit per CSS pixel, so the labels stay readable from a phone to a desktop
  const W = Math.round(Math.min(Math.max(window.innerWidth - 90, 300), 820)), H = 92, x0 = 16, x1 = W - 16;
  const top = Math.max(150, (high ?? 0) + 10, 100 * serviceFactor + 20);
  const X = (p) => x0 + ((x1 - x0) * Math.min(Math.max(p, 0), top)) / top;
  const under = LIMITS.underloaded_pct, over = LIMITS.overloaded_pct;
  const parts = [
    s("title", {}, label),
    s("rect", { class: "z-under", x: X(0), y: 24, width: X(under) - X(0), height: 30 }),
    s("rect", { class: "z-ok", x: X(under), y: 24, width: X(over) - X(under), height: 30 }),
    s("rect", { class: "z-over", x: X(over), y: 24, width: X(top) - X(over), height: 30 }),
  ];
  const narrow = W < 420;
  for (const [p, text] of [[0, "0"], [under, narrow ? `${under}` : `${under} % under`], [over, narrow ? `${over} rated` : `${over} % rated`]]) {
    parts.push(s("line", { class: "tick", x1: X(p), x2: X(p), y1: 20, y2: 58 }));
    parts.push(s("text", { x: X(p), y: 74, "text-anchor": p === 0 ? "start" : "middle" }, text));
  }
  if (serviceFactor > 1) {
    const p = 100 * serviceFactor;
    parts.push(s("line", { class: "tick", x1: X(p), x2: X(p), y1: 20, y2: 58, "stroke-dasharray": "4 3" }));
    parts.push(s("text", { x: X(p), y: 88, "text-anchor": "middle" }, `SF ${serviceFactor}`));
  }
  parts.push(s("text", { x: X(top), y: 74, "text-anchor": "end" }, `${top.toFixed(0)} %`));
  if (low != null && high != null) {
    parts.push(s("rect", { class: "band", x: X(low), y: 29, width: Math.max(X(high) - X(low), 2), height: 20, rx: 3 }));
  }
  if (load != null) {
    parts.push(s("polygon", { class: "mark", points: `${X(load) - 8},6 ${X(load) + 8},6 ${X(load)},22` }));
    parts.push(s("rect", { class: "mark", x: X(load) - 1.5, y: 22, width: 3, height: 34 }));
  }
  return s("svg", { class: "loadbar", viewBox: `0 0 ${W} ${H}`, role: "img", "aria-label": label }, parts);
}

function fact(term, value, extra, key) {
  return h("div", {}, h("dt", {}, term),
    h("dd", { dataset: key ? { key } : undefined }, value, extra ? h("span", { class: "muted" }, " ", extra) : null));
}

export function findingsList(findings) {
  if (!findings || !findings.length) return h("p", {}, "No findings: nothing outside the limits.");
  // a caution shared by several findings is printed once, under the first that carries it: repeated under
  // every finding it buried the findings themselves
  const said = new Set();
  return h("ul", { class: "findings" }, findings.map((f) => {
    const caution = f.caution && !said.has(f.caution) ? f.caution : null;
    if (caution) said.add(caution);
    return h("li", { class: ["finding", f.state !== "at_limit" && SEVERE.has(f.flag) && "severe"], dataset: { flag: f.flag } },
      h("h3", {}, (f.state === "at_limit" ? "At the limit: " : "") + (FLAG_WORDS[f.flag] || f.flag)),
      h("p", {}, f.text),
      caution ? h("p", { class: "caution" }, caution) : null);
  }));
}

/** The server's interpretation of a stored reading. */
export function resultBlocks(result, { serviceFactor = 1, onRetake } = {}) {
  const v = verdict(result);
  const flags = new Set(result.flags || []);
  const band = result.load_low_pct != null ? `band ${fmt(result.load_low_pct, 0)}–${fmt(result.load_high_pct, 0)} %` : "no band";
  const label = `Load ${fmt(result.load_pct, 0)} % of rated output, ${band}; underloaded below ${LIMITS.underloaded_pct} %, overloaded above ${LIMITS.overloaded_pct} %`;
  const out = [];
  // the verdict first and largest: the one word a technician acts on
  out.push(h("section", { class: "panel verdict-panel", "aria-labelledby": "verdict" },
    h("p", { class: "verdict-head" },
      h("span", { class: ["verdict", "verdict-word", v.cls], id: "verdict", dataset: { verdict: v.word } }, v.text),
      h("span", { class: "verdict-meaning" }, v.meaning))));
  out.push(h("section", { class: "panel", "aria-labelledby": "load-h" },
    h("h2", { id: "load-h" }, "Load"),
    h("div", { class: "result-head" },
      h("span", { class: "big", id: "load-value" }, result.load_pct == null ? "–" : `${fmt(result.load_pct, 0)} %`),
      h("span", {}, "of rated output, ", band)),
    loadBar({ load: result.load_pct, low: result.load_low_pct, high: result.load_high_pct, serviceFactor, label }),
    h("dl", { class: "facts" },
      fact("Torque", qty(result.torque_pct, 0, "%"), "of rated"),
      fact("Output", qty(result.output_kw, 1, "kW")),
      fact("Slip", qty(result.slip_pct, 2, "%"), qty(result.slip_rpm, 0, "rpm")),
      fact("Breakdown margin", times(result.breakdown_margin),
        result.breakdown_margin_low != null ? `at least ${times(result.breakdown_margin_low)}; breakdown ÷ present torque` : "breakdown ÷ present torque"),
      fact("Efficiency", qty(result.efficiency_pct, 1, "%"), result.efficiency_low_pct != null ? `${fmt(result.efficiency_low_pct, 1)}–${fmt(result.efficiency_high_pct, 1)} %` : ""),
      fact("Efficiency class", result.efficiency_class || "–", result.efficiency_class ? "at the rated efficiency" : "no rated efficiency given"))));
  if (flags.has("readings_inconsistent")) {
    const f = (result.findings || []).find((x) => x.flag === "readings_inconsistent");
    out.push(h("section", { class: "panel retake", "aria-labelledby": "retake-h" },
      h("h2", { id: "retake-h" }, "Take the readings again"),
      h("p", {}, f ? f.text : "The load methods disagree beyond their bands."),
      onRetake ? h("button", { class: "btn btn-main", type: "button", id: "take-again", onclick: onRetake }, "Take again") : null));
  }
  out.push(h("section", { class: "panel", "aria-labelledby": "find-h" },
    h("h2", { id: "find-h" }, "Findings"), findingsList(result.findings)));
  const tests = testsBlock(result);
  if (tests) out.push(tests);
  out.push(h("section", { class: "panel", "aria-labelledby": "supply-h" },
    h("h2", { id: "supply-h" }, "Supply quality"),
    h("dl", { class: "facts" },
      fact("Voltage unbalance", qty(result.voltage_unbalance_pct, 2, "%"), "NEMA max. deviation"),
      fact("Voltage unbalance factor", qty(result.voltage_unbalance_factor_pct, 2, "%"), "IEC negative sequence"),
      fact("Current unbalance", qty(result.current_unbalance_pct, 1, "%"), "NEMA max. deviation"),
      fact("Derating factor", fmt(result.derating_factor, 2), "NEMA MG 1"),
      fact("Voltage deviation", qty(result.voltage_deviation_pct, 1, "%")),
      fact("Frequency deviation", qty(result.frequency_deviation_pct, 1, "%")),
      fact("Supply zone", result.supply_zone || "–", "IEC 60034-1"))));
  // issue 11: energy and running cost; right-sizing where the server proposes it
  if (result.input_power_kw != null) {
    const range = result.input_power_low_kw != null ? `${fmt(result.input_power_low_kw, 1)}–${fmt(result.input_power_high_kw, 1)} kW` : "";
    out.push(h("section", { class: "panel", "aria-labelledby": "energy-h", id: "energy" },
      h("h2", { id: "energy-h" }, "Energy and cost"),
      h("dl", { class: "facts" },
        fact("Input power", `${fmt(result.input_power_kw, 1)} kW`, range, "input_power_kw"),
        fact("Energy a year", result.annual_energy_kwh == null ? "– (no running hours)" : `${fmt(result.annual_energy_kwh, 0)} kWh`, "", "annual_energy_kwh"),
        fact("Cost a year", result.annual_energy_cost == null ? (result.annual_energy_kwh == null ? "– (no running hours)" : "– (no energy price)") : fmt(result.annual_energy_cost, 0), "in the price's currency", "annual_energy_cost"),
        result.right_size_rated_kw != null ? fact("Right-sized motor", `${result.right_size_rated_kw} kW`,
          `IE3 ${fmt(result.right_size_efficiency_pct, 1)} %`, "right_size_rated_kw") : null,
        result.right_size_rated_kw != null ? fact("Saving a year", result.right_size_savings_kwh == null ? "– (no running hours)" : `${fmt(result.right_size_savings_kwh, 0)} kWh`, "", "right_size_savings_kwh") : null)));
  }
  out.push(h("section", { class: "panel", "aria-labelledby": "methods-h" },
    h("h2", { id: "methods-h" }, "Load by method"),
    h("dl", { class: "facts" },
      fact("Slip method", qty(result.load_slip_pct, 0, "%")),
      fact("Current method", qty(result.load_current_pct, 0, "%")),
      fact("Input-power method", qty(result.load_power_pct, 0, "%")),
      fact("Synchronous speed", qty(result.sync_speed_rpm, 0, "rpm"), `${result.poles ?? "–"} poles`),
      // a driven machine that needs no breakaway torque (a centrifugal pump or fan) is not judged on it: not shown
      result.starting_state ? fact("Starting margin", times(result.starting_margin), "locked-rotor ÷ breakaway torque") : null,
      fact("Operating side", result.operating_side || "–"))));
  return out;
}

/**
 * The result worked out on this device (static/js/provisional.js, verdict.js) before the server's: with the
 * motor's provisional basis it carries the verdict and its band by the engine's rules; without one, the
 * slip and unbalance alone. The heading says "provisional" once, as its label.
 */
export function provisionalBlock(p, heading = "Result on this device") {
  const j = p.judged;
  const v = j ? verdict(j) : null;
  const limits = j ? j.limit_flags.filter((f) => !j.flags.includes(f)) : [];
  const band = j && j.load_low_pct != null ? `band ${fmt(j.load_low_pct, 0)}–${fmt(j.load_high_pct, 0)} %` : "no band";
  const why = p.has_basis ? "No provisional verdict yet: it needs the frequency, the speed, a current and (on mains) a voltage."
    : p.basis_refused ? "No provisional verdict for this motor: the server could not fit a motor model to its nameplate. Check the nameplate."
      : "No provisional verdict: this tablet holds no nameplate data worked out by the server for this motor. Open the motor list once while online.";
  return h("section", { class: "panel", "aria-labelledby": "prov-h", id: "provisional" },
    h("h2", { id: "prov-h" }, heading, " ", h("span", { class: "provisional-label" }, "provisional")),
    j ? h("p", { class: "verdict-head" },
      h("span", { class: ["verdict", v.cls], id: "prov-verdict", dataset: { verdict: v.word } }, v.text),
      h("span", { class: "verdict-meaning" }, v.meaning)) : h("p", { id: "prov-no-verdict" }, why),
    j ? h("p", { id: "prov-load" }, h("strong", {}, `Load ${qty(j.load_pct, 0, "%")}`), " of rated output, ", band) : null,
    j && (j.flags.length || limits.length) ? h("ul", { class: "findings", id: "prov-flags" },
      j.flags.map((f) => h("li", { dataset: { flag: f, state: "beyond" } }, FLAG_WORDS[f] || f)),
      limits.map((f) => h("li", { dataset: { flag: f, state: "at_limit" } }, "At the limit: ", FLAG_WORDS[f] || f))) : null,
    h("dl", { class: "facts" },
      j ? fact("Breakdown margin", times(j.breakdown_margin), j.breakdown_margin_low != null ? `at least ${times(j.breakdown_margin_low)}` : "", "breakdown_margin") : null,
      j ? fact("Supply zone", j.supply_zone || "–", "IEC 60034-1", "supply_zone") : null,
      fact("Slip-method load", p.load_slip_pct == null ? "–" : `${fmt(p.load_slip_pct, 1)} %`, "of rated output", "load_slip_pct"),
      fact("Slip", p.slip_pct == null ? "–" : `${fmt(p.slip_pct, 2)} %`, p.slip_rpm == null ? "" : `${fmt(p.slip_rpm, 1)} rpm`, "slip_pct"),
      fact("Synchronous speed", p.sync_speed_rpm == null ? "–" : `${fmt(p.sync_speed_rpm, 0)} rpm`, p.poles ? `${p.poles} poles` : "", "sync_speed_rpm"),
      fact("Voltage unbalance", p.voltage_unbalance_pct == null ? "–" : `${fmt(p.voltage_unbalance_pct, 2)} %`, "NEMA max. deviation", "voltage_unbalance_pct"),
      fact("Current unbalance", p.current_unbalance_pct == null ? "–" : `${fmt(p.current_unbalance_pct, 1)} %`, "NEMA max. deviation", "current_unbalance_pct")),
    h("p", { class: "muted" }, j
      ? "Worked out on this device by the server's rules, from this motor's nameplate data saved with the motor list. The server's result replaces it when the reading is stored."
      : "Computed on this device from the nameplate and the readings. The server's result replaces it when the reading is stored."),
    p.notes && p.notes.length ? h("ul", {}, p.notes.map((n) => h("li", {}, n))) : null);
}

/**
 * What the server's stored result says against the provisional verdict shown before it, in words:
 * "The server confirms: watch." or "The server's verdict differs: act — see why" (a link to the reading).
 */
export function serverVerdictNote(provisionalWord, reading) {
  const server = verdict(reading.result);
  const same = provisionalWord === server.word;
  const link = h("a", { href: `#/reading/${reading.id}`, id: "see-why" }, same ? "Open the stored reading" : "see why");
  return h("section", { class: ["panel", same ? null : "retake"], id: "verdict-change", role: "status",
    dataset: { changed: provisionalWord ? String(!same) : "unknown" } },
  h("h2", {}, "The server's verdict"),
  provisionalWord
    ? h("p", { class: "verdict-head" }, same ? "The server confirms: " : "The server's verdict differs: ",
      h("span", { class: ["verdict", server.cls], dataset: { verdict: server.word } }, server.text),
      same ? " " : " — ", link, same ? null : ` (this device said ${VERDICTS[provisionalWord].text.toLowerCase()}).`)
    : h("p", { class: "verdict-head" }, "The server's verdict: ",
      h("span", { class: ["verdict", server.cls], dataset: { verdict: server.word } }, server.text), " ", link));
}
