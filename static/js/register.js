// Registering a motor: the nameplate form. A new motor needs the network (the server checks the nameplate
// and gives the motor its id), so this screen is loaded when it is opened and is not precached: the
// offline page stays under its start-weight budget, and offline the page says the network is needed.

import { api, ApiError, NetworkError } from "./api.js";
import { clear, h } from "./dom.js";
import { CHOICE_WORDS, FIELD, NAMEPLATE_CHOICES, NAMEPLATE_NUMBERS, parseText, TEXT_FIELDS } from "./fields.js";
import { go } from "./router.js";
import { toast } from "./shell.js";
import { loadMotors, numberField, SITE_KEY } from "./technician.js";

function choiceField(c, value, prefix = "f") {
  const id = `${prefix}-${c.name}`;
  const select = h("select", { id, name: c.name, "aria-describedby": `${id}-hint` },
    h("option", { value: "" }, "typical (blank)"),
    c.choices.map((v) => h("option", { value: v, selected: v === value || null }, CHOICE_WORDS[v] || v)));
  return { c, select, el: h("div", { class: "field" }, h("label", { for: id }, c.label),
    select, h("p", { class: "hint", id: `${id}-hint` }, c.help)) };
}

function textField(name, label, value, opts = {}) {
  const id = `t-${name}`;
  const input = h("input", { id, name, value: value || "", autocomplete: "off", maxlength: opts.max || 200,
    required: opts.required || null, list: opts.list || null, "aria-describedby": `${id}-err` });
  const error = h("p", { class: "error", id: `${id}-err`, "aria-live": "polite" });
  return { input, error, el: h("div", { class: "field" }, h("label", { for: id }, label,
    opts.required ? null : h("span", { class: "muted" }, " (optional)")), input,
    opts.hint ? h("p", { class: "hint" }, opts.hint) : null, error) };
}

// --- Register a motor ---------------------------------------------------------------------------
/** A server message with the contract's field names ("rated_speed_rpm") read as their labels ("Rated speed"). */
function plainMessage(text) {
  return String(text).replace(/\b[a-z][a-z0-9]*(?:_[a-z0-9]+)+\b/g, (name) => (FIELD[name] ? FIELD[name].label : name));
}

