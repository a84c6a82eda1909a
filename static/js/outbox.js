// The outbox: readings the server has not yet acknowledged, kept in IndexedDB.
//
// Every entry carries the client_id (UUID) it was created with, and the exact body that is
// POSTed, so a replay is recognised by the server (200, same record) instead of stored twice.
// An entry leaves the outbox only after a 2xx. A 4xx moves it to "rejected" with the server's
// message, kept until the technician corrects it. Network errors, 5xx, 429 and 401 leave it
// waiting. A new page version migrates entries in onupgradeneeded; no store is ever deleted.

import { ApiError, NetworkError } from "./api.js";

export const DB_NAME = "slipwise-field";
export const DB_VERSION = 2;
export const ENTRY_VERSION = 2;

// Schema history (each step keeps every entry):
//  1: store "outbox" keyPath client_id; entries {client_id, motor_id, payload, status: "queued"|"refused", message}
//  2: entries {v: 2, client_id, motor_id, tag, site, body, state: "waiting"|"rejected", error, created_at,
//     attempts, last_try_at, nameplate}; index "created_at"; store "cache" {key, value, saved_at}

/** Schema-1 entry -> schema-2 entry. Unknown fields are kept so nothing a technician typed is lost. */
export function migrateEntry(old) {
  if (old && old.v >= 2) return old;
  const body = old.payload || old.body || {};
  const refused = old.status === "refused";
  const { payload, status, message, ...rest } = old;
  return {
    ...rest,
    v: ENTRY_VERSION,
    client_id: old.client_id || body.client_id,
    motor_id: old.motor_id ?? body.motor_id,
    tag: old.tag || (body.motor_id != null ? `motor ${body.motor_id}` : "unknown motor"),
    site: old.site || "",
    body: { ...body, client_id: old.client_id || body.client_id },
    state: refused ? "rejected" : "waiting",
    error: refused ? { status: 400, code: "rejected", message: message || "the server refused this reading", field: null } : null,
    created_at: old.created_at || body.taken_at || new Date().toISOString(),
    attempts: old.attempts || 0,
    last_try_at: old.last_try_at || null,
    nameplate: old.nameplate || null,
  };
}

let dbPromise = null;

function request(req) {
  return new Promise((resolve, reject) => {
    req.onsuccess = () => resolve(req.result);
    req.onerror = () => reject(req.error);
  });
}

export function openDb() {
  if (dbPromise) return dbPromise;
  dbPromise = new Promise((resolve, reject) => {
    const req = indexedDB.open(DB_NAME, DB_VERSION);
    req.onupgradeneeded = (ev) => {
      const db = req.result;
      const tx = req.transaction;
      const old = ev.oldVersion;
      if (old < 1) db.createObjectStore("outbox", { keyPath: "client_id" });
      if (old < 2) {
        const store = tx.objectStore("outbox");
        if (!store.indexNames.contains("created_at")) store.createIndex("created_at", "created_at");
        if (!db.objectStoreNames.contains("cache")) db.createObjectStore("cache", { keyPath: "key" });
        store.openCursor().onsuccess = (e) => {
          const cur = e.target.result;
          if (!cur) return;
          cur.update(migrateEntry(cur.value));
          cur.continue();
        };
      }
    };
    req.onsuccess = () => {
      const db = req.result;
      // a newer page wants to upgrade: step aside, and say the page needs a reload
      db.onversionchange = () => {
        db.close();
        dbPromise = null;
        window.dispatchEvent(new CustomEvent("page-outdated"));
      };
      resolve(db);
    };
    req.onerror = () => {
      dbPromise = null;
      reject(req.error);
    };
    req.onblocked = () => window.dispatchEvent(new CustomEvent("page-outdated"));
  });
  return dbPromise;
}

async function tx(storeName, mode, fn) {
  const db = await openDb();
  return new Promise((resolve, reject) => {
    const t = db.transaction(storeName, mode);
    let out;
    Promise.resolve(fn(t.objectStore(storeName))).then((v) => (out = v), reject);
    t.oncomplete = () => resolve(out);
    t.onerror = () => reject(t.error);
    t.onabort = () => reject(t.error || new Error("transaction aborted"));
  });
}

function changed() {
  window.dispatchEvent(new CustomEvent("outbox-change"));
}

export async function all() {
  const items = await tx("outbox", "readonly", (st) => request(st.getAll()));
  return items.sort((a, b) => String(a.created_at).localeCompare(String(b.created_at)));
}

export async function get(clientId) {
  return tx("outbox", "readonly", (st) => request(st.get(clientId)));
}

export async function put(entry) {
  await tx("outbox", "readwrite", (st) => request(st.put(entry)));
  changed();
}

