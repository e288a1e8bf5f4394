// logging.js: the bench form. Keyboard first: Tab moves between fields,
// Enter saves, Escape clears the angles. The converted orientation, its
// warnings and the new pole on the hole's net follow the numbers as they are
// typed; the server orients them against the stored hole (the preview
// route, the same hole model as saved measurements), the page only shows.

import { request, ApiError } from "./api.js";
import { h, fmt, az, clear, say, problemText, add, put } from "./dom.js";
import { preview as previewOf, measurements, runs } from "./data.js";
import { smallNet, styleOfType, shapeKey } from "./draw.js";

// FIELDS lists the form's inputs with the range each must hold. The ranges
// are the API's own (conventions: alpha 0..90, beta and gamma 0..360).
const FIELDS = [
  { name: "depth", label: "Depth", unit: true, required: true, min: 0 },
  { name: "type", label: "Type", required: true },
  { name: "alpha", label: "Alpha (\u00b0)", required: true, min: 0, max: 90 },
  { name: "beta", label: "Beta (\u00b0)", required: true, min: 0, max: 360 },
  { name: "gamma", label: "Gamma (\u00b0)", min: 0, max: 360, hint: "for a lineation; leave empty for a plane" },
  { name: "apparent_thickness", label: "Thickness", unit: true, min: 0, hint: "apparent, along the core" },
  { name: "comment", label: "Comment" },
  { name: "logged_by", label: "Logged by", required: true, hint: "the person logging; remembered in this browser" },
];

// LOGGER_KEY keeps the logger's name in this browser, so the bench asks once.
const LOGGER_KEY = "corvane.logger";

// check returns the message for a value out of range or unreadable, "" when
// the value is fine. Numbers may be typed with a decimal comma.
export function check(f, raw, finalDepth) {
  const v = String(raw ?? "").trim();
  if (!v) return f.required ? `${f.label.replace(/ \(.*\)/, "")} is required.` : "";
  if (f.name === "type" || f.name === "comment" || f.name === "logged_by") return f.name === "comment" && v.length > 2000 ? "Comment is longer than 2000 characters." : "";
  const x = Number(v.replace(",", "."));
  if (!Number.isFinite(x)) return `\u201c${v}\u201d is not a number.`;
  const name = f.label.replace(/ \(.*\)/, "");
  if (f.name === "depth") {
    if (x < 0) return "Depth cannot be negative.";
    if (finalDepth !== undefined && x > finalDepth) return `Depth ${x} is past the hole's final depth ${finalDepth}.`;
    return "";
  }
  if (f.max !== undefined && (x < f.min || x > f.max)) return `${name} must be between ${f.min} and ${f.max}\u00b0; ${x} is out of range.`;
  if (x < f.min) return `${name} cannot be negative.`;
  return "";
}

function num(v) {
  const t = String(v ?? "").trim();
  return t === "" ? null : Number(t.replace(",", "."));
}

