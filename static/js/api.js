// The service's JSON API under /api/v1: cookie session, CSRF header on writes, one error shape.

import { useThresholds } from "./result.js";

const BASE = "/api/v1";
const CSRF_HEADER = "X-CSRF-Token"; // server/web/security.py CSRF_HEADER

let csrfToken = null;

/** The server answered with {"error": {code, message, field}} and a 4xx/5xx status. */
export class ApiError extends Error {
  constructor(status, code, message, field) {
    super(message);
    this.status = status;
    this.code = code;
    this.field = field || null;
  }
}

/** No answer at all: offline, server down, or the connection dropped. */
export class NetworkError extends Error {}

export function setCsrf(token) {
  csrfToken = token || null;
}

async function once(method, path, body) {
  const headers = { Accept: "application/json" };
  if (body !== undefined) headers["Content-Type"] = "application/json";
  if (method !== "GET" && csrfToken) headers[CSRF_HEADER] = csrfToken;
  let resp;
  try {
    resp = await fetch(BASE + path, {
      method, headers, credentials: "same-origin", cache: "no-store",
      body: body === undefined ? undefined : JSON.stringify(body),
    });
  } catch (e) {
    throw new NetworkError(e && e.message ? e.message : "no network");
  }
  if (resp.status === 204) return { status: 204, data: null };
  let data = null;
  try {
    data = await resp.json();
  } catch {
    if (resp.ok) throw new ApiError(resp.status, "bad_response", "the server's answer was not JSON");
  }
  if (!resp.ok) {
    const e = (data && data.error) || {};
    throw new ApiError(resp.status, e.code || "error", e.message || `the server answered ${resp.status}`, e.field);
  }
  return { status: resp.status, data };
}

/** One API call; a stale CSRF token is refreshed once from GET /session and the call repeated. */
export async function api(method, path, body) {
  try {
    return await once(method, path, body);
  } catch (e) {
    if (e instanceof ApiError && e.code === "csrf_failed") {
      const s = await once("GET", "/session");
      setCsrf(s.data.csrf_token);
      return once(method, path, body);
    }
    throw e;
  }
}

export async function getSession() {
  const r = await once("GET", "/session");
  setCsrf(r.data.csrf_token);
  useThresholds(r.data.thresholds);
  return r.data.user;
}

export async function login(username, password) {
  const r = await once("POST", "/session", { username, password });
  setCsrf(r.data.csrf_token);
  useThresholds(r.data.thresholds);
  return r.data.user;
}

export async function logout() {
  try {
    await api("DELETE", "/session");
  } finally {
    setCsrf(null);
  }
}
