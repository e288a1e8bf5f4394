// qa.js: the QA report of the programme and of each hole, every flag linked
// to the measurement, run or survey station it concerns. QA changes nothing:
// it points at data worth a second look.

import { h, fmt, problemText, add, put } from "./dom.js";
import { qaReport } from "./data.js";
import { query, request, ApiError } from "./api.js";
import { severity, severities, severityKey } from "./draw.js";
import { severityLegend } from "./legend.js";

const cap = (w) => w.charAt(0).toUpperCase() + w.slice(1);

// linkFor returns where a finding points: the measurement or run by its store
// id, the survey station by depth, else the hole.
function linkFor(pid, holeId, f) {
  const base = `#/p/${pid}/hole/${holeId}`;
  switch (f.source) {
    case "structures":
      return f.id ? { href: `${base}?m=${f.id}`, text: `measurement ${f.id}` } : { href: base, text: `measurements near ${fmt(f.depth, 2)}` };
    case "surveys":
      return { href: `${base}?station=${f.depth}`, text: `survey station at ${fmt(f.depth, 1)}` };
    case "runs":
      return f.id ? { href: `${base}?run=${f.id}`, text: `run ${f.id}` } : { href: base, text: `run at ${fmt(f.depth, 1)}` };
    default:
      return { href: base, text: "hole" };
  }
}

