// geotech.js: the geotechnical half of the nets view: core intervals
// (recovery, RQD and fracture frequency along a hole), set spacing and
// frequency, structural domains with the test for a common mean direction,
// and kinematic checks of a face with the critical zones shaded on the net.
// Every figure comes from the API (package geotech behind the routes); the
// page draws and words them, nothing more.

import { request, get, query, save } from "./api.js";
import { h, fmt, az, say, problemText, add, put } from "./dom.js";
import { svg, el, confidenceFill, shapeKey } from "./draw.js";
import { confidenceLegend } from "./legend.js";
import { showNet, setKeys } from "./nets.js";

const pct = (v) => (v == null ? "\u2013" : `${fmt(v, 0)}%`);
const plane = (m) => (m ? `${fmt(m.dip, 0)} \u2192 ${az(m.dip_direction)}` : "\u2013");

// parseDomain reads NAME=HOLE[:FROM..TO][,HOLE[:FROM..TO]...][;rock=...],
// the routes' and the CLI's spelling, into {name, parts: [{hole, from, to}]}
// for the page's own use (which holes a domain names); null when it does
// not read. The server checks every definition itself.
export function parseDomain(def) {
  const m = /^([^=]+)=(.+)$/.exec(String(def).trim());
  if (!m) return null;
  const [holesPart] = m[2].split(";");
  const parts = holesPart.split(",").map((x) => x.trim()).filter(Boolean).map((x) => {
    const r = /^(.+?)(?::([0-9.]+)\.\.([0-9.]+))?$/.exec(x);
    return { hole: r[1], from: r[2] ?? "", to: r[3] ?? "" };
  });
  return parts.length ? { name: m[1].trim(), parts, rock: m[2].includes(";") } : null;
}

// PARTS of the geotechnical half, in the order of the tabs.
export const PARTS = [
  { code: "intervals", label: "Core intervals" },
  { code: "spacing", label: "Spacing" },
  { code: "domains", label: "Domains" },
  { code: "slope", label: "Slope check" },
];

// selection reads the part's shared choices from the URL: holes, sets,
// domains.
function selection(params) {
  return {
    hole: (params.get("hole") || "").split(",").filter(Boolean),
    sets: params.get("sets") || "auto:4",
    domain: params.getAll("domain").filter(Boolean),
  };
}

// domainQuery adds the domains as repeated domain= parameters (after a
// query that has begun).
const domainQuery = (defs) => defs.map((d) => "&domain=" + encodeURIComponent(d)).join("");

// report reads a report into out: the report, or null with the problem
// shown in out under the words given.
async function report(ctx, out, path, failed) {
  try {
    const rep = await get(path);
    return ctx.isCurrent() ? rep : null;
  } catch (e) {
    put(out, h("p", { class: "msg bad" }, `${failed}: ${problemText(e)}`));
    return null;
  }
}

function setsSelect(id, value) {
  const s = h("select", { id }, h("option", { value: "type" }, "by type code"), [2, 3, 4, 5, 6].map((n) => h("option", { value: `auto:${n}` }, `${n} automatic sets`)));
  s.value = value;
  if (s.value !== value) s.value = "auto:4";
  return s;
}

// caution is the report's caution, shown once per part.
const caution = (rep, id) => (rep && rep.caution ? h("p", { class: "caution", id }, rep.caution) : null);

export async function geotechView(ctx, part) {
  switch (part) {
    case "intervals": return intervalsPart(ctx);
    case "spacing": return spacingPart(ctx);
    case "domains": return domainsPart(ctx);
    case "slope": return slopePart(ctx);
  }
  add(ctx.host, h("p", { class: "msg bad" }, `There is no part called \u201c${part}\u201d.`));
}

// ---- core intervals ----

