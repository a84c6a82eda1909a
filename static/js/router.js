// Screens by URL hash. The route table is handed in by app.js, so the screens can import go() and
// routeIsCurrent() from here without this module importing them back.

import { $, clear, h } from "./dom.js";
import { ctx } from "./shell.js";

let routes = [];
let routeSeq = 0;

/** Set the table: [pattern, screen(el, captured, seq)] pairs, tried in order. */
export function setRoutes(table) {
  routes = table;
}

export function go(hash) {
  if (location.hash === hash) route();
  else location.hash = hash;
}

/** False once a newer route has started: a screen still loading must not draw over the new one. */
export function routeIsCurrent(seq) {
  return seq === routeSeq;
}

export async function route() {
  const seq = ++routeSeq;
  let hash = location.hash || "#/motors";
  if (!ctx.user) hash = "#/login";
  else if (hash === "#/login") hash = "#/motors";
  if ((hash === "#/log" || hash.startsWith("#/sites")) && ctx.user && ctx.user.role !== "supervisor") hash = "#/mine";
  const screen = $("#screen");
  for (const a of document.querySelectorAll("#tabs a")) {
    const cur = hash.startsWith(`#/${a.dataset.screen}`) || (a.dataset.screen === "motors" && hash.startsWith("#/motor"));
    if (cur) a.setAttribute("aria-current", "page");
    else a.removeAttribute("aria-current");
  }
  for (const [re, render] of routes) {
    const m = hash.match(re);
    if (!m) continue;
    try {
      await render(screen, m[1], seq);
    } catch (e) {
      if (!routeIsCurrent(seq)) return;
      clear(screen, h("h1", { tabindex: "-1" }, "Something went wrong"), h("p", { class: "error" }, String(e.message || e)));
    }
    if (!routeIsCurrent(seq)) return;
    const heading = screen.querySelector("h1");
    // a new screen: move focus to its heading (screen readers announce it), unless it placed focus itself
    if (heading && !screen.contains(document.activeElement)) heading.focus({ preventScroll: true });
    return;
  }
  go("#/motors");
}
