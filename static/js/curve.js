// The torque–speed picture drawn by the page from the numbers the server returns with a stored reading
// (GET /api/v1/readings/{id}/torque-speed.json), kept in the tablet's cache so it also shows offline.
//
// Two views: the whole range (standstill to synchronous speed, where a conveyor's failure to start shows)
// and the running region enlarged (where the operating point sits, usually in the last few per cent).
// The legend is a list under the views, so it never covers a curve; each line differs by dash as well as
// by colour. Tap a view (or the button) to open both large. The server's matplotlib SVG stays the
// printable version (certificate, API users).

import { NetworkError, api } from "./api.js";
import { clear, fmt, h, s } from "./dom.js";
import * as outbox from "./outbox.js";

const LINES = [
  { key: "torque_measured_v_nm", cls: "c-motor", label: (c) => `motor at the measured ${fmt(c.measured_voltage_v, 0)} V` },
  { key: "torque_rated_v_nm", cls: "c-rated", label: (c) => `motor at the rated ${fmt(c.rated_voltage_v, 0)} V` },
  { key: "load_torque_nm", cls: "c-load", label: () => "driven machine (its torque law through the operating point)" },
];

function niceStep(span, target = 5) {
  const raw = span / target;
  const p = 10 ** Math.floor(Math.log10(raw));
  return [1, 2, 2.5, 5, 10].map((m) => m * p).find((st) => st >= raw) || 10 * p;
}

function pct(c, nm) {
  return nm == null ? null : (100 * nm) / c.rated_torque_nm;
}

/** One view as an SVG: x from x0 to x1 [rpm], y in % of rated torque. */
function view(c, x0, x1, { title, W = 640, H = 360 }) {
  const left = 58, right = 14, top = 14, bottom = 48;
  const pw = W - left - right, ph = H - top - bottom;
  const inX = (i) => c.speed_rpm[i] >= x0 && c.speed_rpm[i] <= x1;
  let yMax = 0;
  for (const line of LINES) c[line.key].forEach((v, i) => { if (v != null && inX(i)) yMax = Math.max(yMax, pct(c, v)); });
  for (const v of [c.operating_torque_nm, c.breakdown_torque_nm]) if (v != null) yMax = Math.max(yMax, pct(c, v));
  yMax = Math.max(yMax * 1.1, 120);
  const X = (n) => left + ((n - x0) / (x1 - x0)) * pw;
  const Y = (p) => top + ph - (Math.min(Math.max(p, 0), yMax) / yMax) * ph;
  const parts = [s("title", {}, title)];
  const yStep = niceStep(yMax), xStep = niceStep(x1 - x0, 6);
  for (let p = 0; p <= yMax + 1e-9; p += yStep) {
    parts.push(s("line", { class: "grid", x1: left, x2: left + pw, y1: Y(p), y2: Y(p) }),
      s("text", { x: left - 6, y: Y(p) + 4, "text-anchor": "end" }, `${fmt(p, 0)}`));
  }
  for (let n = Math.ceil(x0 / xStep) * xStep; n <= x1 + 1e-9; n += xStep) {
    parts.push(s("line", { class: "grid", x1: X(n), x2: X(n), y1: top, y2: top + ph }),
      s("text", { x: X(n), y: top + ph + 18, "text-anchor": "middle" }, `${fmt(n, 0)}`));
  }
  parts.push(s("line", { class: "ref", x1: left, x2: left + pw, y1: Y(100), y2: Y(100) }));
  if (c.sync_speed_rpm >= x0 && c.sync_speed_rpm <= x1) {
    parts.push(s("line", { class: "ref", x1: X(c.sync_speed_rpm), x2: X(c.sync_speed_rpm), y1: top, y2: top + ph }));
  }
  for (const line of LINES) {
    let d = "";
    c[line.key].forEach((v, i) => {
      if (v == null || !inX(i)) return;
      d += `${d ? "L" : "M"}${X(c.speed_rpm[i]).toFixed(1)},${Y(pct(c, v)).toFixed(1)}`;
    });
    if (d) parts.push(s("path", { class: ["curve", line.cls].join(" "), d }));
  }
  const point = (n, nm, cls, label) => {
    if (n == null || nm == null || n < x0 || n > x1) return;
    parts.push(s("circle", { class: cls, cx: X(n), cy: Y(pct(c, nm)), r: 6 }, s("title", {}, label)));
  };
  point(c.breakdown_speed_rpm, c.breakdown_torque_nm, "pt-breakdown", `breakdown: ${fmt(pct(c, c.breakdown_torque_nm), 0)} % at ${fmt(c.breakdown_speed_rpm, 0)} rpm`);
  point(c.operating_speed_rpm, c.operating_torque_nm, "pt-operating", `operating point: ${fmt(pct(c, c.operating_torque_nm), 0)} % at ${fmt(c.operating_speed_rpm, 0)} rpm`);
  parts.push(s("rect", { class: "frame", x: left, y: top, width: pw, height: ph }),
    s("text", { x: left + pw / 2, y: H - 8, "text-anchor": "middle" }, "shaft speed [rpm]"),
    s("text", { x: 14, y: top + ph / 2, "text-anchor": "middle", transform: `rotate(-90 14 ${top + ph / 2})` }, "torque [% of rated]"));
  return s("svg", { class: "curve-view", viewBox: `0 0 ${W} ${H}`, role: "img", "aria-label": title }, parts);
}

