// The page's shell, shared by every screen: who is signed in, the connection pill, toast and banner.

import { $, clear, h } from "./dom.js";

export const ctx = { user: null, reachable: navigator.onLine, readings: new Map() };

let toastTimer = null;
export function toast(text) {
  const el = $("#toast");
  el.textContent = text;
  el.classList.add("show");
  clearTimeout(toastTimer);
  toastTimer = setTimeout(() => el.classList.remove("show"), 4000);
}

export function setReachable(ok) {
  ctx.reachable = ok;
  const net = $("#net");
  net.textContent = ok ? "online" : "offline – readings stay on this tablet";
  net.className = "pill " + (ok ? "online" : "offline");
}

export function showBanner(text, link) {
  const b = $("#banner");
  clear(b, text, link ? h("a", { class: "btn btn-quiet", href: link }, "Go") : null);
  b.hidden = false;
}
