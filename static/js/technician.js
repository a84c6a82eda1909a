// Technician screens: pick or register a motor, enter a reading, see the result, the outbox, the day.
// (Over 400 lines for now: the four technician screens share form state and helpers; split them when the
// page is reworked for the offline verdict, rather than cutting the shared state in two now.)

import { api, NetworkError } from "./api.js";
import { showCurve } from "./curve.js";
import { $, clear, fmt, h, localDate, localIso, showTime, uuid } from "./dom.js";
import { crossCheck, fmtRange, parseField, READING_NUMBERS } from "./fields.js";
import * as outbox from "./outbox.js";
import { provisional } from "./provisional.js";
import { provisionalBlock, resultBlocks, reviewWord, SAFETY_NOTE, serverVerdictNote } from "./result.js";
import { go, routeIsCurrent } from "./router.js";
import { askForBackgroundSync, sendReading, sync } from "./sending.js";
import { sheetForm } from "./sheet.js";
import { ctx, setReachable, toast } from "./shell.js";
import { historyBlock, inputsBlock, reviewForm, state as logState } from "./supervisor.js";
import { lastVisits, lastVisitLine } from "./history.js";

export const SITE_KEY = "slipwise.site";

// --- data with an offline fallback ------------------------------------------------------------
export async function loadMotors() {
  try {
    const r = await api("GET", "/motors");
    setReachable(true);
    await outbox.cachePut("motors", r.data.motors);
    return { motors: r.data.motors, cached: false };
  } catch (e) {
    if (!(e instanceof NetworkError)) throw e;
    setReachable(false);
    return { motors: (await outbox.cacheGet("motors")) || [], cached: true };
  }
}

async function findMotor(id) {
  const { motors, cached } = await loadMotors();
  return { motor: motors.find((m) => m.id === id) || null, cached };
}

// --- form pieces --------------------------------------------------------------------------------
/** A labelled number input with its unit, hint, range error and cross-check line. */
export function numberField(f, value, prefix = "f") {
  const id = `${prefix}-${f.name}`;
  const hintId = `${id}-hint`, errId = `${id}-err`, chkId = `${id}-chk`;
  const input = h("input", {
    id, name: f.name, type: "text", inputmode: "decimal", autocomplete: "off", enterkeyhint: "next",
    "aria-describedby": `${hintId} ${errId} ${chkId}`, required: f.required || null,
    value: value == null ? "" : String(value),
  });
  const error = h("p", { class: "error", id: errId, "aria-live": "polite" });
  const check = h("p", { class: "check", id: chkId, "aria-live": "polite" });
  const hint = h("p", { class: "hint", id: hintId }, [f.help, `Allowed ${fmtRange(f)}.`].filter(Boolean).join(" "));
  const el = h("div", { class: "field" },
    h("label", { for: id }, f.label, f.required ? null : h("span", { class: "muted" }, " (optional)")),
    h("div", { class: "input-unit" }, input, h("span", { class: "unit", "aria-hidden": "true" }, f.unit)),
    h("span", { class: "sr-only", id: `${id}-unit` }, f.unit), hint, error, check);
  input.setAttribute("aria-describedby", `${id}-unit ${hintId} ${errId} ${chkId}`);
  // A field says it is wrong only once the technician has been in it (or has pressed submit): a blank
  // form must not open with every required field already red.
  let touched = input.value !== "";
  const validate = (show = touched) => {
    const r = parseField(f, input.value);
    const shown = show ? r.error || "" : "";
    error.textContent = shown;
    input.setAttribute("aria-invalid", shown ? "true" : "false");
    return r;
  };
  input.addEventListener("input", () => { touched = true; validate(); });
  input.addEventListener("blur", () => { if (input.value !== "") touched = true; validate(); });
  return { f, el, input, error, check, validate };
}