export async function qaView(ctx) {
  const { p, host, params } = ctx;
  const unit = p.unit;
  add(host, h("h1", {}, "Quality checks"));
  const onlyHole = params.get("hole") || "";
  const holeSel = h("select", { id: "qa-hole" }, h("option", { value: "" }, "whole programme"), p.holes.map((x) => h("option", { value: x.name, selected: x.name === onlyHole }, x.name)));
  // The fabric of the mark-rotation and fabric checks is the project's
  // setting unless this view is asked for another one: the server uses the
  // project's persistent fabric whenever a request names none.
  const projectFabric = p.project.persistent_fabric || "";
  const persistent = params.get("persistent") || "";
  const fabricSel = h("select", { id: "qa-fabric" },
    h("option", { value: "" }, projectFabric ? `${projectFabric} (the project's setting)` : "none set for the project"),
    p.types.filter((t) => t.code !== projectFabric).map((t) => h("option", { value: t.code, selected: t.code === persistent }, `${t.code} (this view only)`)));
  const reload = () => ctx.go(`#/p/${p.id}/qa` + query({ hole: holeSel.value, persistent: fabricSel.value }));
  holeSel.addEventListener("change", reload);
  fabricSel.addEventListener("change", reload);
  const fabricMsg = h("span", { class: "field-msg", id: "qa-fabric-msg", role: "status" });
  const keep = persistent && persistent !== projectFabric
    ? h("button", { type: "button", id: "qa-fabric-keep", onclick: () => keepFabric(persistent) }, `Make ${persistent} the project's fabric`)
    : null;
  async function keepFabric(code) {
    keep.disabled = true;
    try {
      const pr = p.project;
      await request("PUT", `/v1/projects/${p.id}`, { body: { ...pr, persistent_fabric: code }, ifMatch: `"${pr.version}"` });
      await ctx.refresh();
      ctx.go(`#/p/${p.id}/qa` + query({ hole: holeSel.value }));
    } catch (e) {
      keep.disabled = false;
      fabricMsg.textContent = e instanceof ApiError && e.status === 403
        ? "Only an admin token can change the project's settings."
        : "Not changed: " + problemText(e);
    }
  }
  add(host, h("div", { class: "title-row" }, h("label", { for: "qa-hole" }, "Show"), holeSel,
    h("label", { for: "qa-fabric" }, "Persistent fabric"), fabricSel, keep),
    h("p", { class: "help", id: "qa-fabric-help" }, "The persistent fabric is the structure type that runs through the holes (bedding, a foliation). The mark-rotation check compares each run's poles of it with the neighbouring runs'; the programme overview and this view use the project's setting.", h("br"), fabricMsg));
  const body = h("div", {}, h("p", { class: "loading" }, "Running the checks\u2026"));
  add(host, body);

  let rep;
  try {
    const ho = p.holes.find((x) => x.name === onlyHole);
    rep = await qaReport(p.id, ho ? ho.id : undefined, { persistent });
  } catch (e) {
    put(body, h("p", { class: "msg bad" }, "QA could not be read: " + problemText(e)));
    return;
  }
  if (!ctx.isCurrent()) return;
  const byName = new Map(p.holes.map((x) => [x.name, x]));
  const findings = (rep.findings || []).filter((f) => !onlyHole || !f.hole_id || f.hole_id === onlyHole);
  const sum = rep.summary || {};
  const sev = sum.by_severity || {};
  const cov = sum.coverage || {};
  put(body, 
    h("p", { class: "caution", id: "qa-caution" }, rep.caution || "QA flags guide judgement; they do not replace it."),
    h("section", { class: "card" }, h("h2", {}, onlyHole ? `Summary: ${onlyHole}` : "Summary"),
      h("dl", { class: "summary" },
        h("dt", {}, "Holes"), h("dd", {}, sum.holes ?? "\u2013"),
        h("dt", {}, "Measurements"), h("dd", {}, sum.measurements ?? "\u2013"),
        h("dt", {}, "Runs"), h("dd", {}, sum.runs ?? "\u2013"),
        h("dt", {}, "Oriented core"), h("dd", {}, cov.oriented_share != null ? `${Math.round(cov.oriented_share * 100)}% (confident ${Math.round((cov.confident_share || 0) * 100)}%)` : "\u2013"),
        severities().flatMap((v) => [h("dt", {}, severityKey(v.code), ` ${cap(v.word)}s`), h("dd", { id: `qa-count-${v.code}` }, sev[v.code] ?? 0)]),
        h("dt", {}, "Runs flagged for mark rotation"), h("dd", {}, sum.runs_flagged ?? 0),
        h("dt", {}, "Persistent fabric used"), h("dd", { id: "qa-fabric-used" }, (rep.options && rep.options.persistent_type) || "none (fabric checks skipped)")),
      severityLegend()));

  const groups = new Map();
  for (const f of findings) {
    const k = f.hole_id || "";
    if (!groups.has(k)) groups.set(k, []);
    groups.get(k).push(f);
  }
  const keys = [...groups.keys()].sort((a, b) => (a === "" ? -1 : b === "" ? 1 : a.localeCompare(b, undefined, { numeric: true })));
  if (!keys.length) add(body, h("p", { class: "ok" }, "No findings."));
  const holeRep = new Map((rep.holes || []).map((x) => [x.hole_id, x]));
  const clean = (rep.holes || []).map((x) => x.hole_id).filter((n) => !groups.has(n) && (!onlyHole || n === onlyHole));
  if (clean.length) add(body, h("p", { class: "ok" }, `No findings in ${clean.join(", ")}.`));
  for (const k of keys) {
    const order = (x) => { const i = severities().findIndex((v) => v.code === x.severity); return i < 0 ? 99 : i; };
    const list = groups.get(k).sort((a, b) => order(a) - order(b) || a.depth - b.depth);
    const ho = byName.get(k);
    add(body, h("section", { class: "card qa-hole", "data-hole": k },
      h("h2", {}, k ? (ho ? h("a", { href: `#/p/${p.id}/hole/${ho.id}` }, `Hole ${k}`) : `Hole ${k}`) : "Programme-wide"),
      holeLine(holeRep.get(k)),
      h("div", { class: "scroll" }, h("table", { class: "data findings" },
        h("thead", {}, h("tr", {}, ["Severity", `Depth (${unit})`, "Check", "Finding", "Concerns"].map((t) => h("th", { scope: "col" }, t)))),
        h("tbody", {}, list.map((f) => {
          const link = ho ? linkFor(p.id, ho.id, f) : null;
          return h("tr", { class: `sev-${f.severity}` },
            h("td", {}, h("span", { class: `badge ${f.severity}`, "data-severity": f.severity }, severityKey(f.severity), cap(severity(f.severity).word))),
            h("td", { class: "num" }, k ? fmt(f.depth, 2) + (f.depth_to ? `\u2013${fmt(f.depth_to, 2)}` : "") : ""),
            h("td", {}, h("code", {}, f.check)),
            h("td", {}, f.message, f.logged_by ? ` (${f.logged_by})` : ""),
            h("td", {}, link ? h("a", { href: link.href, class: "concerns" }, link.text) : ""));
        }))))));
  }
}

function holeLine(hr) {
  if (!hr) return null;
  const c = hr.coverage || {};
  const rotated = (hr.runs || []).filter((r) => r.rotation && r.rotation.flagged).length;
  return h("p", { class: "help" },
    `Oriented ${Math.round((c.oriented_share || 0) * 100)}% of the hole (confident ${Math.round((c.confident_share || 0) * 100)}%); ` +
    `${hr.measurements ?? 0} measurements, ${hr.outside_runs ?? 0} outside any run, ${hr.in_unusable_runs ?? 0} in unusable runs` +
    (rotated ? `; ${rotated} run${rotated === 1 ? "" : "s"} with a suggested mark rotation.` : "."));
}
