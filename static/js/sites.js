// The supervisor's view of a site: motors by last verdict, visits overdue, right-sizing candidates ranked by
// the energy they would save, the site's defaults, and the CSV. Drawn from GET /api/v1/sites/{id}/overview.
// A desk screen that needs the network: loaded when opened, not precached (see NETWORK_ONLY in sw.js).

import { api, NetworkError } from "./api.js";
import { clear, fmt, h, s } from "./dom.js";
import { verdict } from "./result.js";
import { routeIsCurrent } from "./router.js";
import { toast } from "./shell.js";

const ORDER = ["act", "retake", "watch", "sound", "never_read"];
const WORDS = { never_read: "not read yet" };

/** Horizontal bars of yearly savings [kWh], largest first, each labelled with its value. */
function savingsBars(candidates) {
  const rows = candidates.filter((m) => m.right_size_savings_kwh > 0);
  if (!rows.length) return h("p", { class: "muted" }, "No motor here would save energy by a smaller or better replacement.");
  const left = 16 + 9 * Math.max(...rows.map((m) => m.tag.length)); // room for the longest tag at 15 px
  const W = left + 520, bar = 28, top = 6, H = top + rows.length * (bar + 10) + 28;
  const peak = Math.max(...rows.map((m) => m.right_size_savings_kwh));
  const x = (v) => left + ((W - left - 90) * v) / peak;
  const parts = [s("title", {}, "Yearly savings of the right-sizing candidates")];
  rows.forEach((m, i) => {
    const y = top + i * (bar + 10);
    parts.push(s("text", { x: left - 8, y: y + bar * 0.7, "text-anchor": "end" }, m.tag),
      s("rect", { class: "bar", x: left, y, width: Math.max(x(m.right_size_savings_kwh) - left, 2), height: bar }),
      s("text", { x: x(m.right_size_savings_kwh) + 6, y: y + bar * 0.7 }, `${fmt(m.right_size_savings_kwh, 0)} kWh`));
  });
  parts.push(s("text", { x: W - 4, y: H - 6, "text-anchor": "end" }, "saved a year [kWh]"));
  const label = rows.map((m) => `${m.tag}: ${fmt(m.right_size_savings_kwh, 0)} kWh a year`).join("; ");
  return s("svg", { class: "savings", viewBox: `0 0 ${W} ${H}`, role: "img", "aria-label": label }, parts);
}

function motorRow(m) {
  const v = m.verdict ? verdict({ verdict: m.verdict }) : null;
  return h("tr", { dataset: { id: m.motor_id } },
    h("td", {}, h("a", { href: `#/motor/${m.motor_id}/history` }, m.tag)),
    h("td", {}, v ? h("span", { class: ["verdict", "verdict-chip", v.cls] }, v.text) : "not read yet"),
    h("td", {}, m.last_visit || "–"),
    h("td", {}, m.next_visit_due || "–", m.overdue ? h("strong", { class: "overdue" }, " overdue") : null),
    h("td", { class: "num" }, m.annual_energy_kwh == null ? "–" : fmt(m.annual_energy_kwh, 0)),
    h("td", {}, (m.changes || []).join(", ").replaceAll("_", " ") || "–"));
}

function settingsForm(site, reload) {
  const st = site.settings;
  const field = (name, label, value, unit) => h("div", { class: "field" }, h("label", { for: `set-${name}` }, label),
    h("div", { class: "input-unit" }, h("input", { id: `set-${name}`, name, inputmode: "decimal", value: value ?? "" }),
      h("span", { class: "unit" }, unit)));
  const err = h("p", { class: "error", role: "alert", id: "settings-error" });
  const form = h("form", { class: "panel", id: "site-settings", novalidate: true },
    h("h2", {}, "Site defaults"),
    h("p", { class: "hint" }, "A reading that leaves running hours or energy price blank takes these; a visit older than the interval is overdue."),
    h("div", { class: "grid" }, field("operating_hours_per_year", "Running hours a year", st.operating_hours_per_year, "h"),
      field("energy_price_per_kwh", "Energy price", st.energy_price_per_kwh, "per kWh"),
      field("visit_interval_months", "Visit interval", st.visit_interval_months, "months")),
    err, h("div", { class: "actions" }, h("button", { class: "btn", type: "submit" }, "Save defaults")));
  form.addEventListener("submit", async (ev) => {
    ev.preventDefault();
    err.textContent = "";
    const body = {};
    for (const input of form.querySelectorAll("input")) if (input.value.trim() !== "") body[input.name] = Number(input.value.trim().replace(",", "."));
    try {
      await api("PUT", `/sites/${site.id}/settings`, body);
      toast("Site defaults saved (a new entry; the earlier ones are kept).");
      reload();
    } catch (e) {
      err.textContent = e instanceof NetworkError ? "Offline: saving defaults needs the network." : e.message;
    }
  });
  return form;
}