function motorSummary(m) {
  const power = m.rated_power_kw != null ? `${m.rated_power_kw} kW` : `${m.rated_power_hp} hp`;
  return h("div", { class: "panel", id: "motor-card" },
    h("p", { class: "tag" }, m.tag),
    h("p", { class: "muted" }, [m.site, m.location].filter(Boolean).join(" · ")),
    h("p", {}, `${power} · ${m.rated_voltage_v} V · ${m.rated_current_a} A · ${m.rated_frequency_hz} Hz · ${m.rated_speed_rpm} rpm`,
      ` · ${m.supply || "mains"}`, m.design ? ` · design ${m.design}` : "", m.service_factor ? ` · SF ${m.service_factor}` : ""));
}

// --- Motors ----------------------------------------------------------------------------------------
export async function renderMotors(el, _arg, seq) {
  const { motors, cached } = await loadMotors();
  const visits = await lastVisits().catch(() => new Map());   // issue 11: last verdict and visit per motor
  if (!routeIsCurrent(seq)) return;
  const sites = [...new Set(motors.map((m) => m.site))].sort();
  let site = localStorage.getItem(SITE_KEY) || "";
  if (site && !sites.includes(site)) site = "";
  const siteSel = h("select", { id: "site" }, h("option", { value: "" }, "All sites"),
    sites.map((x) => h("option", { value: x, selected: x === site || null }, x)));
  const search = h("input", { id: "tag-search", type: "search", autocomplete: "off", placeholder: "e.g. P-101",
    "aria-controls": "motor-list" });
  const list = h("ul", { class: "motor-list", id: "motor-list", "aria-label": "Motors" });
  const count = h("p", { class: "muted", role: "status" });
  const draw = () => {
    const q = search.value.trim().toLowerCase();
    // search by tag, description and location (issue 11)
    const hit = (m) => !q || [m.tag, m.description, m.location].some((t) => (t || "").toLowerCase().includes(q));
    const shown = motors.filter((m) => (!siteSel.value || m.site === siteSel.value) && hit(m));
    clear(list, shown.map((m) => h("li", {}, h("button", { type: "button", class: "motor", dataset: { id: m.id },
      onclick: () => go(`#/motor/${m.id}`) },
      h("span", { class: "tag" }, m.tag),
      // what it drives: the description, else the driven machine's torque law
      h("span", { class: "drives" }, m.description || (m.driven_load ? String(m.driven_load).replace("_", " ") + " load" : "")),
      h("span", { class: "muted" }, m.site, m.location ? ` · ${m.location}` : ""),
      h("span", {}, m.rated_power_kw != null ? `${m.rated_power_kw} kW` : `${m.rated_power_hp} hp`,
        ` · ${m.rated_voltage_v} V · ${m.rated_speed_rpm} rpm · ${m.rated_frequency_hz} Hz`),
      lastVisitLine(visits.get(m.id))),
      h("a", { class: "visits-link", href: `#/motor/${m.id}/history` }, `Visits of ${m.tag}`))));
    count.textContent = `${shown.length} of ${motors.length} motors${cached ? " (saved copy: offline)" : ""}`;
  };
  siteSel.addEventListener("change", () => { localStorage.setItem(SITE_KEY, siteSel.value); draw(); });
  search.addEventListener("input", draw);
  clear(el,
    h("div", { class: "screen-head" }, h("h1", { tabindex: "-1" }, "Motors"),
      h("a", { class: "btn", href: "#/motor/new" }, "Register a motor")),
    h("div", { class: "panel filters" },
      h("div", { class: "field" }, h("label", { for: "site" }, "Site"), siteSel),
      h("div", { class: "field" }, h("label", { for: "tag-search" }, "Find by tag, description or location"), search)),
    count, list);
  draw();
}

// --- Reading entry ----------------------------------------------------------------------------------
/**
 * The reading form for motor `motorId`. opts: {values, supersedes, correcting (outbox entry), serverError}.
 */
