// The supervisor's pieces of the reading view (review form, inputs, history) and the day log's place
// (`state`), shared with the day log screen itself (daylog.js, loaded when opened).

import { api, ApiError, NetworkError } from "./api.js";
import { h, s, showTime } from "./dom.js";
import { NAMEPLATE_CHOICES, NAMEPLATE_NUMBERS, READING_CHOICES, READING_NUMBERS, READING_TEST_NUMBERS, TEXT_FIELDS } from "./fields.js";
import { reviewWord } from "./result.js";
import { toast } from "./shell.js";

// the log's place survives opening a reading: filters, sort, scroll position, the row last opened, and the
// order of the rows (for previous/next on the reading)
export const state = { filters: null, sort: { key: "taken_at", dir: 1 }, scrollY: 0, opened: null, order: [] };

// --- pieces of the reading view ---------------------------------------------------------------------------
export function reviewForm(reading, done) {
  const err = h("p", { class: "error", role: "alert", id: "review-error" });
  const comment = h("textarea", { id: "review-comment", maxlength: 2000, "aria-describedby": "review-hint review-error" });
  const choices = [["accepted", "Accept"], ["retake", "Ask for a retake"], ["rejected", "Reject"]];
  const form = h("form", { class: "panel", id: "review-form", novalidate: true },
    h("h2", {}, "Review"),
    h("fieldset", { class: "choice-row" }, h("legend", {}, "Decision"),
      choices.map(([v, label]) => h("label", {}, h("input", { type: "radio", name: "decision", value: v }), label))),
    h("div", { class: "field" }, h("label", { for: "review-comment" }, "Comment"), comment,
      h("p", { class: "hint", id: "review-hint" }, "Needed for a retake or a rejection; the technician sees it.")),
    err, h("div", { class: "actions" }, h("button", { class: "btn btn-main", type: "submit", id: "review-submit" }, "Record review")));
  form.addEventListener("submit", async (ev) => {
    ev.preventDefault();
    err.textContent = "";
    const picked = form.querySelector("input[name=decision]:checked");
    if (!picked) { // nothing is preselected: the supervisor decides
      err.textContent = "Choose a decision: accept, ask for a retake, or reject.";
      form.querySelector("input[name=decision]").focus();
      return;
    }
    const decision = picked.value;
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
  items.push(h("li", {}, `Received by the server ${showTime(reading.received_at)}; engine ${reading.engine_version}`));
  // every review when the detail carries them (GET /readings/{id}), else the latest one
  const reviews = Array.isArray(reading.reviews) ? reading.reviews : (reading.review ? [reading.review] : []);
  for (const rv of reviews) {
    items.push(h("li", {}, `Reviewed ${showTime(rv.reviewed_at)} by ${rv.reviewer_name || rv.reviewer}: ${reviewWord(rv.decision)}`
      + (rv.comment ? ` (${rv.comment})` : "")));
  }
  if (motor) items.push(h("li", {}, `Nameplate revision ${reading.motor_revision} of ${motor.revision}${motor.revision > reading.motor_revision ? " (the nameplate was edited since)" : ""}`));
  return h("section", { class: "panel", "aria-labelledby": "hist-h" }, h("h2", { id: "hist-h" }, "History"), h("ul", { class: "history" }, items));
}
