// dom.js: small helpers to build HTML elements and format numbers.

export function h(tag, attrs = {}, ...children) {
  const e = document.createElement(tag);
  for (const [k, v] of Object.entries(attrs || {})) {
    if (v === undefined || v === null || v === false) continue;
    if (k.startsWith("on") && typeof v === "function") e.addEventListener(k.slice(2), v);
    else if (k === "class") e.className = v;
    else if (k === "dataset") Object.assign(e.dataset, v);
    else if (v === true) e.setAttribute(k, "");
    else e.setAttribute(k, String(v));
  }
  for (const c of children.flat()) {
    if (c === null || c === undefined || c === false) continue;
    e.append(c instanceof Node ? c : document.createTextNode(String(c)));
  }
  return e;
}

// fmt formats a number with d decimals, or an en dash when missing.
export function fmt(v, d = 1) {
  if (v === null || v === undefined || v === "" || !Number.isFinite(Number(v))) return "\u2013";
  return Number(v).toFixed(d);
}

// angle formats a whole-degree angle with leading zeros for azimuths.
export function az(v) {
  if (v === null || v === undefined || !Number.isFinite(Number(v))) return "\u2013";
  return String(Math.round(Number(v)) % 360).padStart(3, "0");
}

export function clear(node) {
  while (node.firstChild) node.firstChild.remove();
  return node;
}

let statusTimer = 0;
// say shows a short message in the status line (read out by screen readers).
export function say(text, kind = "info") {
  const s = document.getElementById("status");
  s.className = kind;
  s.textContent = text;
  clearTimeout(statusTimer);
  if (text && kind !== "bad") statusTimer = setTimeout(() => { s.textContent = ""; s.className = ""; }, 6000);
}

// problemText turns an ApiError into one readable line.
export function problemText(err) {
  if (!err) return "";
  const p = err.problem || {};
  let t = p.detail || p.title || err.message || "Request failed";
  if (err.status) t = `${t} (HTTP ${err.status})`;
  return t;
}

// add appends children to node, leaving out null, undefined and false (which
// Element.append would write as text).
export function add(node, ...children) {
  node.append(...children.flat().filter((c) => c !== null && c !== undefined && c !== false));
  return node;
}

// put replaces node's children.
export function put(node, ...children) {
  return add(clear(node), ...children);
}