export async function renderReadingForm(el, motorIdText, seq, opts = {}) {
  const motorId = Number(motorIdText);
  const { motor, cached } = await findMotor(motorId);
  if (!routeIsCurrent(seq)) return;
  if (!motor) {
    clear(el, h("h1", { tabindex: "-1" }, "Motor not found"),
      h("p", {}, cached ? "This motor is not in the copy saved on this tablet. Open the motor list once while online." : `There is no motor with id ${motorId}.`),
      h("a", { class: "btn", href: "#/motors" }, "Back to motors"));
    return;
  }
  const values = opts.values || {};
  // a current's hint speaks of this motor's rating, not only the contract's 0 to 10000 A
  const rated = Number(motor.rated_current_a);
  const forMotor = (f) => (f.name.startsWith("current_l") && rated > 0
    ? { ...f, help: `This motor: rated ${rated} A, so about ${fmt(rated, 1)} A or less at full load; a mean above ${fmt(8 * rated, 0)} A (800 %) is refused.` } : f);
  const fields = Object.fromEntries(READING_NUMBERS.map((f) => [f.name, numberField(forMotor(f), values[f.name], "rd")]));
  const sheet = sheetForm(motor, values, numberField); // the de-energised tests, vibration, instruments, notes
  const group = (legend, names, extra, cls = "grid") => h("fieldset", { class: "panel" }, h("legend", {}, legend), extra || null,
    h("div", { class: cls }, names.map((n) => fields[n].el)));
  const aside = h("aside", { "aria-label": "Provisional values as you type" });
  let warnedAbove = null; // the speed@frequency already warned about (sent on the second press)
  const formError = h("p", { class: "error", role: "alert", id: "reading-error" });
  const submit = h("button", { class: "btn btn-main", type: "submit", id: "submit-reading" }, opts.correcting ? "Send corrected reading" : "Interpret reading");

  const readValues = (showAll = false) => {
    const out = {};
    let firstBad = null;
    for (const fld of Object.values(fields)) {
      const r = showAll ? fld.validate(true) : fld.validate();
      if (r.error && !firstBad) firstBad = fld.input;
      if (r.value != null && !r.error) out[fld.f.name] = r.value;
    }
    const tests = sheet.read();
    return { out: { ...out, ...tests.out }, firstBad: firstBad || tests.firstBad };
  };
  const refresh = () => {
    const { out } = readValues();
    const checks = crossCheck(motor, out);
    for (const fld of Object.values(fields)) fld.check.textContent = checks[fld.f.name] || "";
    sheet.refresh(out);
    clear(aside, provisionalBlock(provisional({ ...motor, ...out }), "As you type"));
    return { out, checks };
  };

  const form = h("form", { novalidate: true, id: "reading-form" },
    opts.serverError ? h("div", { class: "panel retake", role: "alert", id: "server-message" },
      h("h2", {}, "The server refused this reading"), h("p", {}, opts.serverError.message),
      h("p", { class: "muted" }, "Correct the field and send it again; the reading stays in the outbox until then.")) : null,
    opts.supersedes ? h("div", { class: "panel retake", id: "retake-note" },
      h("p", {}, `This reading replaces reading ${opts.supersedes}.`),
      opts.asked ? h("p", {}, `${opts.asked.reviewer_name || opts.asked.reviewer} asked for it to be taken again: `,
        h("strong", {}, opts.asked.comment || "no comment given")) : null,
      h("p", {}, "The fields hold the old reading's values so you can see what was entered: measure again and ",
        "overwrite each one before you send.")) : null,
    ...sheet.before,
    group("Speed and frequency", ["frequency_hz", "speed_rpm"]),
    group("Line currents", ["current_l1_a", "current_l2_a", "current_l3_a"], h("p", { class: "hint", id: "currents-hint" },
      "Clamp around one phase conductor at a time. At least one current. ", fields.current_l1_a.f.help || ""), "grid phases"),
    group("Line voltages", ["voltage_l12_v", "voltage_l23_v", "voltage_l31_v"], h("p", { class: "hint" },
      `Line to line at the motor terminals or its isolator (rated ${motor.rated_voltage_v} V). Needed on mains; optional on a drive.`), "grid phases"),
    group("Power analyser (optional)", ["power_kw", "power_factor"]),
    h("details", { class: "panel" }, h("summary", {}, "Instruments and running time (optional)"),
      h("div", { class: "grid" }, ["minutes_running", "tachometer_resolution_rpm", "current_accuracy_pct", "voltage_accuracy_pct", "power_accuracy_pct"].map((n) => fields[n].el))),
    ...sheet.after,
    // issue 11: running hours and energy price; blank takes the site's defaults
    h("details", { class: "panel", id: "energy-inputs" }, h("summary", {}, "Energy and cost (optional: blank takes the site's figures)"),
      h("div", { class: "grid" }, ["operating_hours_per_year", "energy_price_per_kwh"].filter((n) => fields[n]).map((n) => fields[n].el))),
    formError,
    h("div", { class: "actions" }, submit, h("a", { class: "btn", href: "#/motors" }, "Other motor")));
  form.addEventListener("input", refresh);
  form.addEventListener("submit", async (ev) => {
    ev.preventDefault();
    formError.textContent = "";
    const { out, firstBad } = readValues(true);
    if (firstBad) {
      formError.textContent = "Some values are outside their allowed range; see the message under the field.";
      firstBad.focus();
      return;
    }
    const checks = crossCheck(motor, out);
    const key = Object.keys(checks)[0];
    if (key) {
      formError.textContent = checks[key];
      fields[key].input.focus();
      return;
    }
    // a speed at or above synchronous: say so before sending, and send on a second press (it may be real:
    // an overhauling load, or a misread tachometer)
    const p = provisional({ ...motor, ...out });
    const aboveKey = `${out.speed_rpm}@${out.frequency_hz}`;
    if (p.sync_speed_rpm != null && out.speed_rpm >= p.sync_speed_rpm && warnedAbove !== aboveKey) {
      warnedAbove = aboveKey;
      formError.textContent = `The speed ${out.speed_rpm} rpm is at or above the synchronous ${fmt(p.sync_speed_rpm, 0)} rpm: a motor driving its load turns slower. Check the tachometer (tape, reflections, a gear or pulley ratio) and the frequency. Press the button again to send it as measured.`;
      fields.speed_rpm.input.focus();
      return;
    }
    submit.disabled = true;
    const body = { client_id: uuid(), motor_id: motor.id, taken_at: localIso(), ...out };
    if (opts.supersedes) body.supersedes = opts.supersedes;
    const entry = outbox.newEntry(body, motor, ctx.user.username);
    // into the outbox first: from here on the reading survives a closed tab or a dead network
    if (opts.correcting) {
      entry.corrects = opts.correcting.client_id;
      entry.created_at = opts.correcting.created_at;
      await outbox.replace(opts.correcting.client_id, entry);
    } else await outbox.put(entry);
    ctx.pendingStart = performance.now();
    go(`#/pending/${entry.client_id}`);
  });

  const layout = h("div", { class: "reading-layout" }, form);
  clear(el, h("h1", { tabindex: "-1" }, opts.correcting ? "Correct the reading" : "New reading"), motorSummary(motor), layout);
  // beside the form on a wide screen; on a tablet or phone in portrait just above the send button, where
  // the technician looks before sending (below it, it was off-screen)
  const wide = window.matchMedia("(min-width: 1000px)");
  const place = () => (wide.matches ? layout.append(aside) : form.insertBefore(aside, formError));
  place();
  wide.addEventListener("change", place);
  refresh();
  const named = opts.serverError && (fields[opts.serverError.field] || sheet.fields[opts.serverError.field]);
  if (named) {
    if (named.error) named.error.textContent = opts.serverError.message;
    named.input.setAttribute("aria-invalid", "true");
    named.input.focus();
  } else fields.frequency_hz.input.focus();
}