// intervalChart draws one hole's intervals down the page: run confidence,
// total and solid core recovery, RQD and fracture frequency, each interval a
// bar at its depths.
function intervalChart(hole, ivs, unit, finalDepth) {
  const depth = Math.max(finalDepth || 0, ...ivs.map((x) => x.to));
  const top = 52, bottom = 14, left = 46;
  const colW = 120, gap = 18;
  const cols = [
    { key: "tcr", head: "Recovery %", max: 100, sub: "TCR bar, SCR line" },
    { key: "rqd", head: "RQD %", max: 100 },
    { key: "fracture_frequency", head: `Fractures per ${unit}`, max: Math.max(1, ...ivs.map((x) => x.fracture_frequency || 0)) },
  ];
  const xConf = left;
  const x0 = xConf + 22 + gap;
  const w = x0 + cols.length * (colW + gap);
  const hgt = Math.max(420, Math.min(1400, depth * 2.2)) + top + bottom;
  const s = svg(w, hgt, `Core intervals of hole ${hole}: recovery, RQD and fracture frequency along the hole`);
  const Y = (d) => top + (d / Math.max(1, depth)) * (hgt - top - bottom);
  const ax = el("g", { class: "grid" });
  const step = niceStep(depth, 10);
  for (let d = 0; d <= depth + 1e-9; d += step) {
    ax.append(el("line", { x1: left - 6, y1: Y(d).toFixed(1), x2: w - 4, y2: Y(d).toFixed(1) }));
    ax.append(el("text", { x: left - 8, y: (Y(d) + 4).toFixed(1), "text-anchor": "end" }, String(Math.round(d))));
  }
  ax.append(el("text", { x: 4, y: 14, class: "axis" }, `Depth (${unit})`));
  s.append(ax);
  s.append(el("text", { x: xConf + 11, y: top - 10, "text-anchor": "middle", class: "head" }, "Run"));
  cols.forEach((c, i) => {
    const x = x0 + i * (colW + gap);
    s.append(el("text", { x: x + colW / 2, y: top - 24, "text-anchor": "middle", class: "head" }, c.head));
    s.append(el("text", { x, y: top - 8, class: "small" }, "0"));
    s.append(el("text", { x: x + colW, y: top - 8, "text-anchor": "end", class: "small" }, fmt(c.max, c.max >= 10 ? 0 : 1)));
    s.append(el("line", { x1: x, y1: top, x2: x, y2: hgt - bottom, stroke: "#000", "stroke-width": 1 }));
  });
  for (const iv of ivs) {
    const y1 = Y(iv.from), y2 = Y(iv.to), hh = Math.max(1, y2 - y1);
    const tip = `${fmt(iv.from, 2)}\u2013${fmt(iv.to, 2)} ${unit}: TCR ${pct(iv.tcr)}, SCR ${pct(iv.scr)}, RQD ${pct(iv.rqd)}, ${fmt(iv.fracture_frequency, 1)} fractures/${unit}`;
    if (iv.confidence) {
      const r = el("rect", { x: xConf, y: y1.toFixed(2), width: 22, height: hh.toFixed(2), fill: confidenceFill(iv.confidence), stroke: "#000", "stroke-width": 0.5, "data-confidence": iv.confidence });
      r.append(el("title", {}, `${fmt(iv.from, 2)}\u2013${fmt(iv.to, 2)} ${unit}: run ${iv.confidence}`));
      s.append(r);
    }
    cols.forEach((c, i) => {
      const v = iv[c.key];
      if (v == null) return;
      const x = x0 + i * (colW + gap);
      const bar = el("rect", { x, y: y1.toFixed(2), width: ((Math.min(v, c.max) / c.max) * colW).toFixed(2), height: hh.toFixed(2), class: `iv-bar iv-${c.key}`, "data-value": v });
      bar.append(el("title", {}, tip));
      s.append(bar);
      if (c.key === "tcr" && iv.scr != null) {
        const xs = x + (Math.min(iv.scr, 100) / 100) * colW;
        s.append(el("line", { x1: xs.toFixed(2), y1: y1.toFixed(2), x2: xs.toFixed(2), y2: (y1 + hh).toFixed(2), class: "iv-scr" }));
      }
    });
  }
  return s;
}

function niceStep(span, target) {
  const raw = span / Math.max(1, target);
  const p = Math.pow(10, Math.floor(Math.log10(Math.max(raw, 1e-9))));
  for (const m of [1, 2, 2.5, 5, 10]) if (m * p >= raw) return m * p;
  return 10 * p;
}

