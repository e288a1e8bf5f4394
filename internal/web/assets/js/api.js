// api.js: the page's only way to the server. Every call goes to the same
// origin with the session's bearer token; problems (RFC 9457) become ApiError.

const TOKEN_KEY = "corvane.token";

export function getToken() {
  return sessionStorage.getItem(TOKEN_KEY) || "";
}

export function setToken(t) {
  if (t) sessionStorage.setItem(TOKEN_KEY, t);
  else sessionStorage.removeItem(TOKEN_KEY);
}

// ApiError carries the HTTP status and the problem document of a failed call.
export class ApiError extends Error {
  constructor(status, problem) {
    super((problem && (problem.detail || problem.title)) || `HTTP ${status}`);
    this.status = status;
    this.problem = problem || {};
    this.kind = this.problem.kind || "";
    this.errors = Array.isArray(this.problem.errors) ? this.problem.errors : [];
  }
}

let onUnauthorized = () => {};

// whenUnauthorized sets what happens when the server refuses the token.
export function whenUnauthorized(fn) {
  onUnauthorized = fn;
}

// query builds "?a=1&b=2" from an object; arrays become comma lists and empty
// values are left out.
export function query(params) {
  const q = new URLSearchParams();
  for (const [k, v] of Object.entries(params || {})) {
    if (v === undefined || v === null || v === "") continue;
    if (Array.isArray(v)) {
      if (v.length) q.set(k, v.join(","));
    } else {
      q.set(k, String(v));
    }
  }
  const s = q.toString();
  return s ? "?" + s : "";
}

// request calls the API and returns {status, data, etag, headers}. JSON bodies
// are sent as JSON; responses are parsed by their content type ("text" for
// SVG and CSV), or kept as bytes with opts.binary. Failed calls throw ApiError.
export async function request(method, path, opts = {}) {
  const headers = { Accept: opts.accept || "application/json" };
  const tok = getToken();
  if (tok) headers.Authorization = "Bearer " + tok;
  if (opts.ifMatch) headers["If-Match"] = opts.ifMatch;
  let body;
  if (opts.body !== undefined) {
    headers["Content-Type"] = "application/json";
    body = JSON.stringify(opts.body);
  }
  let res;
  try {
    res = await fetch(path, { method, headers, body, cache: "no-store", signal: opts.signal });
  } catch (e) {
    if (e.name === "AbortError") throw e;
    throw new ApiError(0, { title: "The server cannot be reached", detail: "The server cannot be reached: " + e.message, kind: "network" });
  }
  const ct = res.headers.get("Content-Type") || "";
  let data = null;
  if (res.status !== 204 && method !== "HEAD") {
    if (opts.binary && res.ok) {
      data = await res.arrayBuffer(); // a file to save as it came (glTF, GeoJSON, AGS4)
    } else if (ct.includes("json")) {
      data = await res.json().catch(() => null);
    } else {
      data = await res.text();
    }
  }
  if (!res.ok) {
    const problem = data && typeof data === "object" ? data : { title: res.statusText, detail: typeof data === "string" && data.length < 300 ? data.trim() : "" };
    const err = new ApiError(res.status, problem);
    if (res.status === 401 && !opts.quiet401) onUnauthorized(err);
    throw err;
  }
  return { status: res.status, data, etag: res.headers.get("ETag") || "", headers: res.headers };
}

export const get = (path, opts) => request("GET", path, opts).then((r) => r.data);

// getAll follows next_after over every page of a list.
export async function getAll(path, params = {}) {
  const items = [];
  let after = "";
  for (let guard = 0; guard < 10000; guard++) {
    const page = await get(path + query({ ...params, limit: 1000, after }));
    items.push(...(page.items || []));
    if (page.next_after === null || page.next_after === undefined || page.next_after === 0) break;
    after = page.next_after;
  }
  return items;
}

// download fetches path with the token and offers the body as a file.
export async function download(path, filename, accept, binary = false) {
  const r = await request("GET", path, { accept, binary });
  save(r.data, filename, accept);
  return r.data;
}

// save offers data (text or bytes) as a file named filename.
export function save(data, filename, type) {
  const url = URL.createObjectURL(new Blob([data], { type }));
  const a = document.createElement("a");
  a.href = url;
  a.download = filename;
  document.body.append(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 10000);
}

// upload sends a file as the body of a POST with the session's token and
// reports progress: onProgress({phase: "sending", sent, total}) while the
// bytes go out, then {phase: "checking"} while the server reads the rows
// (fetch cannot report upload progress; XMLHttpRequest can). Returns
// {status, data} like request; a refusal throws ApiError with the problem's
// located errors.
export function upload(path, file, { headers = {}, onProgress = () => {}, signal } = {}) {
  return new Promise((resolve, reject) => {
    const xhr = new XMLHttpRequest();
    xhr.open("POST", path);
    xhr.setRequestHeader("Accept", "application/json");
    xhr.setRequestHeader("Content-Type", file.type && file.type !== "application/vnd.ms-excel" ? file.type : "text/csv");
    const tok = getToken();
    if (tok) xhr.setRequestHeader("Authorization", "Bearer " + tok);
    for (const [k, v] of Object.entries(headers)) if (v) xhr.setRequestHeader(k, v);
    xhr.responseType = "text";
    xhr.upload.addEventListener("progress", (e) => onProgress({ phase: "sending", sent: e.loaded, total: e.lengthComputable ? e.total : file.size }));
    xhr.upload.addEventListener("load", () => onProgress({ phase: "checking", sent: file.size, total: file.size }));
    xhr.addEventListener("load", () => {
      let data = null;
      try { data = xhr.responseText ? JSON.parse(xhr.responseText) : null; } catch { data = null; }
      if (xhr.status >= 200 && xhr.status < 300) {
        resolve({ status: xhr.status, data });
        return;
      }
      const problem = data && typeof data === "object" ? data : { title: xhr.statusText, detail: (xhr.responseText || "").slice(0, 300).trim() };
      const err = new ApiError(xhr.status, problem);
      if (xhr.status === 401) onUnauthorized(err);
      reject(err);
    });
    xhr.addEventListener("error", () => reject(new ApiError(0, { title: "The server cannot be reached", detail: "The server cannot be reached while sending the file.", kind: "network" })));
    xhr.addEventListener("abort", () => reject(new DOMException("upload stopped", "AbortError")));
    if (signal) signal.addEventListener("abort", () => xhr.abort());
    onProgress({ phase: "sending", sent: 0, total: file.size });
    xhr.send(file);
  });
}