// --- after submit: send now, or show provisional and keep ---------------------------------------------
export async function renderPending(el, clientId, seq) {
  let entry = await outbox.get(clientId);
  if (!entry) {
    clear(el, h("h1", { tabindex: "-1" }, "Reading sent"), h("p", {}, "This reading is no longer in the outbox: the server has it."),
      h("a", { class: "btn", href: "#/mine" }, "My readings"));
    return;
  }
  const status = h("p", { class: "panel", id: "send-state", role: "status" }, "Sending to the server…");
  const prov = provisional({ ...(entry.nameplate || {}), ...entry.body });
  const draw = () => clear(el, h("h1", { tabindex: "-1" }, entry.tag), h("p", { class: "muted" }, `${entry.site} · taken ${showTime(entry.body.taken_at)}`),
    status, provisionalBlock(prov), h("p", { class: "muted" }, SAFETY_NOTE));
  draw();
  if (entry.state === "waiting") {
    const r = await outbox.sendNow(entry, sendReading);
    if (!routeIsCurrent(seq)) return;
    if (r.outcome === "sent" && r.reading) {
      setReachable(true);
      ctx.readings.set(r.reading.id, r.reading);
      go(`#/reading/${r.reading.id}`);
      return;
    }
    entry = (await outbox.get(clientId)) || entry;
    if (r.outcome === "waiting") lastReason.set(entry.client_id, r.reason);
    if (r.outcome === "waiting" && r.reason === "network") {
      setReachable(false);
      askForBackgroundSync();
    }
  }
  if (entry.state === "rejected") {
    clear(status, h("span", { class: "state rejected" }, "refused by the server"), " ", "It was not stored: ",
      h("strong", { id: "reject-message" }, entry.error.message), " ",
      h("a", { class: "btn", href: `#/outbox/${entry.client_id}/fix` }, "Correct it"));
    status.classList.add("retake");
  } else if (entry.username && ctx.user && entry.username !== ctx.user.username) {
    clear(status, h("span", { class: "state waiting" }, "kept on this tablet"),
      ` Entered by ${entry.username}; it is sent when ${entry.username} signs in on this device.`);
  } else {
    const why = entryWhy(entry);
    clear(status, h("span", { class: "state waiting" }, "kept on this tablet"), " ", why,
      " ", h("a", { class: "btn btn-quiet", href: "#/motors" }, "Next motor"));
  }
  if (entry.state !== "waiting") return;
  // The server's result arriving while this screen is open (the network came back and the outbox sent
  // it): shown here, in place, saying whether the server's verdict is the one this device gave.
  const onSent = (ev) => {
    if (!routeIsCurrent(seq)) return window.removeEventListener("outbox-sent", onSent);
    if (!ev.detail || ev.detail.client_id !== clientId || !ev.detail.reading) return;
    window.removeEventListener("outbox-sent", onSent);
    const reading = ev.detail.reading;
    clear(status, h("span", { class: "state sent" }, "stored by the server"), ` as reading ${reading.id}.`, " ",
      h("a", { class: "btn btn-quiet", href: "#/motors" }, "Next motor"));
    const earlier = provisionalBlock(prov, "What this device said");
    clear(el, h("h1", { tabindex: "-1" }, entry.tag), h("p", { class: "muted" }, `${entry.site} · taken ${showTime(entry.body.taken_at)}`),
      status, serverVerdictNote(prov.judged ? prov.judged.verdict : null, reading),
      resultBlocks(reading.result, { serviceFactor: (entry.nameplate && entry.nameplate.service_factor) || 1 }),
      h("details", { class: "panel", id: "provisional-before" }, h("summary", {}, "What this device said before the server answered"), earlier),
      h("p", { class: "muted" }, SAFETY_NOTE));
  };
  window.addEventListener("outbox-sent", onSent);
}