async function intervalsPart(ctx) {
  const { p, host, params } = ctx;
  const unit = p.unit;
  const rep = await get(`/v1/projects/${p.id}/intervals/summary`);
  if (!ctx.isCurrent()) return;
  const logged = (rep.holes || []).filter((x) => (x.intervals || []).length);
  const pick = params.get("hole") || (logged[0] && logged[0].hole_id) || "";
  const sel = h("select", { id: "iv-hole" }, logged.map((x) => h("option", { value: x.hole_id, selected: x.hole_id === pick }, x.hole_id)));
  sel.addEventListener("change", () => ctx.go(`#/p/${p.id}/nets` + query({ part: "intervals", hole: sel.value })));
  const totals = h("div", { class: "scroll" }, h("table", { class: "data compact wrap-head", id: "iv-totals" },
    h("thead", {}, h("tr", {}, ["Hole", `Logged (${unit})`, "TCR", "SCR", "RQD", `Fractures / ${unit}`, "Natural breaks", "Induced breaks"].map((t) => h("th", { scope: "col" }, t)))),
    h("tbody", {}, [...(rep.holes || []).filter((x) => (x.intervals || []).length), { hole_id: "All holes", total: rep.all, all: true }].map((x) => {
      const t = x.total || {};
      return h("tr", { class: x.all ? "total" : "" }, h("th", { scope: "row" }, x.hole_id), h("td", { class: "num" }, fmt(t.length, 1)), h("td", { class: "num" }, pct(t.tcr)), h("td", { class: "num" }, pct(t.scr)),
        h("td", { class: "num" }, pct(t.rqd)), h("td", { class: "num" }, fmt(t.fracture_frequency, 2)), h("td", { class: "num" }, t.natural_breaks ?? "\u2013"), h("td", { class: "num" }, t.induced_breaks ?? "\u2013"));
    }))));
  if (!logged.length) {
    add(host, h("section", { class: "card" }, h("h2", {}, "Core intervals"),
      h("p", {}, "No hole has core intervals yet. Load an intervals file (Load, \u201cCore intervals\u201d) or an AGS4 file with CORE rows."),
      caution(rep, "iv-caution")));
    return;
  }
  const hr = logged.find((x) => x.hole_id === pick) || logged[0];
  const ho = p.holes.find((x) => x.name === hr.hole_id);
  add(host, h("div", { class: "geo-stack" },
    h("section", { class: "card", id: "iv-card" }, h("div", { class: "title-row" }, h("h2", {}, "Along the hole"), h("label", { for: "iv-hole" }, "Hole"), sel),
      h("div", { class: "chart-host iv-host", id: "iv-chart" }, intervalChart(hr.hole_id, hr.intervals, unit, ho && ho.final_depth)),
      h("p", { class: "legend legend-iv" }, h("span", { class: "legend-head" }, "Bars:"),
        h("span", { class: "key" }, h("span", { class: "swatch iv-tcr" }), "total core recovery"),
        h("span", { class: "key" }, h("span", { class: "swatch iv-scr" }), "solid core recovery"),
        h("span", { class: "key" }, h("span", { class: "swatch iv-rqd" }), "RQD"),
        h("span", { class: "key" }, h("span", { class: "swatch iv-fracture_frequency" }), "natural fractures per " + unit)),
      confidenceLegend()),
    h("section", { class: "card" }, h("h2", {}, "Totals"), totals,
      h("p", { class: "help" }, rep.method + "."),
      h("p", { class: "help" }, `A total is blank where some interval did not log the value. Depths in ${unit === "ft" ? "feet" : "metres"}.`),
      caution(rep, "iv-caution"))));
}

// ---- spacing ----

// spreadBar draws a distribution of spacings: p10-p90 whiskers, p25-p75 box
// and the median, on a shared scale up to max.
function spreadBar(d, max, label) {
  const w = 120, hh = 16;
  const s = svg(w, hh, label);
  s.classList.add("spread");
  if (!d || !d.n) return s;
  const X = (v) => 4 + (Math.min(v, max) / max) * (w - 8);
  s.append(el("line", { x1: X(d.p10), y1: hh / 2, x2: X(d.p90), y2: hh / 2, stroke: "#000", "stroke-width": 1.2 }));
  s.append(el("rect", { x: X(d.p25), y: 3, width: Math.max(1, X(d.p75) - X(d.p25)), height: hh - 6, fill: "#fff", stroke: "#000", "stroke-width": 1.2 }));
  s.append(el("line", { x1: X(d.median), y1: 2, x2: X(d.median), y2: hh - 2, stroke: "#000", "stroke-width": 2.6 }));
  return s;
}