/** The plain sentence under the picture; for a speed above synchronous it agrees with the finding. */
export function caption(c) {
  const n = c.measured_speed_rpm ?? c.operating_speed_rpm;
  if ((c.flags || []).includes("speed_above_synchronous") || (n != null && n >= c.sync_speed_rpm)) {
    return `The measured ${fmt(n, 0)} rpm is at or above the synchronous ${fmt(c.sync_speed_rpm, 0)} rpm: the machine ` +
      "is not driving its load there (it is generating, or the speed reading is wrong), so no operating point is drawn.";
  }
  if (c.operating_torque_nm == null) return `No operating point: the load could not be estimated. Synchronous speed ${fmt(c.sync_speed_rpm, 0)} rpm.`;
  const side = c.operating_side === "unstable" ? " It lies on the unstable side, below the breakdown speed." : "";
  return `Operating point ${fmt(pct(c, c.operating_torque_nm), 0)} % of rated torque at ${fmt(c.operating_speed_rpm, 0)} rpm; ` +
    `breakdown ${fmt(pct(c, c.breakdown_torque_nm), 0)} % at ${fmt(c.breakdown_speed_rpm, 0)} rpm (measured voltage); ` +
    `synchronous ${fmt(c.sync_speed_rpm, 0)} rpm.${side}`;
}

function runningRange(c) {
  const ns = c.sync_speed_rpm;
  const n = c.measured_speed_rpm ?? c.operating_speed_rpm ?? ns;
  const lo = Math.min(c.breakdown_speed_rpm ?? ns, n);
  const x0 = Math.max(0, lo - 0.04 * ns);
  const x1 = Math.max(ns, n) + 0.01 * ns;
  return [x0, x1];
}

function legend(c) {
  return h("ul", { class: "curve-legend" },
    LINES.map((line) => h("li", {}, s("svg", { viewBox: "0 0 36 10", width: 36, height: 10, "aria-hidden": "true" },
      s("line", { class: ["curve", line.cls].join(" "), x1: 0, x2: 36, y1: 5, y2: 5 })), " ", line.label(c))),
    h("li", {}, s("svg", { viewBox: "0 0 14 14", width: 14, height: 14, "aria-hidden": "true" }, s("circle", { class: "pt-operating", cx: 7, cy: 7, r: 5 })), " operating point"),
    h("li", {}, s("svg", { viewBox: "0 0 14 14", width: 14, height: 14, "aria-hidden": "true" }, s("circle", { class: "pt-breakdown", cx: 7, cy: 7, r: 5 })), " breakdown (largest torque)"));
}

/** The two views, legend, caption and an enlarge dialog for curve numbers `c`. */
export function curveFigure(c, readingId) {
  const [x0, x1] = runningRange(c);
  const views = (size) => [
    h("figure", { class: "curve-fig" }, view(c, 0, x1, { title: "Whole range: standstill to synchronous speed", ...size }),
      h("figcaption", {}, "Whole range, from standstill")),
    h("figure", { class: "curve-fig" }, view(c, x0, x1, { title: "Running region enlarged", ...size }),
      h("figcaption", {}, `Running region, ${fmt(x0, 0)}–${fmt(x1, 0)} rpm`)),
  ];
  const large = h("div", { class: "curve-large" }, views({ W: 900, H: 520 }));
  const dialog = h("dialog", { class: "curve-dialog", id: "curve-dialog", "aria-label": "Torque and speed, enlarged" },
    large, legend(c), h("form", { method: "dialog" }, h("button", { class: "btn", type: "submit" }, "Close")));
  const open = () => {
    dialog.showModal();
    large.scrollLeft = large.scrollWidth; // a narrow screen pans: start at the running end, where the point is
  };
  const small = h("div", { class: "curve-views", id: "curve-views", role: "button", tabindex: "0", title: "Tap to enlarge",
    onclick: open, onkeydown: (e) => { if (e.key === "Enter" || e.key === " ") { e.preventDefault(); open(); } } }, views({}));
  return [small, legend(c), h("p", { id: "curve-caption" }, caption(c)),
    h("p", {}, h("button", { class: "btn btn-quiet", type: "button", id: "curve-enlarge", onclick: open }, "Enlarge"), " ",
      h("a", { href: `/api/v1/readings/${readingId}/torque-speed.svg`, target: "_blank", rel: "noopener" }, "Printable picture (SVG)")),
    dialog];
}

/** Fill `el` with the picture of stored reading `id`: from the server, or the tablet's saved copy offline. */
export async function showCurve(el, id) {
  let c = null;
  try {
    c = (await api("GET", `/readings/${id}/torque-speed.json`)).data;
    await outbox.cachePut(`curve-${id}`, c);
  } catch (e) {
    if (!(e instanceof NetworkError)) {
      clear(el, h("p", { class: "muted" }, "No picture for this reading: ", e.message));
      return;
    }
    c = await outbox.cacheGet(`curve-${id}`);
  }
  if (!c) {
    clear(el, h("p", { class: "muted" }, "The picture opens when the network returns (it is not in this tablet's saved copy)."));
    return;
  }
  clear(el, curveFigure(c, id));
}
