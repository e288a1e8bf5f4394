// overview.js: the programme at a glance: holes with collar, depth, share of
// oriented core and QA flags; a plan and a section drawn from the
// desurveyed paths.

import { h, fmt, az, clear, problemText, add, put } from "./dom.js";
import { runs, holePath, qaReport } from "./data.js";
import { planView, sectionView, confidenceFill, el, svg, severity, severityKey } from "./draw.js";
import { confidenceLegend, severityLegend } from "./legend.js";

// orientedShare returns the length under runs of each confidence (overlaps
// counted once, the better rating winning) and the total, in hole units.
function orientedShare(rs, finalDepth) {
  const order = ["good", "fair", "poor", "none"];
  const by = { good: 0, fair: 0, poor: 0, none: 0 };
  const cuts = new Set([0, finalDepth]);
  for (const r of rs) { cuts.add(Math.max(0, Math.min(finalDepth, r.from))); cuts.add(Math.max(0, Math.min(finalDepth, r.to))); }
  const xs = [...cuts].sort((a, b) => a - b);
  for (let i = 0; i + 1 < xs.length; i++) {
    const a = xs[i], b = xs[i + 1];
    const mid = (a + b) / 2;
    let best = -1;
    for (const r of rs) if (r.from <= mid && mid <= r.to) {
      const k = order.indexOf(r.confidence);
      if (best < 0 || (k >= 0 && k < best)) best = k < 0 ? 3 : k;
    }
    if (best >= 0) by[order[best]] += b - a;
  }
  const oriented = by.good + by.fair + by.poor;
  return { ...by, oriented, share: finalDepth > 0 ? oriented / finalDepth : 0 };
}

function shareBar(s, depth) {
  const w = 120, hgt = 14;
  const g = svg(w, hgt, `oriented ${Math.round(s.share * 100)} percent`);
  g.classList.add("sharebar");
  let x = 0;
  for (const k of ["good", "fair", "poor", "none"]) {
    const dw = depth > 0 ? (s[k] / depth) * w : 0;
    if (dw > 0) g.append(el("rect", { x: x.toFixed(2), y: 0, width: dw.toFixed(2), height: hgt, fill: confidenceFill(k) }));
    x += dw;
  }
  g.append(el("rect", { x: 0.5, y: 0.5, width: w - 1, height: hgt - 1, fill: "none", stroke: "#000" }));
  return g;
}