async function spacingPart(ctx) {
  const { p, host, params } = ctx;
  const unit = p.unit;
  const sel = selection(params);
  const setsSel = setsSelect("sp-sets", sel.sets);
  const doms = sel.domain.map(parseDomain).filter(Boolean);
  const domSel = h("select", { id: "sp-domain" }, h("option", { value: "" }, doms.length ? "every domain" : "all measurements (no domains)"), doms.map((d) => h("option", { value: d.name, selected: d.name === params.get("show") }, d.name)));
  const form = h("form", { class: "card filters", id: "sp-form" },
    h("div", { class: "field inline" }, h("label", { for: "sp-sets" }, "Sets"), setsSel, h("label", { for: "sp-domain" }, "Domain"), domSel,
      h("button", { type: "submit", class: "primary" }, "Compute")),
    h("p", { class: "help" }, "Domains are defined under Domains; spacing is reported for each."));
  form.addEventListener("submit", (e) => {
    e.preventDefault();
    ctx.go(`#/p/${p.id}/nets` + query({ part: "spacing", sets: setsSel.value, show: domSel.value }) + domainQuery(sel.domain));
  });
  const out = h("div", {}, h("p", { class: "loading" }, "Computing spacing\u2026"));
  add(host, form, out);
  const rep = await report(ctx, out, `/v1/projects/${p.id}/spacing` + query({ sets: sel.sets }) + domainQuery(sel.domain), "Spacing could not be computed");
  if (!rep) return;
  const shown = (rep.domains || []).filter((d) => !domSel.value || d.name === domSel.value);
  put(out, ...shown.map((d) => {
    const max = Math.max(1e-9, ...(d.sets || []).map((s) => (s.true_spacing && s.true_spacing.p90) || 0));
    return h("section", { class: "card", "data-domain": d.name },
      h("h2", {}, d.name === "all" ? "Sets over all measurements" : `Domain ${d.name}`),
      h("div", { class: "scroll" }, h("table", { class: "data compact wrap-head sp-table", id: `sp-${d.name}` },
        h("thead", {}, h("tr", {}, ["Set", "Mean plane", "n", `P10 (/${unit})`, `Normal (/${unit})`, `Mean spacing (${unit})`, `Median (${unit})`, `True spacing, 10\u201390% (${unit})`, `P32 est. (${unit}\u00b2/${unit}\u00b3)`, "Capped"].map((t) => h("th", { scope: "col" }, t)))),
        h("tbody", {}, (d.sets || []).map((s) => h("tr", { "data-set": s.name },
          h("th", { scope: "row" }, s.name), h("td", { class: "num" }, plane(s.mean)), h("td", { class: "num" }, s.count ?? s.oriented_members),
          h("td", { class: "num" }, fmt(s.p10, 3)), h("td", { class: "num" }, fmt(s.p10_normal, 3)), h("td", { class: "num" }, fmt(s.mean_spacing, 2)),
          h("td", { class: "num" }, fmt(s.true_spacing && s.true_spacing.median, 2)),
          h("td", { class: "spread-cell" }, spreadBar(s.true_spacing, max, `true spacing of set ${s.name}`), h("span", { class: "num small-num" }, s.true_spacing && s.true_spacing.n ? `${fmt(s.true_spacing.p10, 2)}\u2013${fmt(s.true_spacing.p90, 2)}` : "")),
          h("td", { class: "num" }, fmt(s.p32_estimate, 3)), h("td", { class: "num" }, s.capped ?? 0)))))),
      h("p", { class: "help" }, `Spacing bars: line 10\u201390%, box 25\u201375%, thick mark the median, on one scale to ${fmt(max, 1)} ${unit}. Normal: the Terzaghi-corrected frequency along the set's mean pole. Capped: crossings at the weight cap, where the values are bounds.` +
        (d.unoriented && d.unoriented.total ? ` Unoriented measurements: ${d.unoriented.total} (${d.unoriented.counted_in_one_set} counted in one set, ${d.unoriented.excluded_from_set_means} left out of set means).` : "")),
      h("details", {}, h("summary", {}, "Frequency per hole"),
        h("div", { class: "scroll" }, h("table", { class: "data compact" },
          h("thead", {}, h("tr", {}, ["Hole", `Length (${unit})`, "Structures", "Unoriented", `P10 (/${unit})`, `P10 weighted (/${unit})`].map((t) => h("th", { scope: "col" }, t)))),
          h("tbody", {}, (d.holes || []).map((x) => h("tr", {}, h("th", { scope: "row" }, x.hole_id), h("td", { class: "num" }, fmt(x.length, 1)), h("td", { class: "num" }, x.count),
            h("td", { class: "num" }, x.unoriented), h("td", { class: "num" }, fmt(x.p10, 3)), h("td", { class: "num" }, fmt(x.p10_terzaghi_weighted, 3)))))))));
  }),
  h("section", { class: "card" }, h("h2", {}, "Method"),
    h("p", { class: "help" }, rep.correction + "."), h("p", { class: "help" }, rep.p32_method + "."), h("p", { class: "help" }, "P32 " + rep.p32_assumptions + "."),
    caution(rep, "sp-caution")));
}

// ---- domains ----

