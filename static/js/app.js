// The field page's entry: sign-in and sign-out, the theme, the route table, start-up.
// Nothing imports this module; the screens reach the router, shell and sending modules directly.

import { ApiError, getSession, login, logout, NetworkError } from "./api.js";
import { $, clear, h } from "./dom.js";
import * as outbox from "./outbox.js";
import { go, route, setRoutes } from "./router.js";
import { refreshCount, sync } from "./sending.js";
import { ctx, setReachable, showBanner, toast } from "./shell.js";
import * as history from "./history.js";
import * as tech from "./technician.js";

const USER_KEY = "slipwise.user"; // name and role only: offline, the page still knows who is working
const THEME_KEY = "slipwise.theme";

// --- theme -------------------------------------------------------------------------------------
function applyTheme(theme) {
  const root = document.documentElement;
  const dark = theme ? theme === "dim" : matchMedia("(prefers-color-scheme: dark)").matches;
  if (theme) root.dataset.theme = theme;
  const btn = $("#theme");
  btn.setAttribute("aria-pressed", String(dark));
  btn.textContent = dark ? "Bright room" : "Dim room";
  btn.title = dark ? "Switch to the bright palette" : "Switch to the dim palette";
}

/**
 * A screen in its own module, loaded when opened: the desk screens and registering a motor need the network
 * anyway, so they are not precached (NETWORK_ONLY in sw.js); offline the page says so instead.
 */
function loadedWhenOpened(load, render, title, ...offline) {
  return async (el, arg, seq) => {
    let screen;
    try {
      screen = await load();
    } catch {
      clear(el, h("h1", { tabindex: "-1" }, title), h("p", { class: "panel" }, ...offline),
        h("a", { class: "btn", href: "#/motors" }, "Back to motors"));
      return;
    }
    return screen[render](el, arg, seq);
  };
}
const renderDayLog = loadedWhenOpened(() => import("./daylog.js"), "renderLog", "Day log", "Offline: the day's log needs the network.");
const renderSiteView = loadedWhenOpened(() => import("./sites.js"), "renderSites", "Sites", "Offline: the site view needs the network.");
const renderRegister = loadedWhenOpened(() => import("./register.js"), "renderMotorForm", "Register a motor",
  "Registering a motor needs the network: the server checks the nameplate. Readings of motors already on the list can be taken offline.");