export async function overview(ctx) {
  const { p, host } = ctx;
  const unit = p.unit;
  add(host, h("h1", {}, p.project.name), p.project.description ? h("p", { class: "lede" }, p.project.description) : null);
  const tableBox = h("section", { class: "card", "aria-labelledby": "holes-h" }, h("h2", { id: "holes-h" }, "Holes"), h("p", { class: "loading" }, "Loading runs and QA\u2026"));
  const planBox = h("section", { class: "card" }, h("h2", {}, "Plan"), h("p", { class: "loading" }, "Loading hole paths\u2026"));
  const secBox = h("section", { class: "card" }, h("h2", {}, "Section"));
  add(host, tableBox, h("div", { class: "two" }, planBox, secBox));

  const [allRuns, qa] = await Promise.all([
    Promise.all(p.holes.map((ho) => runs(p.id, ho.id))),
    qaReport(p.id).catch((e) => ({ error: e })),
  ]);
  if (!ctx.isCurrent()) return;
  const flagsBy = new Map();
  const qaOk = !qa.error;
  if (qaOk) for (const f of qa.findings || []) {
    if (f.severity === "info" || !f.hole_id) continue;
    const c = flagsBy.get(f.hole_id) || { flag: 0, warning: 0 };
    c[f.severity === "flag" ? "flag" : "warning"]++;
    flagsBy.set(f.hole_id, c);
  }
  const rows = p.holes.map((ho, i) => {
    const s = orientedShare(allRuns[i], ho.final_depth);
    const f = flagsBy.get(ho.name) || { flag: 0, warning: 0 };
    return h("tr", { "data-hole": ho.name },
      h("th", { scope: "row" }, h("a", { href: `#/p/${p.id}/hole/${ho.id}` }, ho.name)),
      h("td", { class: "num" }, fmt(ho.easting, 1)),
      h("td", { class: "num" }, fmt(ho.northing, 1)),
      h("td", { class: "num" }, fmt(ho.elevation, 1)),
      h("td", { class: "num" }, `${az(ho.azimuth)} / ${fmt(ho.dip, 0)}`),
      h("td", { class: "num" }, fmt(ho.final_depth, 1)),
      h("td", { class: "share" }, shareBar(s, ho.final_depth), h("span", { class: "num" }, ` ${Math.round(s.share * 100)}%`)),
      h("td", { class: "num" }, qaOk
        ? (f.flag + f.warning ? h("a", { href: `#/p/${p.id}/qa?hole=${encodeURIComponent(ho.name)}`, class: f.flag ? "flags has-flag" : "flags" },
          ["flag", "warning"].map((k) => h("span", { class: "sevcount", "data-severity": k }, severityKey(k), String(f[k]), h("span", { class: "sr" }, ` ${severity(k).word}${f[k] === 1 ? "" : "s"} `)))) : "none")
        : "n/a"),
      h("td", {}, h("a", { href: `#/p/${p.id}/log?hole=${ho.id}`, class: "button small" }, "Log")));
  });
  put(tableBox, h("h2", { id: "holes-h" }, `Holes (${p.holes.length})`),
    h("div", { class: "scroll" }, h("table", { class: "data", id: "holes-table" },
      h("thead", {}, h("tr", {},
        h("th", { scope: "col" }, "Hole"), h("th", { scope: "col", class: "num" }, "Easting"), h("th", { scope: "col", class: "num" }, "Northing"),
        h("th", { scope: "col", class: "num" }, "Elevation"), h("th", { scope: "col", class: "num" }, "Azimuth / dip"), h("th", { scope: "col", class: "num" }, "Final depth"),
        h("th", { scope: "col" }, "Oriented core"), h("th", { scope: "col" }, "QA flags"), h("th", { scope: "col" }, h("span", { class: "sr" }, "Actions")))),
      h("tbody", {}, rows))),
    h("p", { class: "help" }, `Collar coordinates, elevations and depths in ${unit === "ft" ? "feet" : "metres"}; collar azimuth from ${p.project.output_azimuth_ref} north, dip negative down.`),
    confidenceLegend(), severityLegend(["flag", "warning"]),
    h("p", { class: "help", id: "overview-fabric" }, qaOk && qa.options && qa.options.persistent_type
      ? [`QA flags with the project's persistent fabric, ${qa.options.persistent_type} (`, h("a", { href: `#/p/${p.id}/qa` }, "QA"), ")."]
      : ["QA flags without a persistent fabric: the mark-rotation check is skipped until the project names one (", h("a", { href: `#/p/${p.id}/qa` }, "QA"), ")."]),
    qa.error ? h("p", { class: "msg bad" }, "QA could not be read: " + problemText(qa.error)) : null);

  let paths;
  try {
    paths = await Promise.all(p.holes.map(async (ho) => ({ id: ho.id, name: ho.name, azimuth: ho.azimuth, path: await holePath(p, ho) })));
  } catch (e) {
    put(planBox, h("h2", {}, "Plan"), h("p", { class: "msg bad" }, "Hole paths could not be read: " + problemText(e)));
    clear(secBox);
    return;
  }
  if (!ctx.isCurrent()) return;
  paths = paths.filter((q) => q.path.length);
  if (!paths.length) {
    put(planBox, h("h2", {}, "Plan"), h("p", {}, "No hole has a path yet."));
    clear(secBox);
    return;
  }
  // The default section runs along the mean collar azimuth (holes in profile)
  // through the centre of the collars.
  let sx = 0, sy = 0;
  for (const q of paths) { sx += Math.sin(q.azimuth * Math.PI / 180); sy += Math.cos(q.azimuth * Math.PI / 180); }
  const meanAz = ((Math.atan2(sx, sy) * 180) / Math.PI + 360) % 360;
  const ce = paths.reduce((a, q) => a + q.path[0].easting, 0) / paths.length;
  const cn = paths.reduce((a, q) => a + q.path[0].northing, 0) / paths.length;
  let ext = 0;
  for (const q of paths) for (const pt of q.path) ext = Math.max(ext, Math.hypot(pt.easting - ce, pt.northing - cn));
  const state = { azimuth: Math.round(meanAz), through: "centre", width: Math.round(Math.max(25, ext / 4)) };

  const azInput = h("input", { id: "sec-az", type: "number", min: 0, max: 360, step: 1, value: state.azimuth, inputmode: "numeric" });
  const thru = h("select", { id: "sec-through" }, h("option", { value: "centre" }, "centre of collars"), paths.map((q) => h("option", { value: q.name }, q.name)));
  const width = h("input", { id: "sec-width", type: "number", min: 1, step: 5, value: state.width, inputmode: "numeric" });
  const controls = h("form", { class: "inline", onsubmit: (e) => e.preventDefault() },
    h("label", { for: "sec-az" }, "Section azimuth (\u00b0)"), azInput,
    h("label", { for: "sec-through" }, "through"), thru,
    h("label", { for: "sec-width" }, `Show full within (${unit})`), width);
  const planHost = h("div", { class: "chart-host" });
  const secHost = h("div", { class: "chart-host" });
  put(planBox, h("h2", {}, "Plan"), planHost, h("p", { class: "help" }, `Collars (dots) and hole traces from the desurveyed paths; A\u2013B is the section line. Azimuths relative to ${p.project.output_azimuth_ref} north.`));
  put(secBox, h("h2", {}, "Section"), controls, secHost, h("p", { class: "help" }, "Traces projected onto the vertical plane through A\u2013B, no vertical exaggeration; holes wholly beyond the distance shown are drawn faint."));

  const draw = () => {
    let a = Number(azInput.value);
    if (!Number.isFinite(a) || a < 0 || a > 360) { azInput.setAttribute("aria-invalid", "true"); return; }
    azInput.removeAttribute("aria-invalid");
    const t = thru.value === "centre" ? { e: ce, n: cn } : (() => { const q = paths.find((x) => x.name === thru.value); return { e: q.path[0].easting, n: q.path[0].northing }; })();
    const line = { azimuth: a % 360, through: t, half: ext * 1.15 + 20, width: Math.max(1, Number(width.value) || state.width) };
    put(planHost, planView(paths, { line, unit, onPick: (hd) => ctx.go(`#/p/${p.id}/hole/${hd.id}`) }));
    put(secHost, sectionView(paths, { line, unit }));
  };
  for (const i of [azInput, thru, width]) i.addEventListener("input", draw);
  draw();
}
