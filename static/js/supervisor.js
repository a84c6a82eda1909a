// Supervisor screens: the day's log with filters, summary and sorting; review; CSV record.

import { api, ApiError, NetworkError } from "./api.js";
import { clear, fmt, h, localDate, s, showTime } from "./dom.js";
import { FIELD, NAMEPLATE_CHOICES, NAMEPLATE_NUMBERS, READING_CHOICES, READING_NUMBERS, READING_TEST_NUMBERS, TEXT_FIELDS } from "./fields.js";
import { FLAG_WORDS, LIMITS, reviewWord } from "./result.js";
import { go, routeIsCurrent } from "./router.js";
import { toast } from "./shell.js";

const FLAGS = Object.keys(FLAG_WORDS);
const COLUMNS = [
  { key: "taken_at", label: "Taken", get: (r) => r.taken_at },
  { key: "site", label: "Site", get: (r) => r.site },
  { key: "tag", label: "Tag", get: (r) => r.tag },
  { key: "technician", label: "Technician", get: (r) => r.technician },
  { key: "load_pct", label: "Load %", num: true, get: (r) => r.result.load_pct },
  { key: "flags", label: "Findings", get: (r) => (r.result.flags || []).length },
  { key: "review", label: "Review", get: (r) => (r.review ? r.review.decision : "") },
];

const state = { filters: null, sort: { key: "taken_at", dir: 1 } };

function histogram(readings) {
  const W = 620, H = 210, left = 36, bottom = 176, binW = 10, top = 150;
  const bins = new Array(top / binW + 1).fill(0); // last bin: 150 % and above
  let none = 0;
  for (const r of readings) {
    const p = r.result.load_pct;
    if (p == null) { none += 1; continue; }
    bins[Math.min(Math.floor(Math.max(p, 0) / binW), bins.length - 1)] += 1;
  }
  const peak = Math.max(1, ...bins);
  const bw = (W - left - 10) / bins.length;
  const y = (n) => bottom - (136 * n) / peak;
  const parts = [s("title", {}, "Load distribution of the day's readings")];
  bins.forEach((n, i) => {
    if (n) parts.push(s("rect", { class: "bar", x: left + i * bw + 1, y: y(n), width: bw - 2, height: bottom - y(n) },
      s("title", {}, `${i * binW}${i === bins.length - 1 ? "+" : `–${(i + 1) * binW}`} %: ${n}`)));
    if (n) parts.push(s("text", { x: left + (i + 0.5) * bw, y: y(n) - 4, "text-anchor": "middle" }, String(n)));
    if (i % 3 === 0) parts.push(s("text", { x: left + i * bw, y: bottom + 16, "text-anchor": "middle" }, `${i * binW}`));
  });
  parts.push(s("line", { class: "axis", x1: left, x2: W - 10, y1: bottom, y2: bottom }));
  for (const lim of [LIMITS.underloaded_pct, LIMITS.overloaded_pct]) {
    const x = left + (lim / binW) * bw;
    parts.push(s("line", { class: "limit", x1: x, x2: x, y1: 4, y2: bottom }));
  }
  parts.push(s("text", { x: left + (LIMITS.underloaded_pct / binW) * bw - 4, y: 14, "text-anchor": "end" }, `under ${LIMITS.underloaded_pct} %`));
  parts.push(s("text", { x: left + (LIMITS.overloaded_pct / binW) * bw + 4, y: 14 }, `over ${LIMITS.overloaded_pct} %`));
  parts.push(s("text", { x: W - 10, y: bottom + 32, "text-anchor": "end" }, "load [% of rated output]"));
  const label = `Load distribution: ${bins.map((n, i) => (n ? `${n} at ${i * binW} %` : null)).filter(Boolean).join(", ") || "no readings"}${none ? `; ${none} without a load estimate` : ""}`;
  return s("svg", { class: "histogram", viewBox: `0 0 ${W} ${H}`, role: "img", "aria-label": label }, parts);
}

function summary(readings) {
  const counts = {};
  for (const r of readings) for (const f of r.result.flags || []) counts[f] = (counts[f] || 0) + 1;
  const reviewed = readings.filter((r) => r.review).length;
  return h("section", { class: "panel", "aria-labelledby": "sum-h", id: "summary" },
    h("h2", { id: "sum-h" }, "Summary"),
    h("p", {}, `${readings.length} reading(s), ${reviewed} reviewed, ${readings.length - reviewed} to review.`),
    h("ul", { class: "chips", "aria-label": "Readings by finding" },
      Object.keys(counts).length ? FLAGS.filter((f) => counts[f]).map((f) => h("li", { dataset: { flag: f } }, `${FLAG_WORDS[f]}: ${counts[f]}`))
        : h("li", {}, "no findings")),
    histogram(readings));
}