function entryWhy(entry) {
  if (lastReason.get(entry.client_id) === "login") return "The session has ended: sign in again and the outbox sends it.";
  if (lastReason.get(entry.client_id) === "server") return "The server could not take it just now; it is sent again automatically.";
  return "No answer from the server. The reading is in the outbox and is sent by itself when the network returns.";
}
const lastReason = new Map();

// --- Outbox ----------------------------------------------------------------------------------------------
export async function renderOutbox(el) {
  const items = await outbox.all();
  const sendBtn = h("button", { class: "btn btn-main", type: "button", id: "send-now" }, "Send now");
  sendBtn.addEventListener("click", async () => {
    sendBtn.disabled = true;
    const summary = await sync("by hand");
    if (!summary) toast("Nothing waiting to be sent.");
    else if (summary.stopped === "network") toast("Still no connection to the server; the readings stay in the outbox.");
    renderOutbox(el);
  });
  clear(el, h("h1", { tabindex: "-1" }, "Outbox"),
    h("p", {}, "Readings not yet stored by the server. They are sent by themselves on opening the page and when the network returns. A reading the server refuses stays here, with its message, until it is corrected."),
    h("div", { class: "actions" }, sendBtn),
    items.length ? h("ul", { class: "entries", id: "outbox-list" }, items.map((e) =>
      h("li", { class: ["entry", e.state], dataset: { clientId: e.client_id, state: e.state } },
        h("div", { class: "grow" },
          h("p", { class: "tag" }, e.tag), h("p", { class: "muted" }, `${e.site} · taken ${showTime(e.body.taken_at || e.created_at)}`),
          h("p", {}, [["speed_rpm", "rpm"], ["frequency_hz", "Hz"], ["current_l1_a", "A"], ["voltage_l12_v", "V"], ["power_kw", "kW"]]
            .filter(([k]) => e.body[k] != null).map(([k, u]) => `${e.body[k]} ${u}`).join(" · ")),
          e.state === "rejected"
            ? h("p", {}, h("span", { class: "state rejected" }, "refused by the server"), " ", h("span", { class: "reject-message" }, e.error.message))
            : h("p", {}, h("span", { class: "state waiting" }, "waiting"), e.attempts ? ` · ${e.attempts} attempt(s)` : "",
              e.username && e.username !== ctx.user.username ? ` · entered by ${e.username}, sent when they sign in` : "")),
        h("a", { class: "btn", href: `#/pending/${e.client_id}` }, "Provisional result"),
        e.state === "rejected" ? h("a", { class: "btn btn-bad", href: `#/outbox/${e.client_id}/fix` }, "Correct") : null)))
      : h("p", { class: "panel", id: "outbox-empty" }, "The outbox is empty: the server has every reading."));
}

