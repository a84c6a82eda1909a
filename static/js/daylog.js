// The supervisor's day log: filters, summary and sorting, accepting a run of clean readings, the CSV
// record. It draws from the lean listing (GET /readings/listing, paged by `next`); a reading's whole record
// is fetched when its row is opened (#/reading/{id}). A desk screen that needs the network: loaded when
// opened, not precached (NETWORK_ONLY in sw.js); the reading view's pieces stay in supervisor.js.

import { api, NetworkError } from "./api.js";
import { clear, fmt, h, localDate, s, showTime } from "./dom.js";
import { FLAG_WORDS, LIMITS, reviewWord, verdict } from "./result.js";
import { go, routeIsCurrent } from "./router.js";
import { toast } from "./shell.js";
import { state } from "./supervisor.js";

const FLAGS = Object.keys(FLAG_WORDS);
const COLUMNS = [
  // by the instant, not the text: readings of a -06:00 and a +01:00 site interleave in the order taken
  { key: "taken_at", label: "Taken", get: (r) => Date.parse(r.taken_at) },
  { key: "verdict", label: "Verdict", get: (r) => ["sound", "watch", "retake", "act"].indexOf(verdict(r).word) },
  { key: "site", label: "Site", get: (r) => r.site },
  { key: "tag", label: "Tag", get: (r) => r.tag },
  { key: "technician", label: "Technician", get: (r) => r.technician },
  { key: "load_pct", label: "Load %", num: true, get: (r) => r.load_pct },
  { key: "flags", label: "Findings", get: (r) => r.flags.length },
  { key: "review", label: "Review", get: (r) => r.review_decision || "" },
];


function histogram(readings) {
  const W = 620, H = 210, left = 36, bottom = 176, binW = 10, top = 150;
  const bins = new Array(top / binW + 1).fill(0); // last bin: 150 % and above
  let none = 0;
  for (const r of readings) {
    const p = r.load_pct;
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
  for (const r of readings) for (const f of r.flags) counts[f] = (counts[f] || 0) + 1;
  const reviewed = readings.filter((r) => r.review_decision).length;
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
  const head = h("tr", {}, h("th", { scope: "col" }, h("span", { class: "sr-only" }, "Select")), COLUMNS.map((c) => h("th", { scope: "col", class: c.num ? "num" : null,
    "aria-sort": c.key === key ? (dir > 0 ? "ascending" : "descending") : "none" },
    h("button", { type: "button", dataset: { sort: c.key }, onclick: () => {
      state.sort = { key: c.key, dir: c.key === key ? -dir : 1 };
      document.getElementById("log-table").replaceWith(table(readings));
    } }, c.label))));
  state.order = rows.map((r) => r.id);
  const open = (id) => { state.scrollY = window.scrollY; state.opened = id; go(`#/reading/${id}`); };
  const body = rows.map((r) => {
    const v = verdict(r);
    const clean = v.word === "sound" && !r.review_decision && !r.superseded_by;
    const tr = h("tr", { dataset: { id: r.id, verdict: v.word }, class: ["v-" + v.cls, state.opened === r.id && "last-opened"] },
      h("td", {}, clean ? h("input", { type: "checkbox", class: "pick", value: String(r.id), "aria-label": `Select ${r.tag} for accepting`,
        onclick: (ev) => ev.stopPropagation() }) : null),
      h("td", {}, showTime(r.taken_at)),
      h("td", {}, h("span", { class: ["verdict", "verdict-chip", v.cls] }, v.text)),
      h("td", {}, r.site),
      h("td", {}, h("a", { href: `#/reading/${r.id}`, onclick: (ev) => { ev.preventDefault(); open(r.id); } }, r.tag)),
      h("td", {}, r.technician_name || r.technician),
      h("td", { class: "num" }, fmt(r.load_pct, 0)),
      h("td", {}, r.flags.map((f) => FLAG_WORDS[f] || f).join(", ") || "–"),
      h("td", {}, r.review_decision ? h("span", { class: ["state", r.review_decision] }, reviewWord(r.review_decision)) : h("span", { class: "state none" }, "to review")));
    tr.addEventListener("click", (ev) => { if (ev.target.tagName !== "A" && ev.target.tagName !== "INPUT") open(r.id); });
    return tr;
  });
  return h("div", { class: "table-wrap", id: "log-table" },
    h("table", {}, h("caption", { class: "sr-only" }, "Readings of the day; column headers sort"), h("thead", {}, head), h("tbody", {}, body)));
}

/** Every page of the listing, following `next` (a URL under /api/v1); null when the screen was left. */
async function listing(path, stillWanted) {
  const rows = [];
  for (let next = path; next; ) {
    const r = await api("GET", next);
    if (!stillWanted()) return null;
    rows.push(...r.data.readings);
    next = r.data.next ? r.data.next.replace(/^\/api\/v1/, "") : null;
  }
  return rows;
}

/** Accept a run of clean readings at once: each selected one (sound, not reviewed) gets its own review. */
function acceptBar(out, reload) {
  const status = h("span", { class: "muted", role: "status", id: "accept-status" });
  const selectAll = () => { for (const c of out.querySelectorAll("input.pick")) c.checked = true; };
  const accept = async () => {
    const ids = [...out.querySelectorAll("input.pick:checked")].map((c) => Number(c.value));
    if (!ids.length) { status.textContent = "Select the clean readings to accept first."; return; }
    if (!window.confirm(`Accept ${ids.length} reading(s) judged sound? Each gets its own review, signed by you.`)) return;
    let done = 0;
    for (const id of ids) {
      try {
        await api("POST", `/readings/${id}/review`, { decision: "accepted", comment: "" });
        done += 1;
        status.textContent = `Accepted ${done} of ${ids.length}…`;
      } catch (e) {
        status.textContent = `Stopped at reading ${id}: ${e.message}. ${done} accepted.`;
        return;
      }
    }
    toast(`${done} reading(s) accepted.`);
    await reload();
  };
  return h("div", { class: "actions", id: "accept-bar" },
    h("button", { class: "btn", type: "button", id: "select-clean", onclick: selectAll }, "Select every clean reading"),
    h("button", { class: "btn btn-main", type: "button", id: "accept-selected", onclick: accept }, "Accept the selected"), status);
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
    // the record follows the day log's filters (technician and finding too)
    const eq = new URLSearchParams(Object.entries(state.filters).filter(([, v]) => v));
    csv.href = `/api/v1/export.csv?${eq}`;
    clear(out, h("p", { class: "muted", role: "status" }, "Loading…"));
    try {
      const readings = await listing(`/readings/listing?${q}`, () => routeIsCurrent(seq));
      if (!readings || !routeIsCurrent(seq)) return;
      clear(out, summary(readings), readings.length ? [acceptBar(out, load), table(readings)] : h("p", { class: "panel" }, "No readings for these filters."));
      if (state.scrollY) { window.scrollTo(0, state.scrollY); state.scrollY = 0; } // back where the supervisor was
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
    h("span", { class: "muted" }, "The commissioning record for the filters above (date, site, technician, finding), one row per reading.")), out);
  await load();
}