// --- routing -------------------------------------------------------------------------------------
setRoutes([
  [/^#\/login$/, renderLogin],
  [/^#\/motors$/, tech.renderMotors],
  [/^#\/motor\/new$/, renderRegister],
  [/^#\/motor\/(\d+)$/, tech.renderReadingForm],
  [/^#\/motor\/(\d+)\/history$/, history.renderMotorHistory],
  [/^#\/pending\/([0-9a-f-]{36})$/, tech.renderPending],
  [/^#\/outbox\/([0-9a-f-]{36})\/fix$/, tech.renderCorrection],
  [/^#\/outbox$/, tech.renderOutbox],
  [/^#\/mine$/, tech.renderMine],
  [/^#\/reading\/(\d+)$/, tech.renderReadingView],
  [/^#\/retake\/(\d+)$/, tech.renderRetake],
  [/^#\/log$/, renderDayLog],
  [/^#\/sites(?:\/(\d+))?$/, renderSiteView],
]);

// --- screens owned here --------------------------------------------------------------------------
async function renderLogin(el) {
  const err = h("p", { class: "error", id: "login-error", role: "alert" });
  const user = h("input", { id: "login-user", name: "username", autocomplete: "username", autocapitalize: "none",
    spellcheck: "false", required: true, "aria-describedby": "login-error" });
  const pass = h("input", { id: "login-pass", name: "password", type: "password", autocomplete: "current-password",
    required: true, "aria-describedby": "login-error" });
  const form = h("form", { class: "panel", novalidate: true },
    h("div", { class: "grid" },
      h("div", { class: "field" }, h("label", { for: "login-user" }, "User name"), user),
      h("div", { class: "field" }, h("label", { for: "login-pass" }, "Password"), pass)),
    err,
    h("div", { class: "actions" }, h("button", { class: "btn btn-main", type: "submit" }, "Sign in")));
  form.addEventListener("submit", async (ev) => {
    ev.preventDefault();
    err.textContent = "";
    try {
      const u = await login(user.value.trim(), pass.value);
      setReachable(true);
      signedIn(u);
      sync("signed in");
      go("#/motors");
    } catch (e) {
      err.textContent = e instanceof NetworkError
        ? "No connection to the server: signing in needs the network once. Readings already in the outbox are kept."
        : e.message;
      pass.select();
    }
  });
  clear(el, h("h1", { tabindex: "-1" }, "Sign in"),
    h("p", { class: "muted" }, "Sign in once per shift. The page then works in the plant room without a network; readings wait in the outbox until they can be sent."),
    form);
  user.focus();
}

function signedIn(u) {
  ctx.user = u;
  localStorage.setItem(USER_KEY, JSON.stringify({ username: u.username, role: u.role, full_name: u.full_name }));
  $("#who").textContent = `${u.full_name || u.username} · ${u.role}`;
  $("#logout").hidden = false;
  $("#tabs").hidden = false;
  for (const a of document.querySelectorAll("#tabs [data-role]")) a.hidden = u.role !== a.dataset.role;
  $("#banner").hidden = true;
}

async function signOut() {
  const c = await outbox.counts();
  if (c.total && !confirm(`${c.total} reading(s) are still in the outbox on this tablet. They are kept and sent after the next sign-in. Sign out?`)) return;
  try {
    await logout();
  } catch (e) {
    if (!(e instanceof NetworkError)) toast(e.message);
  }
  ctx.user = null;
  localStorage.removeItem(USER_KEY);
  $("#who").textContent = "";
  $("#logout").hidden = true;
  $("#tabs").hidden = true;
  go("#/login");
}

// --- start ---------------------------------------------------------------------------------------
async function boot() {
  applyTheme(localStorage.getItem(THEME_KEY));
  $("#theme").addEventListener("click", () => {
    const dark = $("#theme").getAttribute("aria-pressed") === "true";
    const next = dark ? "bright" : "dim";
    localStorage.setItem(THEME_KEY, next);
    applyTheme(next);
  });
  $("#logout").addEventListener("click", signOut);
  window.addEventListener("hashchange", route);
  window.addEventListener("outbox-change", refreshCount);
  window.addEventListener("page-outdated", () => showBanner("A new version of the page is ready. Reload to use it; the outbox is kept.", location.hash));
  window.addEventListener("online", () => sync("network back"));
  window.addEventListener("offline", () => setReachable(false));
  setReachable(navigator.onLine);

  if ("serviceWorker" in navigator) {
    navigator.serviceWorker.register("/sw.js").catch(() => {});
    navigator.serviceWorker.addEventListener("message", (ev) => {
      if (ev.data && ev.data.type === "replay") sync("background sync");
    });
  }
  if (navigator.storage && navigator.storage.persist) navigator.storage.persist().catch(() => {});

  try {
    await refreshCount();
  } catch (e) {
    showBanner("This browser keeps no offline storage (private mode?): readings cannot be kept without a network.");
  }
  try {
    const u = await getSession();
    setReachable(true);
    signedIn(u);
  } catch (e) {
    if (e instanceof NetworkError) {
      setReachable(false);
      const cached = JSON.parse(localStorage.getItem(USER_KEY) || "null");
      if (cached) signedIn(cached);
    } else if (e instanceof ApiError && e.status === 401) {
      localStorage.removeItem(USER_KEY);
    }
  }
  await route();
  document.documentElement.dataset.ready = "1";
  sync("page opened");
}

boot();