export async function renderCorrection(el, clientId, seq) {
  const entry = await outbox.get(clientId);
  if (!entry) return go("#/outbox");
  const { client_id, motor_id, taken_at, supersedes, ...values } = entry.body;
  return renderReadingForm(el, String(entry.motor_id), seq, { values, supersedes, correcting: entry, serverError: entry.error });
}

// --- My readings ---------------------------------------------------------------------------------------
let mineDraws = 0;
export async function renderMine(el, _arg, seq) {
  // the screen follows the outbox: a reading sent (or the network back) redraws it, never a stale count.
  // Listening from the start, so a send that lands while this screen is still loading is not missed.
  const redraw = () => {
    window.removeEventListener("outbox-sent", redraw);
    window.removeEventListener("online", redraw);
    if (routeIsCurrent(seq)) renderMine(el, _arg, seq);
  };
  window.addEventListener("outbox-sent", redraw);
  window.addEventListener("online", redraw);
  const draw = ++mineDraws; // only the latest of overlapping redraws draws
  const date = localDate();
  let readings = null, note = "";
  try {
    const r = await api("GET", `/readings?date=${date}&technician=${encodeURIComponent(ctx.user.username)}`);
    readings = r.data.readings;
    await outbox.cachePut("mine", readings);
    setReachable(true);
  } catch (e) {
    if (!(e instanceof NetworkError)) throw e;
    setReachable(false);
    readings = (await outbox.cacheGet("mine")) || [];
    note = " (saved copy: offline)";
  }
  readings = readings.filter((r) => String(r.taken_at || "").slice(0, 10) === date || !r.taken_at);
  // retakes asked of me on any day, until a new reading answers them (cached for the basement)
  let retakes = [];
  try {
    retakes = (await api("GET", "/retakes")).data.readings;
    await outbox.cachePut("retakes", retakes);
  } catch (e) {
    if (!(e instanceof NetworkError)) throw e;
    retakes = (await outbox.cacheGet("retakes")) || [];
  }
  if (!routeIsCurrent(seq)) return;
  const waiting = await outbox.all();
  if (draw !== mineDraws) return;
  const answered = new Set(waiting.map((e) => e.body.supersedes).filter(Boolean));
  const open = retakes.filter((r) => !answered.has(r.id));
  const retakeList = open.length ? h("section", { class: "panel retake", "aria-labelledby": "retakes-h", id: "retakes" },
    h("h2", { id: "retakes-h" }, `Asked to take again (${open.length})`),
    h("ul", { class: "entries" }, open.map((r) => h("li", { class: "entry", dataset: { id: r.id } },
      h("div", { class: "grow" }, h("p", { class: "tag" }, r.tag),
        h("p", { class: "muted" }, `${r.site} · reading ${r.id} · ${showTime(r.taken_at)}`),
        h("p", {}, `${r.review.reviewer_name || r.review.reviewer}: ${r.review.comment || "take it again"}`)),
      h("a", { class: "btn btn-main", href: `#/retake/${r.id}` }, "Take again"))))) : null;
  clear(el, h("h1", { tabindex: "-1" }, "My readings"), retakeList,
    h("p", { class: "muted" }, `${date}: ${readings.length} stored reading(s)${note}, ${waiting.length} in the outbox.`),
    readings.length ? h("ul", { class: "entries", id: "mine-list" }, readings.slice().reverse().map((r) => {
      const dec = r.review ? r.review.decision : "none";
      return h("li", { class: "entry", dataset: { id: r.id } },
        h("div", { class: "grow" }, h("p", { class: "tag" }, r.tag),
          h("p", { class: "muted" }, `${r.site} · ${showTime(r.taken_at)}`),
          h("p", {}, `Load ${fmt(r.result.load_pct, 0)} %`, (r.result.flags || []).length ? ` · ${r.result.flags.length} finding(s)` : "")),
        h("p", {}, h("span", { class: ["state", dec], dataset: { review: dec } }, r.review ? reviewWord(dec) : "not reviewed"),
          r.review && r.review.comment ? h("span", {}, " ", r.review.comment) : null),
        h("a", { class: "btn", href: `#/reading/${r.id}` }, "Open"));
    })) : h("p", { class: "panel" }, "No stored readings today yet."));
}