async function domainsPart(ctx) {
  const { p, host, params } = ctx;
  const sel = selection(params);
  const setsSel = setsSelect("dm-sets", sel.sets);
  const defs = h("textarea", { id: "dm-defs", rows: 4, spellcheck: "false", "aria-describedby": "dm-help" }, sel.domain.join("\n"));
  const msg = h("span", { class: "field-msg", role: "alert", id: "dm-msg" });
  const example = p.holes.length > 1 ? `upper=${p.holes[0].name}:0..100,${p.holes[1].name}:0..100` : "upper=HOLE:0..100";
  const form = h("form", { class: "card filters", id: "dm-form" },
    h("label", { for: "dm-defs" }, "Domains, one a line"), defs,
    h("p", { class: "help", id: "dm-help" }, "NAME=HOLE,HOLE (whole holes) or NAME=HOLE:FROM..TO,\u2026 (depth ranges); add ;rock=TYPE|TYPE to select by rock type. Example: ", h("code", {}, example), "."),
    h("div", { class: "field inline" }, h("label", { for: "dm-sets" }, "Sets"), setsSel, h("button", { type: "submit", class: "primary" }, "Compare domains"), msg));
  form.addEventListener("submit", (e) => {
    e.preventDefault();
    const lines = defs.value.split("\n").map((x) => x.trim()).filter(Boolean);
    const bad = lines.find((x) => !parseDomain(x));
    if (bad) {
      msg.textContent = `\u201c${bad}\u201d is not NAME=HOLE,\u2026`;
      defs.setAttribute("aria-invalid", "true");
      return;
    }
    ctx.go(`#/p/${p.id}/nets` + query({ part: "domains", sets: setsSel.value }) + domainQuery(lines));
  });
  add(host, form);
  if (!sel.domain.length) {
    add(host, h("p", { class: "help", id: "dm-none" }, "Name at least one domain to compare sets between domains."));
    return;
  }
  const out = h("div", {}, h("p", { class: "loading" }, "Comparing\u2026"));
  add(host, out);
  const rep = await report(ctx, out, `/v1/projects/${p.id}/domains` + query({ sets: sel.sets }) + domainQuery(sel.domain), "The domains could not be compared");
  if (!rep) return;
  const parsed = sel.domain.map(parseDomain).filter(Boolean);
  // The net of a domain: the net route draws one domain (sets formed on
  // every measurement, only the domain's drawn, so each set keeps its name
  // and colour).
  const netPick = h("select", { id: "dm-net" }, parsed.map((d) => h("option", { value: d.name, selected: d.name === params.get("net") }, d.name)));
  const netHost = h("div", { class: "net-big", id: "dm-net-svg" });
  const netKey = h("div", { class: "net-key", id: "dm-net-legend" });
  const netGo = h("button", { type: "button", id: "dm-net-go" }, "Draw its net");
  let lastNet = null;
  const netSave = h("button", { type: "button", id: "dm-net-save", onclick: () => lastNet && save(lastNet, `${p.project.name.replace(/\W+/g, "-")}-domain-${netPick.value}.svg`, "image/svg+xml") }, "Download SVG");
  async function drawDomainNet() {
    const i = parsed.findIndex((x) => x.name === netPick.value);
    if (i < 0) return;
    put(netHost, h("p", { class: "loading" }, "Drawing\u2026"));
    try {
      const r = await request("GET", `/v1/projects/${p.id}/net` + query({ sets: sel.sets, show: "poles,sets", domain: sel.domain[i] }), { accept: "image/svg+xml" });
      if (!ctx.isCurrent()) return;
      lastNet = r.data;
      const key = showNet(netHost, r.data, `Equal-area net of domain ${parsed[i].name}, lower hemisphere`);
      put(netKey, h("h3", {}, `Domain ${parsed[i].name}`), setKeys(key.sets),
        h("p", { class: "help" }, "Lower hemisphere, equal-area; the sets are those of all the measurements, drawn with this domain's members only." + (parsed[i].rock ? " Stored measurements carry no rock type, so a domain by rock type draws nothing." : "")));
    } catch (e) {
      put(netHost, h("p", { class: "msg bad" }, "The net could not be drawn: " + problemText(e)));
    }
  }
  netGo.addEventListener("click", drawDomainNet);
  put(out,
    h("section", { class: "card" }, h("h2", {}, "Sets per domain"),
      ...(rep.domains || []).map((d) => [h("h3", {}, `${d.name}: ${d.rows} measurements, ${d.oriented_planes} oriented planes` + (d.unoriented_excluded_from_means ? `, ${d.unoriented_excluded_from_means} unoriented left out of means` : "")),
        h("div", { class: "scroll" }, h("table", { class: "data compact wrap-head dm-table", "data-domain": d.name },
          h("thead", {}, h("tr", {}, ["Set", "n", "Mean plane", "k", "cone 95 (\u00b0)", "spread (\u00b0)"].map((t) => h("th", { scope: "col" }, t)))),
          h("tbody", {}, (d.sets || []).map((s) => h("tr", {}, h("th", { scope: "row" }, s.name), h("td", { class: "num" }, s.count), h("td", { class: "num" }, plane(s.mean)),
            h("td", { class: "num" }, fmt(s.k, 1)), h("td", { class: "num" }, fmt(s.cone95, 1)), h("td", { class: "num" }, fmt(s.spread, 1)))))))])),
    h("section", { class: "card net-card", id: "dm-net-card" }, h("h2", {}, "Net of a domain"),
      h("div", { class: "field inline" }, h("label", { for: "dm-net" }, "Domain"), netPick, netGo, netSave),
      h("div", { class: "net-row" }, netHost, netKey)),
    h("section", { class: "card" }, h("h2", {}, "Do the domains share each set's mean direction?"),
      h("div", { class: "scroll" }, h("table", { class: "data compact wrap-head", id: "dm-tests" },
        h("thead", {}, h("tr", {}, ["Set", "Domains", "n", "F", "df", "p-value", "At the 5% level"].map((t) => h("th", { scope: "col" }, t)))),
        h("tbody", {}, (rep.common_mean_tests || []).map((t) => h("tr", { "data-set": t.set }, h("th", { scope: "row" }, t.set), h("td", {}, (t.domains || []).join(", ")), h("td", { class: "num" }, t.n),
          h("td", { class: "num" }, fmt(t.F, 2)), h("td", { class: "num" }, t.df1 != null ? `${t.df1}, ${t.df2}` : "\u2013"), h("td", { class: "num" }, t.p_value == null ? "\u2013" : t.p_value < 0.001 ? "< 0.001" : fmt(t.p_value, 3)),
          h("td", {}, t.p_value == null ? (t.note || "not tested") : t.p_value < 0.05 ? "the means differ" : "no evidence they differ")))))),
      h("p", { class: "help" }, (rep.common_mean_method || "") + "."),
      caution(rep, "dm-caution")));
  await drawDomainNet();
}

