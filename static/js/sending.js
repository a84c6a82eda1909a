// Sending readings: one POST for new readings and replays alike, the outbox count in the header,
// and the replay of what waits in the outbox.

import { api } from "./api.js";
import { $ } from "./dom.js";
import * as outbox from "./outbox.js";
import { ctx, setReachable, showBanner, toast } from "./shell.js";

/** POST a reading body; used by the outbox for new readings and replays alike. */
export function sendReading(body) {
  return api("POST", "/readings", body);
}

export async function refreshCount() {
  const c = await outbox.counts();
  const el = $("#outbox-count");
  const parts = [`${c.waiting} unsent`];
  if (c.rejected) parts.push(`${c.rejected} refused`);
  el.textContent = parts.join(" · ");
  el.setAttribute("aria-label", `Outbox: ${c.waiting} unsent readings, ${c.rejected} refused by the server`);
  el.classList.toggle("has-waiting", c.waiting > 0);
  el.classList.toggle("has-rejected", c.rejected > 0);
  el.dataset.waiting = String(c.waiting);
  el.dataset.rejected = String(c.rejected);
  return c;
}

/** Send what is waiting; say what happened. */
export async function sync(reason) {
  if (!ctx.user) return null;
  const c = await outbox.counts();
  if (!c.waiting) return null;
  const summary = await outbox.replay(sendReading, ctx.user.username);
  if (summary.sent || summary.rejected) setReachable(true);
  if (summary.stopped === "network") {
    setReachable(false);
    askForBackgroundSync();
  }
  if (summary.stopped === "login") showBanner("Sign in again to send the readings waiting in the outbox.", "#/login");
  const bits = [];
  if (summary.sent) bits.push(`${summary.sent} sent`);
  if (summary.rejected) bits.push(`${summary.rejected} refused by the server (see Outbox)`);
  if (bits.length) toast(`Outbox (${reason}): ${bits.join(", ")}.`);
  await refreshCount();
  return summary;
}

/** Where the browser supports it, the service worker is told to wake the page when the network returns. */
export async function askForBackgroundSync() {
  try {
    const reg = await navigator.serviceWorker.ready;
    if (reg.sync) await reg.sync.register("slipwise-outbox");
  } catch { /* "online" and the next page load still send the outbox */ }
}
