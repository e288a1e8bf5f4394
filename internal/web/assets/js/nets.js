// nets.js: nets and sets over a selection: holes, depth range, types,
// weighting. The net and the statistics come from the server; the SVG can be
// downloaded as it was served.

import { request, query, offers, ApiError } from "./api.js";
import { h, fmt, az, clear, say, notAvailable, problemText, add, put } from "./dom.js";
import { measurements } from "./data.js";
import { rose, smallNet, styleFor } from "./draw.js";

function showSvg(host, text, label) {
  const url = URL.createObjectURL(new Blob([text], { type: "image/svg+xml" }));
  const img = h("img", { src: url, alt: label, class: "served-svg" });
  img.addEventListener("load", () => setTimeout(() => URL.revokeObjectURL(url), 1000));
  put(host, img);
}

async function svgFrom(path, template) {
  if ((await offers(template)) === false) return null;
  try {
    const r = await request("GET", path, { accept: "image/svg+xml" });
    return r.data;
  } catch (e) {
    if (e instanceof ApiError && (e.status === 404 || e.status === 405)) return null;
    throw e;
  }
}

function meanText(st, lines) {
  const m = (st && st.mean) || {};
  if (lines || m.trend != null) return `${az(m.trend)} / ${fmt(m.plunge, 0)}`;
  if (m.dip != null) return `${fmt(m.dip, 0)} \u2192 ${az(m.dip_direction)}`;
  return "\u2013";
}

// statsTable renders the statistics document: for planes and for lines, the
// whole selection and each set, unweighted and weighted side by side.
export function statsTable(doc) {
  const out = h("div", { id: "stats" });
  const groups = [["planes", "Planes (poles)"], ["lines", "Lines"]].filter(([k]) => doc && doc[k]);
  if (!groups.length) {
    add(out, h("p", {}, "The server returned statistics in a form this page does not know; nothing is shown rather than a guess."));
    return out;
  }
  for (const [k, title] of groups) {
    const g = doc[k];
    const sets = [g.all ? { ...g.all, name: g.all.name || "all" } : null, ...(g.sets || [])].filter(Boolean);
    const weighted = sets.some((s) => s.weighted);
    const head = ["Set", "n", "Mean", "k", "cone 95 (\u00b0)", "spread (\u00b0)", "R"];
    if (weighted) head.push("Mean (weighted)", "k (w.)", "cone 95 (w.)");
    add(out, h("h3", {}, `${title}: ${g.count ?? sets[0]?.count ?? 0}` + (g.set_method ? `, sets by ${g.set_method}` : "")),
      h("div", { class: "scroll" }, h("table", { class: "data compact" },
        h("thead", {}, h("tr", {}, head.map((t) => h("th", { scope: "col" }, t)))),
        h("tbody", {}, sets.map((s) => {
          const u = s.unweighted || s;
          const w = s.weighted;
          return h("tr", {}, h("th", { scope: "row" }, s.name || ""), h("td", { class: "num" }, s.count ?? ""),
            h("td", { class: "num" }, meanText(u, k === "lines")), h("td", { class: "num" }, fmt(u.k, 1)), h("td", { class: "num" }, fmt(u.cone95, 1)),
            h("td", { class: "num" }, fmt(u.spread, 1)), h("td", { class: "num" }, fmt(u.R, 2)),
            weighted ? [h("td", { class: "num" }, w ? meanText(w, k === "lines") : "\u2013"), h("td", { class: "num" }, w ? fmt(w.k, 1) : "\u2013"), h("td", { class: "num" }, w ? fmt(w.cone95, 1) : "\u2013")] : null);
        })))),
      g.unassigned != null ? h("p", { class: "help" }, `${g.unassigned} not assigned to any set.`) : null);
  }
  if (doc.weighting) add(out, h("p", { class: "help" }, `Weighting: ${doc.weighting.method}, cap ${doc.weighting.cap} (${doc.weighting.cap_source || ""}).`));
  if (doc.spread_formula) add(out, h("p", { class: "help" }, `Spread: ${doc.spread_formula}.`));
  return out;
}