// ---- kinematic checks ----

const CHECKS = [
  { code: "planar", label: "planar sliding" },
  { code: "wedge", label: "wedge sliding" },
  { code: "flexural", label: "flexural toppling" },
  { code: "direct", label: "direct toppling" },
];

// MODES are the report's counts, with their words.
const MODES = [
  ["planar", "planar sliding", "poles"],
  ["flexural", "flexural toppling", "poles"],
  ["toppling_base", "toppling base planes", "poles"],
  ["wedge", "wedge sliding", "intersections"],
  ["direct_toppling", "direct toppling", "intersections"],
  ["oblique_toppling", "oblique toppling", "intersections"],
];

// showZoneNet puts the served net of a check in host, cropped to the net
// (the sheet's own key and caution stay in the download), and returns the
// zone key and set key read from the sheet.
function showZoneNet(host, text, label) {
  const doc = new DOMParser().parseFromString(text, "image/svg+xml");
  const root = doc.documentElement;
  if (root.nodeName !== "svg") {
    put(host, h("p", { class: "msg bad" }, "The server sent a net this page cannot read."));
    return { zones: [], sets: [] };
  }
  const zones = [...root.querySelectorAll("rect[fill^='url(#zone']")].map((r) => {
    const t = r.nextElementSibling;
    return { fill: r.getAttribute("fill"), stroke: r.getAttribute("stroke"), text: t ? t.textContent : "" };
  });
  const sets = [...root.querySelectorAll("g.set-key")].map((g) => ({ name: g.getAttribute("data-name"), colour: g.getAttribute("data-colour"), mark: g.getAttribute("data-mark"), count: g.getAttribute("data-count"), desc: g.getAttribute("data-desc") }));
  const circle = root.querySelector("clipPath#primitive circle");
  const cx = Number(circle && circle.getAttribute("cx")) || 315, cy = Number(circle && circle.getAttribute("cy")) || 355, r = Number(circle && circle.getAttribute("r")) || 250;
  // The net with its azimuth labels: the primitive circle and a margin.
  // The sheet's title, key and caution lie outside it and are left out of
  // the page's copy (the key is the HTML one beside the net, the caution is
  // shown once above); the download keeps the whole sheet.
  const m = 40;
  for (const t of [...root.querySelectorAll("text")]) {
    const x = Number(t.getAttribute("x")), y = Number(t.getAttribute("y"));
    if (x > cx + r + m || y > cy + r + 30 || y < cy - r - m || t.getAttribute("font-style") === "italic") t.remove();
  }
  for (const g of [...root.querySelectorAll("#set-legend")]) g.remove();
  for (const e of [...root.querySelectorAll("rect[fill^='url(#zone'], path")]) {
    const d = e.getAttribute("d") || "";
    const mm = /^M([0-9.]+)[ ,]([0-9.]+)/.exec(d);
    const x = e.tagName === "rect" ? Number(e.getAttribute("x")) : mm ? Number(mm[1]) : 0;
    if (x > cx + r + m) e.remove();
  }
  root.setAttribute("viewBox", `${cx - r - m} ${cy - r - m} ${2 * (r + m)} ${2 * (r + m)}`);
  for (const a of ["width", "height", "style"]) root.removeAttribute(a);
  root.setAttribute("role", "img");
  root.setAttribute("aria-label", label);
  root.setAttribute("class", "chart served-net");
  put(host, document.importNode(root, true));
  return { zones, sets };
}

function zoneSwatch(z) {
  const s = svg(26, 14, "");
  s.setAttribute("aria-hidden", "true");
  s.classList.add("keyshape", "wide");
  s.append(el("rect", { x: 0.75, y: 0.75, width: 24.5, height: 12.5, fill: z.fill, stroke: z.stroke || "#000", "stroke-width": 1.2 }));
  return s;
}