export async function renderMotorForm(el) {
  const { motors } = await loadMotors();
  const sites = [...new Set(motors.map((m) => m.site))].sort();
  const site = textField("site", "Site", localStorage.getItem(SITE_KEY) || "", { required: true, max: 120, list: "site-names" });
  const tag = textField("tag", "Tag", "", { required: true, max: 80, hint: "As painted on the motor or its isolator." });
  const location = textField("location", "Location", "", { max: 200 });
  const description = textField("description", "Description", "", { max: 2000 });
  let unit = "kw";
  // rated output is optional in the contract only because it may be given in kW or in hp: one of them is
  // needed, so the page never labels it "(optional)"
  const OUTPUT = new Set(["rated_power_kw", "rated_power_hp"]);
  const nums = Object.fromEntries(NAMEPLATE_NUMBERS.map((f) => [f.name, numberField(OUTPUT.has(f.name) ? { ...f, required: true } : f, null, "np")]));
  const choices = Object.fromEntries(NAMEPLATE_CHOICES.map((c) => [c.name, choiceField(c, null, "np")]));
  const MAIN_CHOICES = ["driven_load"]; // what the motor drives decides the starting check: asked up front
  nums.rated_power_hp.el.hidden = true;
  const unitRow = h("fieldset", { class: "choice-row" }, h("legend", {}, "Output given in"),
    ["kw", "hp"].map((u) => h("label", {}, h("input", { type: "radio", name: "power-unit", value: u, checked: u === "kw" || null,
      onchange: () => { unit = u; nums.rated_power_kw.el.hidden = u !== "kw"; nums.rated_power_hp.el.hidden = u !== "hp"; } }),
      u === "kw" ? "kW" : "hp")));
  const formError = h("p", { class: "error", role: "alert", id: "motor-error" });
  const required = ["rated_voltage_v", "rated_current_a", "rated_frequency_hz", "rated_speed_rpm"];
  const optional = ["poles", "rated_power_factor", "rated_efficiency_pct", "service_factor", "breakdown_torque_pct", "locked_rotor_torque_pct"];
  const form = h("form", { novalidate: true },
    h("fieldset", { class: "panel" }, h("legend", {}, "Where"), h("div", { class: "grid" }, site.el, tag.el, location.el, description.el),
      h("datalist", { id: "site-names" }, sites.map((x) => h("option", { value: x })))),
    h("fieldset", { class: "panel" }, h("legend", {}, "Nameplate"), unitRow,
      h("div", { class: "grid" }, nums.rated_power_kw.el, nums.rated_power_hp.el, required.map((k) => nums[k].el),
        MAIN_CHOICES.map((k) => choices[k].el))),
    h("fieldset", { class: "panel" }, h("legend", {}, "From the nameplate or catalogue, if given (blanks use typical values)"),
      h("p", { class: "hint" }, "Leave a field blank when the nameplate or catalogue does not give it; the hint under each field says what is used instead."),
      h("div", { class: "grid" }, optional.map((k) => nums[k].el),
        Object.entries(choices).filter(([k]) => !MAIN_CHOICES.includes(k)).map(([, c]) => c.el))),
    formError,
    h("div", { class: "actions" }, h("button", { class: "btn btn-main", type: "submit" }, "Save motor"),
      h("a", { class: "btn", href: "#/motors" }, "Cancel")));
  form.addEventListener("submit", async (ev) => {
    ev.preventDefault();
    formError.textContent = "";
    const body = { site: site.input.value.trim(), tag: tag.input.value.trim(), location: location.input.value.trim(),
      description: description.input.value.trim() };
    let first = null;
    for (const [name, t] of [["site", site], ["tag", tag]]) {
      const r = parseText(TEXT_FIELDS[name], t.input.value); // the contract's text rules (tag: no hidden characters)
      t.error.textContent = !r.value ? "Needed." : (r.error || "");
      if ((!r.value || r.error) && !first) first = t.input;
    }
    for (const [name, fld] of Object.entries(nums)) {
      if ((name === "rated_power_kw" && unit !== "kw") || (name === "rated_power_hp" && unit !== "hp")) continue;
      const r = fld.validate(true);
      if (name === `rated_power_${unit}` && r.value == null && !r.error) {
        fld.error.textContent = "Rated output is needed.";
        fld.input.setAttribute("aria-invalid", "true");
        first = first || fld.input;
      }
      if (r.error) first = first || fld.input;
      if (r.value != null) body[name] = r.value;
    }
    for (const [name, c] of Object.entries(choices)) if (c.select.value) body[name] = c.select.value;
    if (first) { first.focus(); return; }
    try {
      const r = await api("POST", "/motors", body);
      localStorage.setItem(SITE_KEY, body.site);
      toast(`Motor ${r.data.tag} saved.`);
      go(`#/motor/${r.data.id}`);
    } catch (e) {
      if (e instanceof NetworkError) formError.textContent = "No connection: a new motor needs the network (readings do not).";
      else if (e instanceof ApiError) {
        const target = nums[e.field] || ({ site, tag, location, description })[e.field];
        const message = plainMessage(e.message);
        if (target) {
          target.error.textContent = message;
          (target.input || target.select).focus();
        }
        formError.textContent = message;
        const same = e.status === 409 && motors.find((m) => m.site === body.site && m.tag.toLowerCase() === body.tag.toLowerCase());
        if (same) formError.append(" ", h("a", { href: `#/motor/${same.id}`, id: "existing-motor" }, `Open ${same.tag} at ${same.site}`));
      } else throw e;
    }
  });
  clear(el, h("h1", { tabindex: "-1" }, "Register a motor"), form);
}
