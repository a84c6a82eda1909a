// A motor over time (issue 11): its visits with small trend charts drawn here as SVG (offline from the saved
// copy), and each motor's last verdict and last visit for the motor list. The numbers and the change findings
// are the server's (GET /api/v1/motors/{id}/history, GET /api/v1/sites/{id}/overview); nothing is judged here.

import { api, NetworkError } from "./api.js";
import { clear, h, s } from "./dom.js";
import * as outbox from "./outbox.js";
import { routeIsCurrent } from "./router.js";
import { setReachable } from "./shell.js";

const VERDICT_CLASS = { sound: "ok", watch: "warn", retake: "bad", act: "bad" }; // as result.js VERDICTS

/** GET with the saved copy as a fallback offline: {data, cached}. */
async function getSaved(path, key) {
  try {
    const r = await api("GET", path);
    setReachable(true);
    await outbox.cachePut(key, r.data);
    return { data: r.data, cached: false };
  } catch (e) {
    if (!(e instanceof NetworkError)) throw e;
    setReachable(false);
    return { data: (await outbox.cacheGet(key)) || null, cached: true };
  }
}

/** Each motor's last verdict, last visit and overdue state, by motor id (from every site's overview). */
export async function lastVisits() {
  const { data } = await getSaved("/sites", "sites");
  const out = new Map();
  for (const site of (data && data.sites) || []) {
    const { data: o } = await getSaved(`/sites/${site.id}/overview`, `overview-${site.id}`);
    for (const m of (o && o.motors) || []) out.set(m.motor_id, m);
  }
  return out;
}

/** The last-visit line of a motor in the list: verdict word and date, "overdue" when it is. */
export function lastVisitLine(summary) {
  if (!summary || !summary.last_visit) return h("span", { class: "muted last-visit" }, "no visit yet");
  return h("span", { class: "last-visit" },
    summary.verdict ? h("span", { class: ["verdict", "verdict-chip", VERDICT_CLASS[summary.verdict]] }, summary.verdict) : null,
    ` last visit ${summary.last_visit}`,
    summary.overdue ? h("strong", { class: "overdue" }, " · visit overdue") : null);
}

// --- the small charts ---------------------------------------------------------------------------------
const W = 320, H = 110, PAD_L = 40, PAD_R = 8, PAD_T = 10, PAD_B = 22;

function fmtNum(x) {
  return Math.abs(x) >= 100 ? x.toFixed(0) : Math.abs(x) >= 10 ? x.toFixed(1) : x.toFixed(2);
}

/** One series over time as a small line chart: points of visits that have the value, the baseline ringed,
 *  a readings' band drawn as a bar where low/high are given. */
export function trendChart(title, unit, visits, key, lowKey, highKey) {
  const pts = visits.map((v, i) => ({ i, v, y: v[key], lo: lowKey ? v[lowKey] : null, hi: highKey ? v[highKey] : null }))
    .filter((p) => typeof p.y === "number");
  if (!pts.length) return null;
  const t = (v) => Date.parse(v.taken_at.length > 10 ? v.taken_at : v.taken_at + "T00:00:00Z");
  const t0 = Math.min(...pts.map((p) => t(p.v))), t1 = Math.max(...pts.map((p) => t(p.v)));
  const ys = pts.flatMap((p) => [p.y, p.lo, p.hi]).filter((x) => typeof x === "number");
  let y0 = Math.min(...ys), y1 = Math.max(...ys);
  const floor = y0 >= 0 ? 0 : -Infinity;   // a quantity never negative keeps its axis above zero
  if (y1 - y0 < 1e-9) { y0 = Math.max(floor, y0 - 1); y1 += 1; }
  const pad = (y1 - y0) * 0.1; y0 -= pad; y1 += pad;
  const X = (p) => PAD_L + (t1 > t0 ? (t(p.v) - t0) / (t1 - t0) : 0.5) * (W - PAD_L - PAD_R);
  const Y = (y) => PAD_T + (1 - (y - y0) / (y1 - y0)) * (H - PAD_T - PAD_B);
  const line = pts.map((p, k) => `${k ? "L" : "M"}${X(p).toFixed(1)},${Y(p.y).toFixed(1)}`).join(" ");
  const first = pts[0].v.taken_date, last = pts[pts.length - 1].v.taken_date;
  const label = `${title}: ${pts.map((p) => `${p.v.taken_date} ${fmtNum(p.y)}${unit ? " " + unit : ""}`).join(", ")}`;
  return h("figure", { class: "trend" },
    h("figcaption", {}, title, unit ? h("span", { class: "muted" }, ` (${unit})`) : null),
    s("svg", { viewBox: `0 0 ${W} ${H}`, width: W, height: H, role: "img", "aria-label": label, class: "trend-svg" },
      s("line", { x1: PAD_L, y1: H - PAD_B, x2: W - PAD_R, y2: H - PAD_B, class: "axis" }),
      s("line", { x1: PAD_L, y1: PAD_T, x2: PAD_L, y2: H - PAD_B, class: "axis" }),
      s("text", { x: PAD_L - 4, y: Y(y1 - pad) + 4, "text-anchor": "end", class: "tick" }, fmtNum(y1 - pad)),
      s("text", { x: PAD_L - 4, y: Y(y0 + pad) + 4, "text-anchor": "end", class: "tick" }, fmtNum(y0 + pad)),
      s("text", { x: PAD_L, y: H - 6, class: "tick" }, first),
      first !== last ? s("text", { x: W - PAD_R, y: H - 6, "text-anchor": "end", class: "tick" }, last) : null,
      pts.filter((p) => typeof p.lo === "number" && typeof p.hi === "number").map((p) =>
        s("line", { x1: X(p), x2: X(p), y1: Y(p.lo), y2: Y(p.hi), class: "band" })),
      s("path", { d: line, class: "series" }),
      pts.map((p) => s("circle", { cx: X(p), cy: Y(p.y), r: p.v.baseline ? 5 : 3,
        class: ["point", p.v.baseline && "baseline", p.v.changes && p.v.changes.length && "changed"].filter(Boolean).join(" ") },
      s("title", {}, `${p.v.taken_at}: ${fmtNum(p.y)}${unit ? " " + unit : ""}${p.v.baseline ? " (baseline)" : ""}`)))));
}