async function remove(clientId) {
  await tx("outbox", "readwrite", (st) => request(st.delete(clientId)));
  changed();
}

/** Replace a rejected entry by its correction (new client_id), in one transaction: never both lost. */
export async function replace(oldClientId, entry) {
  await tx("outbox", "readwrite", (st) => {
    st.put(entry);
    if (oldClientId && oldClientId !== entry.client_id) st.delete(oldClientId);
  });
  changed();
}

export async function counts() {
  const items = await all();
  return {
    waiting: items.filter((e) => e.state === "waiting").length,
    rejected: items.filter((e) => e.state === "rejected").length,
    total: items.length,
  };
}

export async function cacheGet(key) {
  const row = await tx("cache", "readonly", (st) => request(st.get(key)));
  return row ? row.value : undefined;
}

export async function cachePut(key, value) {
  await tx("cache", "readwrite", (st) => request(st.put({ key, value, saved_at: new Date().toISOString() })));
}

/** A new outbox entry for a reading body (which already holds its client_id), entered by `username`. */
export function newEntry(body, motor, username) {
  return {
    v: ENTRY_VERSION, client_id: body.client_id, motor_id: body.motor_id, tag: motor.tag, site: motor.site, username,
    body, state: "waiting", error: null, created_at: new Date().toISOString(), attempts: 0, last_try_at: null,
    nameplate: motor,
  };
}

/**
 * Send one entry. Returns {outcome: "sent", reading} | {outcome: "rejected", error} | {outcome: "waiting", reason}.
 * `send(body)` is the POST; it throws ApiError or NetworkError.
 */
/** Keep a reading the server stored in the saved copy of the technician's list (by id, once). */
async function rememberStored(reading) {
  if (!reading || reading.id == null) return;
  try {
    const mine = ((await cacheGet("mine")) || []).filter((r) => r.id !== reading.id);
    await cachePut("mine", [...mine, reading]);
  } catch { /* a copy for offline reading only: never stands in the way of the send */ }
}

export async function sendOne(entry, send) {
  entry.attempts = (entry.attempts || 0) + 1;
  entry.last_try_at = new Date().toISOString();
  try {
    const r = await send(entry.body);
    await remove(entry.client_id);
    acknowledged.set(entry.client_id, r.data);
    await rememberStored(r.data); // the "My readings" copy knows it even if the network goes again
    window.dispatchEvent(new CustomEvent("outbox-sent", { detail: { client_id: entry.client_id, reading: r.data } }));
    return { outcome: "sent", reading: r.data, created: r.status === 201 };
  } catch (err) {
    if (err instanceof ApiError && err.status >= 400 && err.status < 500 && ![401, 408, 429].includes(err.status)
        && err.code !== "csrf_failed") {
      entry.state = "rejected";
      entry.error = { status: err.status, code: err.code, message: err.message, field: err.field };
      await put(entry);
      return { outcome: "rejected", error: entry.error };
    }
    await put(entry);
    let reason = "network";
    if (err instanceof ApiError) reason = err.status === 401 ? "login" : "server";
    else if (!(err instanceof NetworkError)) reason = "error";
    return { outcome: "waiting", reason, message: err.message };
  }
}

// One sender at a time (page load, "online", "sync" and a new submission may all want to send).
let chain = Promise.resolve();
const acknowledged = new Map(); // client_id -> the server's stored reading, for this page's life

function exclusive(fn) {
  const next = chain.then(fn, fn);
  chain = next.catch(() => {});
  return next;
}

/** Send one fresh entry now (after anything already sending). */
export function sendNow(entry, send) {
  return exclusive(async () => {
    const current = await get(entry.client_id);
    if (!current) return { outcome: "sent", reading: acknowledged.get(entry.client_id) || null, created: false };
    return sendOne(current, send);
  });
}

/**
 * Send every waiting entry of `username`, oldest first; stops at the first network, server or login
 * problem. Another person's entries wait for that person's session (the server records who sent it).
 * Schema-1 entries carry no user and go with whoever signs in first.
 */
export function replay(send, username) {
  return exclusive(() => doReplay(send, username));
}

async function doReplay(send, username) {
  const summary = { sent: 0, rejected: 0, stopped: null, readings: [] };
  const entries = (await all()).filter((e) => e.state === "waiting" && (!e.username || e.username === username));
  for (const e of entries) {
    const r = await sendOne(e, send);
    if (r.outcome === "sent") {
      summary.sent += 1;
      summary.readings.push(r.reading);
    } else if (r.outcome === "rejected") summary.rejected += 1;
    else {
      summary.stopped = r.reason;
      break;
    }
  }
  return summary;
}
