// Building the page from data without ever parsing data as HTML: every text goes in as a text node.

const SVG_NS = "http://www.w3.org/2000/svg";

function build(el, attrs, children) {
  for (const [k, v] of Object.entries(attrs || {})) {
    if (v === null || v === undefined || v === false) continue;
    if (k.startsWith("on") && typeof v === "function") el.addEventListener(k.slice(2), v);
    else if (k === "class") el.setAttribute("class", Array.isArray(v) ? v.filter(Boolean).join(" ") : v);
    else if (k === "dataset") Object.assign(el.dataset, v);
    else if (k === "value") el.value = v;
    else el.setAttribute(k, v === true ? "" : String(v));
  }
  for (const c of children.flat(Infinity)) {
    if (c === null || c === undefined || c === false) continue;
    el.append(c instanceof Node ? c : document.createTextNode(String(c)));
  }
  return el;
}

/** h("p", {class: "x"}, "text", child) -> element. */
export function h(tag, attrs, ...children) {
  return build(document.createElement(tag), attrs, children);
}

/** The same for SVG elements (presentation attributes, never style attributes). */
export function s(tag, attrs, ...children) {
  return build(document.createElementNS(SVG_NS, tag), attrs, children);
}

export function $(sel, root = document) {
  return root.querySelector(sel);
}

export function $$(sel, root = document) {
  return [...root.querySelectorAll(sel)];
}

export function clear(el, ...children) {
  el.replaceChildren();
  return build(el, {}, children);
}

/** Numbers as a technician reads them: fixed decimals, an en dash for "not known". */
export function fmt(x, digits = 1) {
  if (x === null || x === undefined || Number.isNaN(x)) return "–";
  return Number(x).toFixed(digits);
}

/** A value with its unit, or a bare dash when there is none (never "– %"). */
export function qty(x, digits, unit) {
  if (x === null || x === undefined || Number.isNaN(x)) return "–";
  return unit ? `${fmt(x, digits)} ${unit}` : fmt(x, digits);
}

/** A ratio read as "so many times": 3.55× (the number first, the sign after it). */
export function times(x, digits = 2) {
  if (x === null || x === undefined || Number.isNaN(x)) return "–";
  return `${fmt(x, digits)}×`;
}

export function localDate(d = new Date()) {
  const p = (n) => String(n).padStart(2, "0");
  return `${d.getFullYear()}-${p(d.getMonth() + 1)}-${p(d.getDate())}`;
}

/** Local wall-clock time with its UTC offset, e.g. 2024-05-17T09:30:00+02:00 (what taken_at expects). */
export function localIso(d = new Date()) {
  const p = (n) => String(Math.abs(n)).padStart(2, "0");
  const off = -d.getTimezoneOffset();
  const sign = off >= 0 ? "+" : "-";
  return `${localDate(d)}T${p(d.getHours())}:${p(d.getMinutes())}:${p(d.getSeconds())}${sign}${p(Math.trunc(off / 60))}:${p(off % 60)}`;
}

export function uuid() {
  if (crypto.randomUUID) return crypto.randomUUID();
  const b = crypto.getRandomValues(new Uint8Array(16));
  b[6] = (b[6] & 0x0f) | 0x40;
  b[8] = (b[8] & 0x3f) | 0x80;
  const x = [...b].map((v) => v.toString(16).padStart(2, "0")).join("");
  return `${x.slice(0, 8)}-${x.slice(8, 12)}-${x.slice(12, 16)}-${x.slice(16, 20)}-${x.slice(20)}`;
}

/** "2024-05-17T09:30:00+02:00" -> "2024-05-17 09:30" (the technician's own clock, as written). */
/** The site's wall-clock time as the technician's device gave it, with its zone: "2026-12-03 10:40 UTC+01:00".
 *  One format for every time on the page. */
export function showTime(iso) {
  if (!iso) return "–";
  const text = String(iso);
  const wall = text.replace("T", " ").slice(0, 16);
  const zone = /(Z|[+-]\d{2}:?\d{2})$/.exec(text);
  if (!zone) return wall;
  return `${wall} UTC${zone[1] === "Z" ? "" : zone[1].length === 5 ? `${zone[1].slice(0, 3)}:${zone[1].slice(3)}` : zone[1]}`;
}