async function slopePart(ctx) {
  const { p, host, params } = ctx;
  const sel = selection(params);
  const v = {
    dip: params.get("face_dip") || "65", dir: params.get("face_dir") || "180",
    friction: params.get("friction") || "30", lateral: params.get("lateral") || "20",
    check: CHECKS.some((c) => c.code === params.get("check")) ? params.get("check") : "planar",
  };
  const num = (id, value, label, attrs = {}) => [h("label", { for: id }, label), h("input", { id, value, inputmode: "decimal", size: 5, ...attrs })];
  const checkSel = h("select", { id: "sl-check" }, CHECKS.map((c) => h("option", { value: c.code, selected: c.code === v.check }, c.label)));
  // A domain named under Domains is sent to the slope routes as it is
  // (domain=): the sets are formed on every row and only the domain's
  // planes are checked, as the CLI's --domain does.
  const doms = sel.domain.map((def) => ({ def, d: parseDomain(def) })).filter((x) => x.d).map((x) => ({ ...x.d, def: x.def }));
  const inDomain = doms.find((d) => d.name === params.get("in")) || null;
  const domSel = h("select", { id: "sl-domain" }, h("option", { value: "" }, "all holes"), doms.map((d) => h("option", { value: d.name, selected: d === inDomain }, d.name)));
  const setsSel = setsSelect("sl-sets", sel.sets);
  const msg = h("span", { class: "field-msg", role: "alert", id: "sl-msg" });
  const form = h("form", { class: "card filters", id: "sl-form", novalidate: true },
    h("div", { class: "field inline" }, ...num("sl-dip", v.dip, "Face dip (\u00b0)"), ...num("sl-dir", v.dir, "dip direction (\u00b0)")),
    h("div", { class: "field inline" }, ...num("sl-friction", v.friction, "Friction angle (\u00b0)"), ...num("sl-lateral", v.lateral, "Lateral limit (\u00b1\u00b0)")),
    h("div", { class: "field inline" }, h("label", { for: "sl-check" }, "Net of"), checkSel, h("label", { for: "sl-sets" }, "Sets"), setsSel),
    doms.length ? h("div", { class: "field inline" }, h("label", { for: "sl-domain" }, "Domain"), domSel) : null,
    h("div", { class: "actions" }, h("button", { type: "submit", class: "primary" }, "Check"), h("button", { type: "button", id: "sl-download" }, "Download SVG"), msg));
  const netHost = h("div", { class: "net-big", id: "sl-net" }, h("p", { class: "loading" }, "Drawing\u2026"));
  const netKey = h("div", { class: "net-key", id: "sl-legend" });
  const counts = h("div", { id: "sl-counts" });
  add(host, form, h("div", { id: "sl-caution-host" }), h("section", { class: "card net-card" }, h("h2", {}, "Critical zone on the net"), h("div", { class: "net-row" }, netHost, netKey)), counts);
  const read = () => {
    const r = { face_dip: form.querySelector("#sl-dip").value.trim(), face_dir: form.querySelector("#sl-dir").value.trim(), friction: form.querySelector("#sl-friction").value.trim(), lateral: form.querySelector("#sl-lateral").value.trim() };
    for (const [k, id] of [["face_dip", "#sl-dip"], ["face_dir", "#sl-dir"], ["friction", "#sl-friction"], ["lateral", "#sl-lateral"]]) {
      const inp = form.querySelector(id);
      if (!Number.isFinite(Number(r[k])) || r[k] === "") {
        msg.textContent = `\u201c${r[k]}\u201d is not a number.`;
        inp.setAttribute("aria-invalid", "true");
        inp.focus();
        return null;
      }
      inp.removeAttribute("aria-invalid");
    }
    return r;
  };
  form.addEventListener("submit", (e) => {
    e.preventDefault();
    const r = read();
    if (r) ctx.go(`#/p/${p.id}/nets` + query({ part: "slope", ...r, check: checkSel.value, sets: setsSel.value, hole: sel.hole, in: domSel.value }) + domainQuery(sel.domain));
  });
  let lastSvg = null;
  form.querySelector("#sl-download").addEventListener("click", () => {
    if (!lastSvg) { msg.textContent = "Check first."; return; }
    save(lastSvg, `${p.project.name.replace(/\W+/g, "-")}-${v.check}.svg`, "image/svg+xml");
    say("SVG downloaded.", "ok");
  });

  const q = query({ ...(inDomain ? { domain: inDomain.def } : { hole: sel.hole }), sets: sel.sets, face: `${v.dip}/${v.dir}`, friction: v.friction, lateral: v.lateral });
  const [rep, net] = await Promise.all([
    get(`/v1/projects/${p.id}/slope-check${q}`).catch((e) => ({ error: e })),
    request("GET", `/v1/projects/${p.id}/slope-check/${v.check}${q}`, { accept: "image/svg+xml" }).then((r) => r.data).catch((e) => ({ error: e })),
  ]);
  if (!ctx.isCurrent()) return;
  if (rep.error) {
    put(netHost, h("p", { class: "msg bad", id: "sl-error" }, "The check could not be run: " + problemText(rep.error)));
    return;
  }
  // The caution, once: above the results (the served sheet keeps its own
  // copy for the download; the page crops it away).
  put(host.querySelector("#sl-caution-host"), caution(rep, "sl-caution"));
  if (net.error) {
    put(netHost, h("p", { class: "msg bad" }, "The net could not be drawn: " + problemText(net.error)));
  } else {
    lastSvg = net;
    const key = showZoneNet(netHost, net, `Net of ${CHECKS.find((c) => c.code === v.check).label} for the face ${v.dip}/${v.dir}, lower hemisphere`);
    put(netKey, h("h3", {}, `${CHECKS.find((c) => c.code === v.check).label}, face ${v.dip} \u2192 ${az(Number(v.dir))}`),
      h("ul", { class: "set-keys zone-keys" },
        key.zones.map((z) => h("li", { class: "key" }, zoneSwatch(z), h("span", {}, z.text))),
        h("li", { class: "key" }, h("span", { class: "swatch face-line" }), h("span", {}, "the face (great circle)")),
        h("li", { class: "key" }, h("span", { class: "swatch friction-line" }), h("span", {}, `friction circle, ${v.friction}\u00b0`))),
      key.sets.length ? [h("h3", {}, "Sets"), h("ul", { class: "set-keys" }, key.sets.map((k) => h("li", { class: "key", "data-type": k.name, "data-colour": k.colour, "data-mark": k.mark },
        shapeKey({ colour: k.colour, shape: k.mark }), h("span", {}, h("strong", {}, k.name), ` n=${k.count}`, h("br"), h("span", { class: "help" }, k.desc)))))] : null,
      h("p", { class: "help" }, "Lower hemisphere, equal-area. Shaded: the critical zone of this check."));
  }
  const mm = rep.measurements || {};
  put(counts,
    h("section", { class: "card" }, h("h2", {}, "In the critical zones"),
      h("div", { class: "scroll" }, h("table", { class: "data compact", id: "sl-modes" },
        h("thead", {}, h("tr", {}, ["Mode", "Count", "Share", "Of"].map((t) => h("th", { scope: "col" }, t)))),
        h("tbody", {}, MODES.map(([k, word, of]) => {
          const c = mm[k] || {};
          return h("tr", { "data-mode": k }, h("th", { scope: "row" }, word), h("td", { class: "num" }, c.count ?? "\u2013"), h("td", { class: "num" }, c.percent == null ? "\u2013" : `${fmt(c.percent, 1)}%`),
            h("td", {}, of === "poles" ? `${mm.poles ?? 0} poles` : `${mm.intersections ?? 0} intersections`));
        })))),
      h("p", { class: "help", id: "sl-over" }, `Face ${rep.face ? `${fmt(rep.face.dip, 0)} \u2192 ${az(rep.face.dip_direction)}` : ""}, friction ${fmt(rep.friction_angle, 0)}\u00b0, lateral limit \u00b1${fmt(rep.lateral_limit, 0)}\u00b0; ${inDomain ? `domain ${inDomain.name} (${rep.input})` : rep.input}.` +
        (rep.unoriented_left_out ? ` ${rep.unoriented_left_out} unoriented measurements left out.` : ""))),
    h("section", { class: "card" }, h("h2", {}, "Per set"),
      h("div", { class: "scroll" }, h("table", { class: "data compact wrap-head", id: "sl-sets-table" },
        h("thead", {}, h("tr", {}, ["Set", "n", "Mean plane", "Mean: planar", "flexural", "toppling base", "Members: planar", "flexural", "wedge"].map((t) => h("th", { scope: "col" }, t)))),
        h("tbody", {}, (rep.sets || []).map((s) => {
          const m = s.members || {};
          const yes = (b) => (b ? "yes" : "no");
          const c = (x) => (x ? [String(x.count), h("span", { class: "pc" }, `${fmt(x.percent, 1)}%`)] : "\u2013");
          return h("tr", { "data-set": s.name }, h("th", { scope: "row" }, s.name), h("td", { class: "num" }, s.count), h("td", { class: "num" }, plane(s.mean)),
            h("td", {}, yes(s.planar)), h("td", {}, yes(s.flexural)), h("td", {}, yes(s.toppling_base)),
            h("td", { class: "num" }, c(m.planar)), h("td", { class: "num" }, c(m.flexural)), h("td", { class: "num" }, c(m.wedge)));
        })))),
      (rep.set_pairs || []).length ? [h("h3", {}, "Set intersections"), h("div", { class: "scroll" }, h("table", { class: "data compact", id: "sl-pairs" },
        h("thead", {}, h("tr", {}, ["Sets", "Intersection (trend / plunge)", "Wedge sliding", "Toppling"].map((t) => h("th", { scope: "col" }, t)))),
        h("tbody", {}, rep.set_pairs.map((x) => h("tr", {}, h("th", { scope: "row" }, (x.sets || []).join(" \u00d7 ")),
          h("td", { class: "num" }, x.intersection ? `${az(x.intersection.trend)} / ${fmt(x.intersection.plunge, 0)}` : "\u2013"),
          h("td", {}, x.wedge ? "possible" : "no"), h("td", {}, x.toppling || "none"))))))] : null,
      h("details", {}, h("summary", {}, "Methods"), h("ul", { class: "help" }, (rep.methods || []).map((m) => h("li", {}, m))))));
}