function table(readings) {
  const { key, dir } = state.sort;
  const col = COLUMNS.find((c) => c.key === key);
  const rows = readings.slice().sort((a, b) => {
    const x = col.get(a), y = col.get(b);
    if (x == null && y == null) return 0;
    if (x == null) return 1;
    if (y == null) return -1;
    return (x < y ? -1 : x > y ? 1 : 0) * dir;
  });
  const head = h("tr", {}, COLUMNS.map((c) => h("th", { scope: "col", class: c.num ? "num" : null,
    "aria-sort": c.key === key ? (dir > 0 ? "ascending" : "descending") : "none" },
    h("button", { type: "button", dataset: { sort: c.key }, onclick: () => {
      state.sort = { key: c.key, dir: c.key === key ? -dir : 1 };
      document.getElementById("log-table").replaceWith(table(readings));
    } }, c.label))));
  const body = rows.map((r) => {
    const tr = h("tr", { dataset: { id: r.id } },
      h("td", {}, showTime(r.taken_at)),
      h("td", {}, r.site),
      h("td", {}, h("a", { href: `#/reading/${r.id}` }, r.tag)),
      h("td", {}, r.technician_name || r.technician),
      h("td", { class: "num" }, fmt(r.result.load_pct, 0)),
      h("td", {}, (r.result.flags || []).map((f) => FLAG_WORDS[f] || f).join(", ") || "–"),
      h("td", {}, r.review ? h("span", { class: ["state", r.review.decision] }, reviewWord(r.review.decision)) : h("span", { class: "state none" }, "to review")));
    tr.addEventListener("click", (ev) => { if (ev.target.tagName !== "A") go(`#/reading/${r.id}`); });
    return tr;
  });
  return h("div", { class: "table-wrap", id: "log-table" },
    h("table", {}, h("caption", { class: "sr-only" }, "Readings of the day; column headers sort"), h("thead", {}, head), h("tbody", {}, body)));
}

export async function renderLog(el, _arg, seq) {
  const f = state.filters || { date: localDate(), site: "", technician: "", flag: "" };
  let motors = [];
  try { motors = (await api("GET", "/motors")).data.motors; } catch { /* the site list is a convenience */ }
  const sites = [...new Set(motors.map((m) => m.site))].sort();
  const date = h("input", { id: "flt-date", type: "date", value: f.date, required: true });
  const site = h("select", { id: "flt-site" }, h("option", { value: "" }, "All sites"), sites.map((x) => h("option", { value: x, selected: x === f.site || null }, x)));
  const techn = h("input", { id: "flt-tech", value: f.technician, autocomplete: "off", placeholder: "user name" });
  const flag = h("select", { id: "flt-flag" }, h("option", { value: "" }, "Any"), FLAGS.map((x) => h("option", { value: x, selected: x === f.flag || null }, FLAG_WORDS[x])));
  const out = h("div", { id: "log-out" });
  const csv = h("a", { class: "btn btn-main", id: "csv", download: "" }, "Download CSV record");
  const load = async () => {
    state.filters = { date: date.value, site: site.value, technician: techn.value.trim(), flag: flag.value };
    const q = new URLSearchParams(Object.entries(state.filters).filter(([, v]) => v));
    const eq = new URLSearchParams(Object.entries({ date: date.value, site: site.value }).filter(([, v]) => v));
    csv.href = `/api/v1/export.csv?${eq}`;
    clear(out, h("p", { class: "muted", role: "status" }, "Loading…"));
    try {
      const r = await api("GET", `/readings?${q}`);
      if (!routeIsCurrent(seq)) return;
      clear(out, summary(r.data.readings), r.data.readings.length ? table(r.data.readings) : h("p", { class: "panel" }, "No readings for these filters."));
    } catch (e) {
      clear(out, h("p", { class: "error", role: "alert" }, e instanceof NetworkError ? "Offline: the day's log needs the network." : e.message));
    }
  };
  const form = h("form", { class: "panel filters", id: "filters", onsubmit: (ev) => { ev.preventDefault(); load(); } },
    h("div", { class: "field" }, h("label", { for: "flt-date" }, "Date"), date),
    h("div", { class: "field" }, h("label", { for: "flt-site" }, "Site"), site),
    h("div", { class: "field" }, h("label", { for: "flt-tech" }, "Technician"), techn),
    h("div", { class: "field" }, h("label", { for: "flt-flag" }, "Finding"), flag),
    h("div", { class: "field" }, h("button", { class: "btn", type: "submit" }, "Show")));
  for (const c of [date, site, flag]) c.addEventListener("change", load);
  clear(el, h("h1", { tabindex: "-1" }, "Day log"), form, h("div", { class: "actions" }, csv,
    h("span", { class: "muted" }, "The commissioning record of the date and site chosen, one row per reading.")), out);
  await load();
}