export async function renderSites(el, idText, seq) {
  let sites;
  try {
    sites = (await api("GET", "/sites")).data.sites;
  } catch (e) {
    if (!(e instanceof NetworkError)) throw e;
    clear(el, h("h1", { tabindex: "-1" }, "Sites"), h("p", { class: "panel" }, "Offline: the site view needs the network."));
    return;
  }
  if (!routeIsCurrent(seq)) return;
  const chosen = sites.find((x) => String(x.id) === idText) || sites[0];
  const out = h("div", { id: "site-out" });
  const pick = h("select", { id: "site-pick" }, sites.map((x) => h("option", { value: x.id, selected: x === chosen || null }, x.name)));
  pick.addEventListener("change", () => { location.hash = `#/sites/${pick.value}`; });
  clear(el, h("h1", { tabindex: "-1" }, "Sites"),
    h("div", { class: "panel filters" }, h("div", { class: "field" }, h("label", { for: "site-pick" }, "Site"), pick)), out);
  if (!chosen) { clear(out, h("p", { class: "panel" }, "No site yet.")); return; }
  const draw = async () => {
    const o = (await api("GET", `/sites/${chosen.id}/overview`)).data;
    if (!routeIsCurrent(seq)) return;
    const counts = ORDER.filter((k) => o.by_verdict[k]).map((k) => h("li", { dataset: { verdict: k } },
      `${WORDS[k] || verdict({ verdict: k }).text}: ${o.by_verdict[k]}`));
    clear(out,
      h("section", { class: "panel", "aria-labelledby": "byv-h", id: "by-verdict" }, h("h2", { id: "byv-h" }, "Motors by last verdict"),
        h("ul", { class: "chips" }, counts)),
      h("section", { class: "panel", "aria-labelledby": "due-h", id: "overdue" }, h("h2", { id: "due-h" }, `Visits overdue (${o.overdue.length})`),
        o.overdue.length ? h("ul", {}, o.overdue.map((m) => h("li", {}, h("a", { href: `#/motor/${m.motor_id}/history` }, m.tag),
          ` last visited ${m.last_visit || "never"}, due ${m.next_visit_due || "now"}`))) : h("p", { class: "muted" }, "None: every motor was visited within the interval.")),
      h("section", { class: "panel", "aria-labelledby": "rs-h", id: "right-sizing" }, h("h2", { id: "rs-h" }, "Right-sizing candidates"),
        savingsBars(o.right_sizing),
        o.right_sizing.length ? h("p", { class: "muted" }, "Savings at the measured load, reckoned with the faster turning of a fan or pump on a new motor with less slip. ",
          "A replacement is an engineering decision: check the driven machine's duty, starting and service factor first.") : null),
      h("section", { class: "panel", "aria-labelledby": "all-h" }, h("h2", { id: "all-h" }, "Every motor"),
        h("div", { class: "table-wrap" }, h("table", { id: "site-motors" },
          h("thead", {}, h("tr", {}, ["Tag", "Last verdict", "Last visit", "Next visit due", "kWh a year", "Changes since accepted"].map((t) => h("th", { scope: "col" }, t)))),
          h("tbody", {}, o.motors.map(motorRow)))),
        h("p", {}, h("a", { class: "btn", id: "site-csv", href: `/api/v1/sites/${chosen.id}/overview.csv`, download: "" }, "Download the site's CSV"))),
      settingsForm(o.site, draw));
  };
  try {
    await draw();
  } catch (e) {
    clear(out, h("p", { class: "error", role: "alert" }, e instanceof NetworkError ? "Offline: the site view needs the network." : e.message));
  }
}