// --- A retake asked by the supervisor, opened from My readings -----------------------------------------------
export async function renderRetake(el, idText, seq) {
  const id = Number(idText);
  let reading = null;
  try {
    reading = (await api("GET", `/readings/${id}`)).data;
  } catch (e) {
    if (!(e instanceof NetworkError)) throw e;
    reading = ((await outbox.cacheGet("retakes")) || []).find((r) => r.id === id) || null;
  }
  if (!routeIsCurrent(seq)) return;
  if (!reading) {
    clear(el, h("h1", { tabindex: "-1" }, `Reading ${id}`), h("p", {}, "This retake is not in the saved copy; open it when the network returns."));
    return;
  }
  const { taken_at, ...values } = reading.inputs;
  return renderReadingForm(el, String(reading.motor_id), seq, { values, supersedes: reading.id, asked: reading.review });
}

// --- One stored reading (technician and supervisor) ------------------------------------------------------------
export async function renderReadingView(el, idText, seq) {
  const id = Number(idText);
  let reading = ctx.readings.get(id);
  ctx.readings.delete(id);
  if (!reading) {
    try {
      reading = (await api("GET", `/readings/${id}`)).data;
      await outbox.cachePut(`reading-${id}`, reading); // a reading once opened opens again offline
    } catch (e) {
      if (!(e instanceof NetworkError)) throw e;
      reading = await outbox.cacheGet(`reading-${id}`);
      if (!reading) {
        clear(el, h("h1", { tabindex: "-1" }, `Reading ${id}`), h("p", {}, "Offline: this reading is not in the tablet's saved copy; it opens when the network returns."));
        return;
      }
    }
  } else await outbox.cachePut(`reading-${id}`, reading);
  if (!routeIsCurrent(seq)) return;
  let { motor } = await findMotor(reading.motor_id);
  if (ctx.user && ctx.user.role === "supervisor") {
    try { motor = (await api("GET", `/motors/${reading.motor_id}`)).data; } catch { /* the list's copy will do */ }
  }
  if (!routeIsCurrent(seq)) return;
  const sf = (motor && motor.service_factor) || 1;
  const retake = () => {
    const { taken_at, ...values } = reading.inputs;
    renderReadingForm(el, String(reading.motor_id), seq, { values, supersedes: reading.id, asked: reading.review });
  };
  const rev = reading.review;
  const retakeAsked = rev && rev.decision === "retake" && !reading.superseded_by && ctx.user && ctx.user.role !== "supervisor";
  const head = [
    h("h1", { tabindex: "-1" }, reading.tag),
    h("p", { class: "muted" }, `${reading.site} · reading ${reading.id} · taken ${showTime(reading.taken_at)} by ${reading.technician_name || reading.technician}`),
    h("p", { id: "review-state" }, rev
      ? [h("span", { class: ["state", rev.decision] }, reviewWord(rev.decision)), ` by ${rev.reviewer_name || rev.reviewer}`, rev.comment ? `: ${rev.comment}` : ""]
      : h("span", { class: "state none" }, "not reviewed yet")),
    retakeAsked ? h("p", {}, h("button", { class: "btn btn-main", type: "button", id: "take-again-asked", onclick: retake },
      "Take the reading again")) : null,
  ];
  // opened from the day log: previous / next in the log's order, and back to the same place in it
  const at = logState.order.indexOf(reading.id);
  if (ctx.user && ctx.user.role === "supervisor" && at >= 0) {
    const step = (to) => () => { logState.opened = to; go(`#/reading/${to}`); };
    const prev = logState.order[at - 1], next = logState.order[at + 1];
    head.push(h("nav", { class: "actions log-steps", "aria-label": "Day log" },
      h("a", { class: "btn", href: "#/log", id: "back-to-log" }, "Back to the day log"),
      h("button", { class: "btn", type: "button", id: "prev-reading", disabled: prev == null || null, onclick: prev != null ? step(prev) : null }, "Previous"),
      h("span", { class: "muted" }, `${at + 1} of ${logState.order.length}`),
      h("button", { class: "btn", type: "button", id: "next-reading", disabled: next == null || null, onclick: next != null ? step(next) : null }, "Next")));
  }
  // the certificate: for supervisors and for the technician who took the reading (the server checks too)
  if (ctx.user && (ctx.user.role === "supervisor" || ctx.user.username === reading.technician)) {
    head.push(h("p", {}, h("a", { id: "certificate-link", href: `/api/v1/readings/${reading.id}/certificate.pdf`, target: "_blank", rel: "noopener" },
      rev && rev.decision === "accepted" ? "Open the certificate (PDF)" : "Open the draft certificate (PDF, not signed off)")));
  }
  if (ctx.pendingStart) {
    ctx.resultShownMs = performance.now() - ctx.pendingStart;
    ctx.pendingStart = null;
    document.documentElement.dataset.resultMs = String(Math.round(ctx.resultShownMs));
  }
  const pictureBody = h("div", { id: "curve" }, h("p", { class: "muted" }, "Drawing the picture…"));
  const picture = h("section", { class: "panel", "aria-labelledby": "pic-h" }, h("h2", { id: "pic-h" }, "Torque and speed"),
    pictureBody);
  showCurve(pictureBody, reading.id); // drawn by the page from the stored result's numbers; cached for offline use
  const extra = [];
  extra.push(historyBlock(reading, motor));
  if (ctx.user && ctx.user.role === "supervisor") extra.push(reviewForm(reading, () => renderReadingView(el, idText, seq)), inputsBlock(reading, motor));
  clear(el, head, h("div", { class: "two-col" },
    h("div", {}, resultBlocks(reading.result, { serviceFactor: sf, onRetake: retake })),
    h("div", {}, picture, extra, h("p", { class: "panel muted", id: "safety" }, SAFETY_NOTE))));
  window.scrollTo(0, 0); // a reading opens at its top, wherever the log was scrolled
}