// --- pieces of the reading view ---------------------------------------------------------------------------
export function reviewForm(reading, done) {
  const err = h("p", { class: "error", role: "alert", id: "review-error" });
  const comment = h("textarea", { id: "review-comment", maxlength: 2000, "aria-describedby": "review-hint review-error" });
  const choices = [["accepted", "Accept"], ["retake", "Ask for a retake"], ["rejected", "Reject"]];
  const form = h("form", { class: "panel", id: "review-form", novalidate: true },
    h("h2", {}, "Review"),
    h("fieldset", { class: "choice-row" }, h("legend", {}, "Decision"),
      choices.map(([v, label], i) => h("label", {}, h("input", { type: "radio", name: "decision", value: v, checked: i === 0 || null }), label))),
    h("div", { class: "field" }, h("label", { for: "review-comment" }, "Comment"), comment,
      h("p", { class: "hint", id: "review-hint" }, "Needed for a retake or a rejection; the technician sees it.")),
    err, h("div", { class: "actions" }, h("button", { class: "btn btn-main", type: "submit", id: "review-submit" }, "Record review")));
  form.addEventListener("submit", async (ev) => {
    ev.preventDefault();
    err.textContent = "";
    const decision = form.querySelector("input[name=decision]:checked").value;
    try {
      await api("POST", `/readings/${reading.id}/review`, { decision, comment: comment.value.trim() });
      toast(`Review recorded: ${reviewWord(decision)}.`);
      done();
    } catch (e) {
      err.textContent = e instanceof NetworkError ? "Offline: a review needs the network." : e.message;
      if (e instanceof ApiError && e.field === "comment") comment.focus();
    }
  });
  return form;
}

export function inputsBlock(reading, motor) {
  const rev = motor && motor.revisions ? motor.revisions.find((r) => r.revision === reading.motor_revision) : null;
  const np = rev || motor || {};
  const row = (label, value, unit) => h("tr", {}, h("th", { scope: "row" }, label), h("td", {}, value == null ? "–" : `${value}${unit ? ` ${unit}` : ""}`));
  return h("section", { class: "panel", "aria-labelledby": "inputs-h" }, h("h2", { id: "inputs-h" }, "Inputs"),
    h("table", { class: "kv" }, h("caption", { class: "sr-only" }, "Readings as entered"),
      h("tbody", {}, READING_NUMBERS.map((f) => row(f.label, reading.inputs[f.name], f.unit)))),
    // the commissioning sheet's tests, where any was recorded (readings before engine 1.2.0 have none)
    [...READING_TEST_NUMBERS, ...READING_CHOICES, TEXT_FIELDS.instruments, TEXT_FIELDS.notes].some((f) => reading.inputs[f.name] != null)
      ? [h("h3", {}, "Commissioning tests as entered"), h("table", { class: "kv", id: "sheet-inputs" },
        h("caption", { class: "sr-only" }, "Tests as entered"),
        h("tbody", {}, READING_TEST_NUMBERS.map((f) => row(f.label, reading.inputs[f.name], f.unit)),
          READING_CHOICES.map((c) => row(c.label, reading.inputs[c.name])),
          [TEXT_FIELDS.instruments, TEXT_FIELDS.notes].map((t) => row(t.label, reading.inputs[t.name]))))]
      : null,
    h("h3", {}, `Nameplate (revision ${reading.motor_revision})`),
    h("table", { class: "kv" }, h("caption", { class: "sr-only" }, "Nameplate used"),
      h("tbody", {}, NAMEPLATE_NUMBERS.filter((f) => !(f.name.startsWith("rated_power_") && np[f.name] == null))
        .map((f) => row(f.label, np[f.name], f.unit)),
        NAMEPLATE_CHOICES.map((c) => row(c.label, np[c.name] || "typical")))));
}

export function historyBlock(reading, motor) {
  const items = [];
  if (reading.supersedes) items.push(h("li", {}, "Replaces ", h("a", { href: `#/reading/${reading.supersedes}` }, `reading ${reading.supersedes}`)));
  if (reading.superseded_by) items.push(h("li", {}, "Replaced by ", h("a", { href: `#/reading/${reading.superseded_by}` }, `reading ${reading.superseded_by}`)));
  items.push(h("li", {}, `Received by the server ${reading.received_at.replace("T", " ").slice(0, 19)} UTC; engine ${reading.engine_version}`));
  // every review when the detail carries them (GET /readings/{id}), else the latest one
  const reviews = Array.isArray(reading.reviews) ? reading.reviews : (reading.review ? [reading.review] : []);
  for (const rv of reviews) {
    items.push(h("li", {}, `Reviewed ${rv.reviewed_at.replace("T", " ").slice(0, 16)} UTC by ${rv.reviewer}: ${reviewWord(rv.decision)}`
      + (rv.comment ? ` (${rv.comment})` : "")));
  }
  if (motor) items.push(h("li", {}, `Nameplate revision ${reading.motor_revision} of ${motor.revision}${motor.revision > reading.motor_revision ? " (the nameplate was edited since)" : ""}`));
  return h("section", { class: "panel", "aria-labelledby": "hist-h" }, h("h2", { id: "hist-h" }, "History"), h("ul", { class: "history" }, items));
}