export async function logging(ctx) {
  const { p, host, params } = ctx;
  const unit = p.unit;
  if (!p.holes.length) {
    add(host, h("h1", {}, "Log a measurement"), h("p", { class: "msg" }, "This programme has no holes yet."));
    return;
  }
  const editId = params.get("edit");
  let holeId = Number(params.get("hole")) || (p.holes[0] && p.holes[0].id);
  let editing = null; // {id, etag, server}
  const holeOf = (id) => p.holes.find((x) => x.id === Number(id));

  const inputs = {};
  const msgs = {};
  const holeSel = h("select", { id: "f-hole", name: "hole" }, p.holes.map((ho) => h("option", { value: ho.id }, ho.name)));
  const fields = FIELDS.map((f) => {
    let input;
    if (f.name === "type") {
      input = p.types.length
        ? h("select", { id: "f-type", name: "type" }, h("option", { value: "" }, "\u2014 choose \u2014"), p.types.map((t) => h("option", { value: t.code }, !t.description || t.description.toLowerCase() === t.code.toLowerCase() ? t.code : `${t.code} \u2013 ${t.description}`)))
        : h("input", { id: "f-type", name: "type", autocomplete: "off" });
    } else if (f.name === "comment") {
      input = h("input", { id: "f-comment", name: "comment", autocomplete: "off", maxlength: 2000 });
    } else if (f.name === "logged_by") {
      input = h("input", { id: "f-logged_by", name: "logged_by", autocomplete: "off", list: "loggers", maxlength: 200, value: localStorage.getItem(LOGGER_KEY) || "" });
    } else {
      input = h("input", { id: `f-${f.name}`, name: f.name, inputmode: "decimal", autocomplete: "off", spellcheck: "false" });
    }
    input.setAttribute("aria-describedby", `m-${f.name}`);
    inputs[f.name] = input;
    msgs[f.name] = h("span", { class: "field-msg", id: `m-${f.name}`, "aria-live": "polite" }, f.hint || "");
    const label = f.unit ? `${f.label} (${unit})` : f.label;
    return h("div", { class: "field", "data-field": f.name }, h("label", { for: input.id }, label), input, msgs[f.name]);
  });
  const formMsg = h("div", { class: "form-msg", id: "form-msg", role: "alert" });
  const loggers = h("datalist", { id: "loggers" });
  const saveBtn = h("button", { type: "submit", class: "primary", id: "save" }, "Save");
  const title = h("h1", {}, "Log a measurement");
  const mode = h("p", { class: "mode", id: "mode" });
  const form = h("form", { class: "log-form card", id: "log-form", novalidate: true },
    h("div", { class: "field", "data-field": "hole" }, h("label", { for: "f-hole" }, "Hole"), holeSel, h("span", { class: "field-msg", id: "m-hole" })),
    fields, loggers,
    h("div", { class: "actions" }, saveBtn, h("button", { type: "button", class: "quiet", id: "clear", onclick: () => clearAngles() }, "Clear angles"),
      h("span", { class: "keys" }, h("kbd", {}, "Enter"), " saves \u00b7 ", h("kbd", {}, "Esc"), " clears the angles \u00b7 ", h("kbd", {}, "Tab"), " next field")),
    formMsg);
  const conflictBox = h("section", { class: "conflict", id: "conflict", hidden: true, role: "alert" });
  const preview = h("section", { class: "preview card", id: "preview", "aria-live": "polite" });
  const netHost = h("div", { class: "net-host", id: "log-net" });
  const legend = h("div", { class: "legend", id: "net-legend" });
  const recent = h("section", { class: "card" }, h("h2", {}, "Saved in this session"), h("p", { class: "help", id: "recent-empty" }, "Nothing yet."));
  add(host, title, mode, h("div", { class: "log-grid" },
    h("div", {}, form, conflictBox),
    h("div", {}, preview, h("section", { class: "card" }, h("h2", {}, "Poles of this hole"), netHost, legend))),
    recent);

  let existing = [];
  let holeRuns = [];
  let newPole = null;

  const hole = () => holeOf(holeSel.value);

  async function loadHole() {
    const ho = hole();
    [existing, holeRuns] = await Promise.all([measurements(p.id, { hole: ho.name }), runs(p.id, ho.id)]);
    if (!ctx.isCurrent()) return;
    const names = new Set([localStorage.getItem(LOGGER_KEY) || "", ...existing.map((m) => m.logged_by)].filter(Boolean));
    put(loggers, ...[...names].sort().map((n) => h("option", { value: n })));
    drawNet();
    update();
  }

  function drawNet() {
    const byType = new Map();
    for (const m of existing) {
      if (editing && m.id === editing.id) continue;
      const d = m.derived || {};
      if (!Number.isFinite(d.pole_trend) || !Number.isFinite(d.pole_plunge)) continue;
      if (!byType.has(m.type)) byType.set(m.type, []);
      byType.get(m.type).push({ trend: d.pole_trend, plunge: d.pole_plunge });
    }
    const groups = [...byType.entries()].map(([code, poles]) => ({ label: code, style: styleOfType(p.types, code), poles }));
    if (newPole) groups.push({ label: "new", style: styleOfType(p.types, inputs.type.value), poles: [newPole], emphasis: true });
    const ho = hole();
    put(netHost, smallNet(groups, { size: 280, label: `Poles of hole ${ho.name}, equal-area, lower hemisphere` }));
    put(legend, ...[
      ...groups.filter((g) => !g.emphasis).map((g) => h("span", { class: "key", "data-type": g.label, "data-colour": g.style.colour, "data-mark": g.style.shape }, shapeKey(g.style), `${g.label} (${g.poles.length})`)),
      newPole ? h("span", { class: "key new" }, h("span", { class: "ring" }), "the pole being typed") : null,
      h("span", { class: "help" }, " Equal-area net, lower hemisphere; poles to planes.")].filter(Boolean));
  }

  function values() {
    const o = {};
    for (const f of FIELDS) o[f.name] = inputs[f.name].value;
    return o;
  }

  function validate(show) {
    const ho = hole();
    let first = null;
    for (const f of FIELDS) {
      const m = check(f, inputs[f.name].value, ho.final_depth);
      if (m) {
        if (show || inputs[f.name].value.trim() !== "") setMsg(f.name, m, true);
        first = first || f.name;
      } else {
        setMsg(f.name, f.hint || "", false);
      }
    }
    typeHint();
    return first;
  }

  function setMsg(name, text, bad) {
    const input = inputs[name];
    if (!input) return;
    msgs[name].textContent = text;
    msgs[name].classList.toggle("bad", !!bad);
    if (bad) input.setAttribute("aria-invalid", "true");
    else input.removeAttribute("aria-invalid");
  }

  let timer = 0;
  let inflight = null;
  function update() {
    const bad = validate(false);
    // "Not saved" stays only while a field is still wrong.
    if (formMsg.classList.contains("bad") && !bad && !document.querySelector("#log-form [aria-invalid=true]")) {
      formMsg.textContent = "";
      formMsg.className = "form-msg";
    }
    if (formMsg.classList.contains("ok")) {
      formMsg.textContent = "";
      formMsg.className = "form-msg";
    }
    clearTimeout(timer);
    timer = setTimeout(runPreview, 120);
  }

  async function runPreview() {
    const ho = hole();
    const v = values();
    const ok = ["depth", "alpha", "beta"].every((n) => v[n].trim() !== "" && !check(FIELDS.find((f) => f.name === n), v[n], ho.final_depth))
      && !check(FIELDS[4], v.gamma) && !check(FIELDS[5], v.apparent_thickness);
    if (!ok) {
      newPole = null;
      drawNet();
      renderPreview(null);
      return;
    }
    if (inflight) inflight.abort();
    inflight = new AbortController();
    const m = { depth: num(v.depth), alpha: num(v.alpha), beta: num(v.beta), gamma: num(v.gamma), apparent_thickness: num(v.apparent_thickness) };
    try {
      const [r] = await previewOf(p, ho, [m], inflight.signal);
      if (!ctx.isCurrent()) return;
      const d = r.derived || {};
      newPole = Number.isFinite(d.pole_plunge) ? { trend: Number.isFinite(d.pole_trend) ? d.pole_trend : 0, plunge: d.pole_plunge } : null;
      drawNet();
      renderPreview(d, m.depth);
    } catch (e) {
      if (e.name === "AbortError") return;
      renderPreview({ error: problemText(e) });
    }
  }

  function runAt(depth) {
    const r = holeRuns.find((x) => depth >= x.from && depth <= x.to);
    return r ? `${r.confidence} (run ${fmt(r.from, 1)}\u2013${fmt(r.to, 1)} ${unit})` : "no run covers this depth";
  }

  function renderPreview(d, depth) {
    put(preview, h("h2", {}, "Converted"));
    if (!d) {
      add(preview, h("p", { class: "help" }, "Type depth, alpha and beta to see the plane."));
      return;
    }
    if (d.error) {
      add(preview, h("p", { class: "msg bad", id: "preview-error" }, d.error));
      return;
    }
    const ref = d.azimuth_ref ? `${d.azimuth_ref} north` : "";
    add(preview, 
      h("p", { class: "big", id: "pv-plane" },
        h("span", { class: "dip", id: "pv-dip", "data-value": d.dip }, fmt(d.dip, 0)), h("span", { class: "sep" }, "\u2192"),
        h("span", { class: "dipdir", id: "pv-dipdir", "data-value": d.dip_direction }, d.dip_direction == null ? "\u2013\u2013\u2013" : az(d.dip_direction))),
      h("p", { class: "help" }, `dip \u2192 dip direction, degrees${ref ? ", from " + ref : ""}`),
      h("dl", { class: "derived" },
        h("dt", {}, "Strike (right hand)"), h("dd", {}, d.strike == null ? "\u2013" : az(d.strike)),
        h("dt", {}, "Pole trend / plunge"), h("dd", { id: "pv-pole" }, `${az(d.pole_trend)} / ${fmt(d.pole_plunge, 0)}`),
        d.line_trend != null ? [h("dt", {}, "Line trend / plunge"), h("dd", { id: "pv-line" }, `${az(d.line_trend)} / ${fmt(d.line_plunge, 0)}`)] : null,
        d.true_thickness != null ? [h("dt", {}, `True thickness (${unit})`), h("dd", {}, fmt(d.true_thickness, 2))] : null,
        h("dt", {}, "Hole at depth (az / dip)"), h("dd", {}, `${az(d.hole_azimuth)} / ${fmt(d.hole_dip, 1)}`),
        h("dt", {}, "Orientation run"), h("dd", { id: "pv-run" }, d.run_confidence || runAt(depth))),
      (d.warnings && d.warnings.length)
        ? h("ul", { class: "warnings", id: "pv-warnings" }, d.warnings.map((w) => h("li", {}, w)))
        : h("p", { class: "ok", id: "pv-warnings" }, "No warnings."));
  }

  function clearAngles() {
    for (const n of ["alpha", "beta", "gamma", "apparent_thickness", "comment"]) inputs[n].value = "";
    formMsg.textContent = "";
    newPole = null;
    update();
    inputs.alpha.focus();
  }

  function fill(m) {
    holeSel.value = String(m.hole_id);
    inputs.depth.value = m.depth;
    inputs.type.value = m.type;
    inputs.alpha.value = m.alpha;
    inputs.beta.value = m.beta;
    inputs.gamma.value = m.gamma ?? "";
    inputs.apparent_thickness.value = m.apparent_thickness ?? "";
    inputs.comment.value = m.comment || "";
    inputs.logged_by.value = m.logged_by || inputs.logged_by.value;
  }

  // typeHint says what the chosen type asks of gamma; the server holds the
  // rule and refuses a measurement that breaks it.
  function typeHint() {
    const t = p.types.find((x) => x.code === inputs.type.value);
    const hint = !t ? FIELDS[4].hint : t.kind === "line" ? `required: ${t.code} is a line type` : `leave empty: ${t.code} is a plane type`;
    if (!msgs.gamma.classList.contains("bad")) msgs.gamma.textContent = hint;
  }

  function body() {
    const v = values();
    return {
      hole_id: Number(holeSel.value), depth: num(v.depth), type: v.type.trim(), alpha: num(v.alpha), beta: num(v.beta),
      gamma: num(v.gamma), apparent_thickness: num(v.apparent_thickness), comment: v.comment, logged_by: v.logged_by.trim(),
    };
  }

  function showServerProblem(e) {
    const located = [];
    for (const it of e.errors || []) {
      const name = String(it.field || it.column || "").split(/[.\[]/).filter(Boolean).pop();
      const key = name === "hole_id" || name === "hole" ? "hole" : name;
      if (inputs[key]) { setMsg(key, it.detail, true); located.push(key); }
      else if (key === "hole") document.getElementById("m-hole").textContent = it.detail;
    }
    formMsg.className = "form-msg bad";
    formMsg.textContent = `Not saved: ${problemText(e)}. Everything you typed is still here.`;
    if (located.length) inputs[located[0]].focus();
  }

  async function save() {
    formMsg.textContent = "";
    formMsg.className = "form-msg";
    const bad = validate(true);
    if (bad) {
      formMsg.className = "form-msg bad";
      formMsg.textContent = "Not saved: correct the field marked. Everything you typed is still here.";
      inputs[bad].focus();
      return;
    }
    saveBtn.disabled = true;
    try {
      let r;
      if (editing) {
        r = await request("PUT", `/v1/projects/${p.id}/measurements/${editing.id}`, { body: body(), ifMatch: editing.etag });
      } else {
        r = await request("POST", `/v1/projects/${p.id}/measurements`, { body: body() });
      }
      const m = r.data;
      localStorage.setItem(LOGGER_KEY, m.logged_by || "");
      addRecent(m, r.etag);
      existing = existing.filter((x) => x.id !== m.id).concat([m]);
      if (editing) {
        editing = null;
        conflictBox.hidden = true;
        setMode();
        history.replaceState(null, "", `#/p/${p.id}/log?hole=${holeSel.value}`);
      }
      formMsg.className = "form-msg ok";
      formMsg.textContent = `Saved measurement ${m.id} by ${m.logged_by}: ${m.type} at ${m.depth} ${unit}, dip ${fmt(m.derived && m.derived.dip, 0)} \u2192 ${az(m.derived && m.derived.dip_direction)}.`;
      for (const n of ["alpha", "beta", "gamma", "apparent_thickness", "comment"]) inputs[n].value = "";
      newPole = null;
      drawNet();
      renderPreview(null);
      inputs.depth.focus();
      inputs.depth.select();
    } catch (e) {
      if (!(e instanceof ApiError)) throw e;
      if (e.status === 412 && editing) await showConflict();
      else if (e.status !== 401) showServerProblem(e);
    } finally {
      saveBtn.disabled = false;
    }
  }

  async function showConflict() {
    let now = null;
    let etag = "";
    try {
      const r = await request("GET", `/v1/projects/${p.id}/measurements/${editing.id}`);
      now = r.data;
      etag = r.etag;
    } catch (e) {
      if (e instanceof ApiError && e.status === 404) {
        put(conflictBox, h("h2", {}, "This measurement was deleted"),
          h("p", {}, "Someone deleted it after you opened it. Your values are still in the form; save them as a new measurement if they are right."),
          h("button", { type: "button", class: "primary", onclick: () => { editing = null; setMode(); conflictBox.hidden = true; save(); } }, "Save as new"));
        conflictBox.hidden = false;
        return;
      }
      throw e;
    }
    const mine = body();
    const rows = ["depth", "type", "alpha", "beta", "gamma", "apparent_thickness", "comment"].map((k) => {
      const a = mine[k] ?? "", b = now[k] ?? "";
      const differs = String(a) !== String(b);
      return h("tr", { class: differs ? "differs" : "" }, h("th", { scope: "row" }, k.replace("_", " ")), h("td", {}, String(a)), h("td", {}, String(b)), h("td", {}, differs ? "differs" : ""));
    });
    put(conflictBox, 
      h("h2", {}, "Changed by someone else"),
      h("p", {}, `Measurement ${now.id} was changed on the server after you opened it (you opened version ${editing.version}; it is now version ${now.version}). Nothing was overwritten. Compare and choose:`),
      h("table", { class: "data compact" }, h("thead", {}, h("tr", {}, h("th", {}, ""), h("th", {}, "Yours (not saved)"), h("th", {}, "On the server now"), h("th", {}, ""))), h("tbody", {}, rows)),
      h("div", { class: "actions" },
        h("button", { type: "button", class: "primary", id: "conflict-mine", onclick: () => { editing.etag = etag; editing.version = now.version; conflictBox.hidden = true; save(); } }, "Save mine over theirs"),
        h("button", { type: "button", id: "conflict-theirs", onclick: () => { editing.etag = etag; editing.version = now.version; setMode(); fill(now); conflictBox.hidden = true; formMsg.textContent = "Loaded the server's version."; update(); } }, "Take theirs")));
    conflictBox.hidden = false;
    formMsg.className = "form-msg bad";
    formMsg.textContent = "Not saved: this measurement changed on the server since you opened it.";
    conflictBox.querySelector("#conflict-mine").focus();
  }

  const recentBody = h("tbody");
  const recentTable = h("table", { class: "data", id: "recent" }, h("thead", {}, h("tr", {},
    ["Id", "Hole", `Depth (${unit})`, "Type", "\u03b1", "\u03b2", "\u03b3", "Dip \u2192 dir.", "Warnings", "Logged by", ""].map((t) => h("th", { scope: "col" }, t)))), recentBody);
  function addRecent(m) {
    const old = recentBody.querySelector(`tr[data-id="${m.id}"]`);
    if (old) old.remove();
    const d = m.derived || {};
    const ho = holeOf(m.hole_id);
    recentBody.prepend(h("tr", { "data-id": m.id },
      h("td", { class: "num" }, m.id), h("td", {}, ho ? ho.name : m.hole || ""), h("td", { class: "num" }, fmt(m.depth, 2)), h("td", {}, m.type),
      h("td", { class: "num" }, fmt(m.alpha, 0)), h("td", { class: "num" }, fmt(m.beta, 0)), h("td", { class: "num" }, m.gamma == null ? "" : fmt(m.gamma, 0)),
      h("td", { class: "num" }, `${fmt(d.dip, 0)} \u2192 ${az(d.dip_direction)}`),
      h("td", {}, (d.warnings || []).join("; ")), h("td", { "data-key": "logged_by" }, m.logged_by),
      h("td", {}, h("a", { href: `#/p/${p.id}/log?hole=${m.hole_id}&edit=${m.id}` }, "Edit"))));
    const empty = recent.querySelector("#recent-empty");
    if (empty) { empty.remove(); add(recent, h("div", { class: "scroll" }, recentTable)); }
  }

  function setMode() {
    title.textContent = editing ? `Edit measurement ${editing.id}` : "Log a measurement";
    saveBtn.textContent = editing ? "Save change" : "Save";
    clear(mode);
    if (editing) add(mode, `Editing version ${editing.version}. `, h("a", { href: `#/p/${p.id}/log?hole=${holeSel.value}` }, "Log a new one instead"));
  }

  form.addEventListener("submit", (e) => { e.preventDefault(); save(); });
  form.addEventListener("keydown", (e) => {
    if (e.key === "Escape") { e.preventDefault(); clearAngles(); }
    if (e.key === "Enter" && e.target.tagName === "SELECT") { e.preventDefault(); save(); }
  });
  form.addEventListener("input", (e) => { if (e.target !== holeSel) update(); });
  holeSel.addEventListener("change", () => { existing = []; loadHole().catch((e) => say(problemText(e), "bad")); });
  inputs.type.addEventListener("change", () => drawNet());

  holeSel.value = String(holeId);
  if (editId) {
    const r = await request("GET", `/v1/projects/${p.id}/measurements/${editId}`);
    editing = { id: r.data.id, etag: r.etag, version: r.data.version };
    fill(r.data);
  }
  setMode();
  renderPreview(null);
  await loadHole();
  if (!ctx.isCurrent()) return;
  (editing ? inputs.alpha : inputs.depth).focus();
}