const CHARTS = [
  ["Load", "% of rated", "load_pct", "load_low_pct", "load_high_pct"],
  ["Current unbalance", "%", "current_unbalance_pct"],
  ["Voltage unbalance", "%", "voltage_unbalance_pct"],
  ["Efficiency", "%", "efficiency_pct"],
  ["Breakdown margin (low end)", "", "breakdown_margin_low"],
  ["Insulation resistance at 40 °C", "MΩ", "insulation_resistance_40c_mohm"],
  ["Polarization index", "", "polarization_index"],
  ["Winding resistance unbalance", "%", "winding_resistance_unbalance_pct"],
  ["Vibration", "mm/s", "vibration_velocity_mm_s"],
  ["Input power", "kW", "input_power_kw"],
];

function visitRow(v) {
  const num = (x, d = 1) => (typeof x === "number" ? x.toFixed(d) : "–");
  return h("tr", { class: [v.superseded_by && "superseded"] },
    h("td", {}, h("a", { href: `#/reading/${v.reading_id}` }, v.taken_at.replace("T", " ").slice(0, 16)),
      v.baseline ? h("span", { class: "baseline-mark" }, " baseline") : null),
    h("td", {}, v.verdict ? h("span", { class: ["verdict", "verdict-chip", VERDICT_CLASS[v.verdict]] }, v.verdict) : "–"),
    h("td", {}, v.review || "not reviewed", v.superseded_by ? " · corrected" : ""),
    h("td", {}, num(v.load_pct), typeof v.load_low_pct === "number" ? ` (${num(v.load_low_pct, 0)}–${num(v.load_high_pct, 0)})` : ""),
    h("td", {}, num(v.current_unbalance_pct, 2), " / ", num(v.voltage_unbalance_pct, 2)),
    h("td", {}, v.changes.length ? h("ul", { class: "changes" }, v.changes.map((c) => h("li", {}, c.text))) : ""));
}

export async function renderMotorHistory(el, idText, seq) {
  const id = Number(idText);
  const { data, cached } = await getSaved(`/motors/${id}/history`, `history-${id}`);
  if (!routeIsCurrent(seq)) return;
  if (!data) {
    clear(el, h("h1", { tabindex: "-1" }, "Motor history"),
      h("p", {}, "This motor's history is not saved on this tablet. Open it once while online."));
    return;
  }
  const visits = data.visits;
  const charts = CHARTS.map(([t, u, k, lo, hi]) => trendChart(t, u, visits, k, lo, hi)).filter(Boolean);
  const latest = [...visits].reverse().find((v) => v.changes.length);
  clear(el,
    h("div", { class: "screen-head" }, h("h1", { tabindex: "-1" }, `${data.tag}: visits`),
      h("a", { class: "btn", href: `#/motor/${id}` }, "New reading")),
    h("p", { class: "muted" }, [data.site, data.location, data.description].filter(Boolean).join(" · ")),
    h("p", { id: "visit-due", class: data.overdue ? "overdue" : null },
      data.last_visit ? `Last visit ${data.last_visit}; next due ${data.next_visit_due} (every ${data.visit_interval_months} months)` : "No visit yet",
      data.overdue ? ": overdue." : ".", cached ? " (saved copy: offline)" : ""),
    data.baseline_reading_id ? null : h("p", { class: "muted" }, "No baseline yet: the first reading a supervisor accepts becomes it."),
    latest ? h("div", { class: "panel", id: "latest-changes" }, h("h2", {}, `Changes since the baseline, at the visit of ${latest.taken_date}`),
      h("ul", {}, latest.changes.map((c) => h("li", {}, c.text, c.caution ? h("p", { class: "caution" }, c.caution) : null)))) : null,
    h("div", { class: "trends", id: "trends" }, charts),
    h("h2", {}, `${data.count} visits`),
    h("div", { class: "table-wrap" }, h("table", { class: "visits", id: "visits" },
      h("thead", {}, h("tr", {}, ["Taken", "Verdict", "Review", "Load %", "Current / voltage unbalance %", "Changes from baseline"].map((x) => h("th", { scope: "col" }, x)))),
      h("tbody", {}, visits.map(visitRow)))));
}