export async function netsView(ctx) {
  const { p, host, params } = ctx;
  const unit = p.unit;
  const sel = {
    hole: (params.get("hole") || "").split(",").filter(Boolean),
    type: (params.get("type") || "").split(",").filter(Boolean),
    min_depth: params.get("min_depth") || "",
    max_depth: params.get("max_depth") || "",
    weighting: params.get("weighting") || "none",
    show: (params.get("show") || "poles,density").split(",").filter(Boolean),
  };
  add(host, h("h1", {}, "Nets and sets"));
  const holeBoxes = p.holes.map((x) => h("label", { class: "check" }, h("input", { type: "checkbox", name: "hole", value: x.name, checked: !sel.hole.length || sel.hole.includes(x.name) }), x.name));
  const typeBoxes = p.types.map((t, i) => h("label", { class: "check" }, h("input", { type: "checkbox", name: "type", value: t.code, checked: !sel.type.length || sel.type.includes(t.code) }), t.code));
  const showBoxes = [["poles", "poles"], ["planes", "planes (great circles)"], ["density", "density"]].map(([v, l]) => h("label", { class: "check" }, h("input", { type: "checkbox", name: "show", value: v, checked: sel.show.includes(v) }), l));
  const minD = h("input", { id: "n-min", inputmode: "decimal", value: sel.min_depth, size: 6 });
  const maxD = h("input", { id: "n-max", inputmode: "decimal", value: sel.max_depth, size: 6 });
  const weighting = h("select", { id: "n-weight" }, h("option", { value: "none" }, "none"), h("option", { value: "terzaghi" }, "Terzaghi (hole-direction bias)"));
  weighting.value = sel.weighting;
  const msg = h("span", { class: "field-msg", role: "alert" });
  const form = h("form", { class: "card filters", id: "net-form" },
    h("fieldset", {}, h("legend", {}, "Holes"), holeBoxes),
    h("fieldset", {}, h("legend", {}, "Types"), typeBoxes),
    h("div", { class: "field inline" }, h("label", { for: "n-min" }, `Depth from (${unit})`), minD, h("label", { for: "n-max" }, "to"), maxD),
    h("div", { class: "field inline" }, h("label", { for: "n-weight" }, "Weighting"), weighting),
    h("fieldset", {}, h("legend", {}, "Show"), showBoxes),
    h("div", { class: "actions" }, h("button", { type: "submit", class: "primary" }, "Draw"), h("button", { type: "button", id: "download-svg" }, "Download SVG"), msg));
  const netHost = h("div", { class: "net-big", id: "net" }, h("p", { class: "loading" }, "Drawing\u2026"));
  const roseHost = h("div", { class: "rose", id: "rose" });
  const statsHost = h("section", { class: "card" }, h("h2", {}, "Set statistics"));
  add(host, form, h("div", { class: "two" }, h("section", { class: "card" }, h("h2", {}, "Net"), netHost), h("section", { class: "card" }, h("h2", {}, "Rose"), roseHost)), statsHost,
    h("p", { class: "caution" }, "Sets and their statistics describe the logged data. They feed slope and excavation design only through a licensed practitioner working to local codes."));

  const checked = (boxes) => boxes.map((l) => l.firstChild).filter((c) => c.checked).map((c) => c.value);
  function read() {
    for (const el of [minD, maxD]) {
      const v = el.value.trim();
      if (v && !Number.isFinite(Number(v))) {
        msg.textContent = `\u201c${v}\u201d is not a depth.`;
        el.setAttribute("aria-invalid", "true");
        el.focus();
        return null;
      }
      el.removeAttribute("aria-invalid");
    }
    msg.textContent = "";
    const holes = checked(holeBoxes);
    const types = checked(typeBoxes);
    return {
      hole: holes.length === p.holes.length ? [] : holes,
      type: types.length === p.types.length ? [] : types,
      min_depth: minD.value.trim(), max_depth: maxD.value.trim(),
      weighting: weighting.value, show: checked(showBoxes),
    };
  }
  const filterOf = (s) => ({ hole: s.hole, type: s.type, min_depth: s.min_depth, max_depth: s.max_depth });
  form.addEventListener("submit", (e) => {
    e.preventDefault();
    const s = read();
    if (s) ctx.go(`#/p/${p.id}/nets` + query({ ...filterOf(s), weighting: s.weighting === "none" ? "" : s.weighting, show: s.show.join(",") }));
  });
  let lastSvg = null;
  form.querySelector("#download-svg").addEventListener("click", () => {
    if (!lastSvg) { msg.textContent = "Draw a net first."; return; }
    const a = h("a", { href: URL.createObjectURL(new Blob([lastSvg], { type: "image/svg+xml" })), download: `${p.project.name.replace(/\W+/g, "-")}-net.svg` });
    document.body.append(a);
    a.click();
    a.remove();
    say("SVG downloaded.", "ok");
  });

  const fq = filterOf(sel);
  const netQ = query({ ...fq, weighting: sel.weighting === "none" ? "" : sel.weighting, show: sel.show.join(",") });
  const [netSvg, roseSvg, stats, rows] = await Promise.all([
    svgFrom(`/v1/projects/${p.id}/net${netQ}`, "/v1/projects/{project}/net").catch((e) => ({ error: e })),
    svgFrom(`/v1/projects/${p.id}/rose${query(fq)}`, "/v1/projects/{project}/rose").catch((e) => ({ error: e })),
    offers("/v1/projects/{project}/statistics").then((ok) => ok === false
      ? { error: new ApiError(404, { title: "not offered" }) }
      : request("GET", `/v1/projects/${p.id}/statistics${query({ ...fq, weighting: sel.weighting === "none" ? "" : sel.weighting })}`).then((r) => r.data)).catch((e) => ({ error: e })),
    measurements(p.id, fq),
  ]);
  if (!ctx.isCurrent()) return;

  if (netSvg && netSvg.error) {
    put(netHost, h("p", { class: "msg bad" }, "The net could not be drawn: " + problemText(netSvg.error)));
  } else if (typeof netSvg === "string") {
    lastSvg = netSvg;
    showSvg(netHost, netSvg, "Equal-area net of the selection, as served");
  } else {
    // The server has no net route: show the server-derived poles on the
    // page's own small net and say so.
    const byType = new Map();
    for (const m of rows) {
      const d = m.derived || {};
      if (!Number.isFinite(d.pole_plunge)) continue;
      if (!byType.has(m.type)) byType.set(m.type, []);
      byType.get(m.type).push({ trend: d.pole_trend ?? 0, plunge: d.pole_plunge });
    }
    const codes = p.types.map((t) => t.code);
    const net = smallNet([...byType.entries()].map(([c, poles]) => ({ label: c, style: styleFor(Math.max(0, codes.indexOf(c))), poles })), { size: 420, label: "Poles of the selection, equal-area, lower hemisphere" });
    lastSvg = new XMLSerializer().serializeToString(net);
    put(netHost, notAvailable("nets with planes and density"), net, h("p", { class: "help" }, "Poles only, drawn by this page from the derived values."));
  }

  if (roseSvg && roseSvg.error) {
    put(roseHost, h("p", { class: "msg bad" }, problemText(roseSvg.error)));
  } else if (typeof roseSvg === "string") {
    showSvg(roseHost, roseSvg, "Rose diagram of the selection, as served");
  } else {
    const dd = rows.map((m) => m.derived && m.derived.dip_direction).filter((v) => Number.isFinite(v));
    put(roseHost, rose(dd, { size: 320 }), h("p", { class: "help" }, `Dip directions of ${dd.length} planes in 10\u00b0 bins, petal area proportional to count; drawn by this page from the derived values.`));
  }

  if (stats && stats.error) {
    const e = stats.error;
    add(statsHost, e instanceof ApiError && (e.status === 404 || e.status === 405) ? notAvailable("set statistics") : h("p", { class: "msg bad" }, problemText(e)));
  } else {
    add(statsHost, statsTable(stats));
  }
  add(statsHost, h("p", { class: "help" }, `${rows.length} measurements in the selection.`));
}
