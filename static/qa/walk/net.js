// Requests to the app's own server: session cookie, CSRF header, device id, JSON errors.
import { deviceId } from "./db.js";

function csrfToken() {
  const m = document.cookie.match(/(?:^|;\s*)csrftoken=([^;]+)/);
  return m ? decodeURIComponent(m[1]) : "";
}

export class HttpError extends Error {
  constructor(status, body) {
    super(`HTTP ${status}`);
    this.status = status;
    this.body = body;
  }
}

export async function request(method, url, { json, body, headers = {}, signal } = {}) {
  const h = { "X-CSRFToken": csrfToken(), "X-Device-Id": await deviceId(), Accept: "application/json", ...headers };
  if (json !== undefined) {
    h["Content-Type"] = "application/json";
    body = JSON.stringify(json);
  }
  const resp = await fetch(url, { method, body, headers: h, credentials: "same-origin", signal, cache: "no-store" });
  if (resp.status === 304) return { status: 304, data: null, resp };
  const type = resp.headers.get("Content-Type") || "";
  const data = type.includes("json") ? await resp.json() : null;
  if (!resp.ok) throw new HttpError(resp.status, data);
  return { status: resp.status, data, resp };
}
