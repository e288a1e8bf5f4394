// nets.js: nets and sets over a selection: holes, depth range, types,
// weighting. The net and the statistics come from the server; the SVG can be
// downloaded as it was served.

import { request, query, save, download } from "./api.js";
import { h, fmt, az, say, problemText, add, put } from "./dom.js";
import { shapeKey } from "./draw.js";
import { geotechView, PARTS } from "./geotech.js";

// showNet puts the served net sheet in host without its side panel (the
// net fills the panel) and returns the set key read from the sheet's own
// legend, for the HTML legend beside it. The download keeps the whole sheet.
export function showNet(host, text, label) {
  const doc = new DOMParser().parseFromString(text, "image/svg+xml");
  const root = doc.documentElement;
  if (root.nodeName !== "svg") {
    put(host, h("p", { class: "msg bad" }, "The server sent a net this page cannot read."));
    return { sets: [] };
  }
  const sets = [...root.querySelectorAll("g.set-key")].map((g) => ({
    name: g.getAttribute("data-name"), colour: g.getAttribute("data-colour"), mark: g.getAttribute("data-mark"),
    count: g.getAttribute("data-count"), desc: g.getAttribute("data-desc"),
  }));
  const density = [...root.querySelectorAll("#density title")].length;
  // The net circle with its azimuth labels spans x 36..594 and y 70..640.
  root.setAttribute("viewBox", "30 62 570 580");
  root.removeAttribute("width");
  root.removeAttribute("style"); // the page's stylesheet sets the face (no inline styles under the CSP)
  root.removeAttribute("height");
  root.setAttribute("role", "img");
  root.setAttribute("aria-label", label);
  root.setAttribute("class", "chart served-net");
  put(host, document.importNode(root, true));
  return { sets, density };
}

// setKeys is the HTML key of a served net's sets (read from its sheet by
// showNet).
export function setKeys(sets) {
  return sets.length ? h("ul", { class: "set-keys" }, sets.map((k) => h("li", { class: "key", "data-type": k.name, "data-colour": k.colour, "data-mark": k.mark },
    shapeKey({ colour: k.colour, shape: k.mark }), h("span", {}, h("strong", {}, k.name), ` n=${k.count}`, h("br"), h("span", { class: "help" }, k.desc))))) : null;
}

function showSvg(host, text, label) {
  const url = URL.createObjectURL(new Blob([text], { type: "image/svg+xml" }));
  const img = h("img", { src: url, alt: label, class: "served-svg" });
  img.addEventListener("load", () => setTimeout(() => URL.revokeObjectURL(url), 1000));
  put(host, img);
}

async function svgFrom(path) {
  const r = await request("GET", path, { accept: "image/svg+xml" });
  return r.data;
}

function meanOf(u, kind) {
  if (!u || !u.mean) return "\u2013";
  const m = u.mean;
  if (kind === "lines") return `${az(m.trend)} / ${fmt(m.plunge, 0)}`;
  return `${fmt(m.dip, 0)} \u2192 ${az(m.dip_direction)}`;
}

// statsRows flattens the report of the statistics route (the report of
// corvane stats): per kind, each set, or all measurements when there are no
// sets.
function statsRows(doc) {
  const rows = [];
  for (const kind of ["planes", "lines"]) {
    const g = doc[kind];
    if (!g) continue;
    for (const s of (g.sets && g.sets.length ? g.sets : [g.all])) rows.push({ kind, s });
  }
  return rows;
}

// statsTable renders the statistics of the selection: one row per set (a
// type code or an automatic set), unweighted and, when asked, Terzaghi
// weighted side by side.
function statsTable(doc) {
  const out = h("div", { id: "stats" });
  if (!doc || !Array.isArray(doc.rows_skipped) || typeof doc.rows !== "number") {
    add(out, h("p", {}, "The server returned statistics in a form this page does not know; nothing is shown rather than a guess."));
    return out;
  }
  const rows = statsRows(doc);
  const weighted = rows.some((r) => r.s.weighted);
  const head = ["Set", "Kind", "n", "Mean (dip \u2192 dir. / trend / plunge)", "k", "cone 95 (\u00b0)", "spread (\u00b0)", "Woodcock K"];
  if (weighted) head.push("Weighted mean", "k (w.)", "cone 95 (w.)");
  const skipped = doc.rows_skipped.map((x) => `${x.count} left out: ${x.reason}`);
  const unassigned = ["planes", "lines"].reduce((n, k) => n + ((doc[k] && doc[k].unassigned) || 0), 0);
  const method = (doc.planes && doc.planes.set_method) || (doc.lines && doc.lines.set_method) || "none (all measurements)";
  add(out,
    h("div", { class: "scroll" }, h("table", { class: "data compact", id: "stats-table" },
      h("thead", {}, h("tr", {}, head.map((t) => h("th", { scope: "col" }, t)))),
      h("tbody", {}, rows.map(({ kind, s }) => {
        const u = s.unweighted;
        const w = s.weighted;
        // K is null where it is infinite (a uniaxial cluster) or undefined (uniform); the note says which.
        const note = (u && u.shape && u.shape.woodcock_K_note) || "";
        const k = !u || !u.shape ? "\u2013" : u.shape.woodcock_K != null ? fmt(u.shape.woodcock_K, 2) : note.startsWith("infinite") ? "\u221e" : "undefined";
        return h("tr", {}, h("th", { scope: "row" }, s.name), h("td", {}, kind === "lines" ? "lines" : "poles"), h("td", { class: "num" }, s.count ?? ""),
          h("td", { class: "num" }, meanOf(u, kind)), h("td", { class: "num" }, u ? fmt(u.k, 1) : "\u2013"), h("td", { class: "num" }, u ? fmt(u.cone95, 1) : "\u2013"),
          h("td", { class: "num" }, u ? fmt(u.spread, 1) : "\u2013"), h("td", { class: "num", title: note }, k),
          weighted ? [h("td", { class: "num" }, w ? meanOf(w, kind) : "\u2013"), h("td", { class: "num" }, w ? fmt(w.k, 1) : "\u2013"), h("td", { class: "num" }, w ? fmt(w.cone95, 1) : "\u2013")] : null);
      })))),
    h("p", { class: "help" }, `${doc.rows} measurements matched, ${doc.rows_used} used` + (skipped.length ? `; ${skipped.join("; ")}` : "") + (unassigned ? `; ${unassigned} in no set` : "") + `. Sets: ${method}.` + (doc.azimuth_ref ? ` Azimuths from ${doc.azimuth_ref} north.` : "")),
    doc.caution ? h("p", { class: "caution", id: "nets-caution" }, doc.caution) : null);
  return out;
}

// partTabs links the parts of the view: the sets and nets of the
// orientations, and the geotechnical parts.
// The geotechnical parts carry the sets and the domains from one to the
// next, so domains named once serve spacing and the slope check too.
function partTabs(pid, part, params) {
  const all = [{ code: "sets", label: "Sets and nets" }, ...PARTS];
  const keep = part === "sets" ? "" : query({ sets: params.get("sets") || "" }).replace(/^\?/, "&") + params.getAll("domain").map((d) => "&domain=" + encodeURIComponent(d)).join("");
  return h("nav", { class: "tabs", "aria-label": "Parts of the nets view", id: "nets-parts" }, all.map((x) =>
    h("a", { href: `#/p/${pid}/nets` + (x.code === "sets" ? "" : `?part=${x.code}${keep}`), "aria-current": x.code === part ? "page" : null, "data-part": x.code }, x.label)));
}

export async function netsView(ctx) {
  const { p, host, params } = ctx;
  const unit = p.unit;
  const part = params.get("part") || "sets";
  if (part !== "sets") {
    add(host, h("h1", {}, "Nets and sets: " + ((PARTS.find((x) => x.code === part) || {}).label || part).toLowerCase()), partTabs(p.id, part, params));
    await geotechView(ctx, part);
    return;
  }
  const sel = {
    hole: (params.get("hole") || "").split(",").filter(Boolean),
    type: (params.get("type") || "").split(",").filter(Boolean),
    min_depth: params.get("min_depth") || "",
    max_depth: params.get("max_depth") || "",
    weighting: params.get("terzaghi") === "true" ? "terzaghi" : "none",
    sets: params.get("sets") || "0",
    projection: params.get("projection") || "equal-area",
    show: (params.get("show") || "density").split(",").filter(Boolean),
    rose: params.get("rose") === "strike" ? "strike" : "dip_direction",
  };
  add(host, h("h1", {}, "Nets and sets"), partTabs(p.id, "sets", params));
  const holeBoxes = p.holes.map((x) => h("label", { class: "check" }, h("input", { type: "checkbox", name: "hole", value: x.name, checked: !sel.hole.length || sel.hole.includes(x.name) }), x.name));
  const typeBoxes = p.types.map((t, i) => h("label", { class: "check" }, h("input", { type: "checkbox", name: "type", value: t.code, checked: !sel.type.length || sel.type.includes(t.code) }), t.code));
  const showBoxes = [["planes", "planes (great circles)"], ["density", "density (Kamb contours)"]].map(([v, l]) => h("label", { class: "check" }, h("input", { type: "checkbox", name: "show", value: v, checked: sel.show.includes(v) }), l));
  const minD = h("input", { id: "n-min", inputmode: "decimal", value: sel.min_depth, size: 6 });
  const maxD = h("input", { id: "n-max", inputmode: "decimal", value: sel.max_depth, size: 6 });
  const weighting = h("select", { id: "n-weight" }, h("option", { value: "none" }, "none"), h("option", { value: "terzaghi" }, "Terzaghi (hole-direction bias), beside unweighted"));
  weighting.value = sel.weighting;
  const sets = h("select", { id: "n-sets" }, h("option", { value: "0" }, "by type code"), [2, 3, 4, 5, 6].map((n) => h("option", { value: n }, `${n} automatic sets`)));
  sets.value = sel.sets;
  const projection = h("select", { id: "n-proj" }, h("option", { value: "equal-area" }, "equal-area (Schmidt)"), h("option", { value: "equal-angle" }, "equal-angle (Wulff)"));
  projection.value = sel.projection;
  const roseOf = h("select", { id: "n-rose" }, h("option", { value: "dip_direction" }, "dip directions"), h("option", { value: "strike" }, "strikes (both ways)"));
  roseOf.value = sel.rose;
  const msg = h("span", { class: "field-msg", role: "alert" });
  // The transfer exports of the service, with this page's selection.
  const TRANSFER = {
    glb: { path: "scene.glb", label: "3D scene (glTF .glb)", type: "model/gltf-binary" },
    geojson: { path: "holes.geojson", label: "map (GeoJSON)", type: "application/geo+json" },
    points: { path: "points.csv", label: "points with normals (CSV)", type: "text/csv" },
    ags: { path: "transfer.ags", label: "geotechnical (AGS4)", type: "text/plain" },
  };
  const transferFormat = h("select", { id: "n-transfer" }, Object.entries(TRANSFER).map(([k, v]) => h("option", { value: k }, v.label)));
  const form = h("form", { class: "card filters", id: "net-form" },
    h("fieldset", {}, h("legend", {}, "Holes"), holeBoxes),
    h("fieldset", {}, h("legend", {}, "Types"), typeBoxes),
    h("div", { class: "field inline" }, h("label", { for: "n-min" }, `Depth from (${unit})`), minD, h("label", { for: "n-max" }, "to"), maxD),
    h("div", { class: "field inline" }, h("label", { for: "n-weight" }, "Weighting"), weighting, h("label", { for: "n-sets" }, "Sets"), sets),
    h("div", { class: "field inline" }, h("label", { for: "n-proj" }, "Net"), projection, h("label", { for: "n-rose" }, "Rose of"), roseOf),
    h("fieldset", {}, h("legend", {}, "Show with the poles"), showBoxes),
    h("div", { class: "actions" }, h("button", { type: "submit", class: "primary" }, "Draw"), h("button", { type: "button", id: "download-svg" }, "Download SVG"), h("button", { type: "button", id: "download-rose" }, "Download rose SVG"), msg),
    h("div", { class: "field inline" }, h("label", { for: "n-transfer" }, "Export the selection for modelling"), transferFormat, h("button", { type: "button", id: "download-transfer" }, "Download")));
  const netHost = h("div", { class: "net-big", id: "net" }, h("p", { class: "loading" }, "Drawing\u2026"));
  const netKey = h("div", { class: "net-key", id: "net-legend" });
  const roseHost = h("div", { class: "rose", id: "rose" });
  const statsHost = h("section", { class: "card" }, h("h2", {}, "Set statistics"));
  add(host, form, h("section", { class: "card net-card" }, h("h2", {}, "Net"), h("div", { class: "net-row" }, netHost, netKey)),
    statsHost, h("section", { class: "card rose-card" }, h("h2", {}, "Rose"), roseHost));

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
      weighting: weighting.value, sets: sets.value, projection: projection.value, show: checked(showBoxes), rose: roseOf.value,
    };
  }
  const filterOf = (s) => ({ hole: s.hole, type: s.type, min_depth: s.min_depth, max_depth: s.max_depth });
  form.addEventListener("submit", (e) => {
    e.preventDefault();
    const s = read();
    if (s) ctx.go(`#/p/${p.id}/nets` + query({ ...filterOf(s), terzaghi: s.weighting === "terzaghi" ? "true" : "", sets: s.sets === "0" ? "" : s.sets, projection: s.projection === "equal-area" ? "" : s.projection, show: s.show.join(",") || "none", rose: s.rose === "strike" ? "strike" : "" }));
  });
  let lastSvg = null, lastRose = null;
  const offer = (text, what) => {
    if (!text) { msg.textContent = `Draw a ${what} first.`; return; }
    save(text, `${p.project.name.replace(/\W+/g, "-")}-${what}.svg`, "image/svg+xml");
    say("SVG downloaded.", "ok");
  };
  form.querySelector("#download-svg").addEventListener("click", () => offer(lastSvg, "net"));
  form.querySelector("#download-rose").addEventListener("click", () => offer(lastRose, "rose"));
  form.querySelector("#download-transfer").addEventListener("click", async () => {
    const s = read();
    if (!s) return;
    const t = TRANSFER[transferFormat.value];
    try {
      await download(`/v1/projects/${p.id}/${t.path}` + query(filterOf(s)), `${p.project.name.replace(/\W+/g, "-")}-${t.path}`, t.type, true);
      say("Exported.", "ok");
    } catch (e) {
      msg.textContent = "Export failed: " + problemText(e);
    }
  });

  const fq = filterOf(sel);
  // The routes take the options of corvane net and stats: sets by type code
  // (of poles and lines alike) unless automatic sets (of the poles) are asked.
  const setQ = sel.sets === "0" ? { sets: "type", sets_on: "both" } : { sets: `auto:${sel.sets}` };
  const show = ["poles", "lines", "sets", ...sel.show.filter((x) => x === "planes" || x === "density")].join(",");
  const netQ = query({ ...fq, ...setQ, show, density: "kamb", projection: sel.projection });
  const statQ = query({ ...fq, ...setQ, weighting: sel.weighting === "terzaghi" ? "terzaghi" : "" });
  const [netSvg, roseSvg, stats] = await Promise.all([
    svgFrom(`/v1/projects/${p.id}/net${netQ}`).catch((e) => ({ error: e })),
    svgFrom(`/v1/projects/${p.id}/rose${query({ ...fq, of: sel.rose })}`).catch((e) => ({ error: e })),
    request("GET", `/v1/projects/${p.id}/statistics${statQ}`).then((r) => r.data).catch((e) => ({ error: e })),
  ]);
  if (!ctx.isCurrent()) return;

  if (netSvg.error) {
    put(netHost, h("p", { class: "msg bad" }, "The net could not be drawn: " + problemText(netSvg.error)));
  } else {
    lastSvg = netSvg;
    const key = showNet(netHost, netSvg, `${sel.projection === "equal-angle" ? "Equal-angle" : "Equal-area"} net of the selection, lower hemisphere`);
    put(netKey, h("h3", {}, `Lower hemisphere, ${sel.projection === "equal-angle" ? "equal-angle" : "equal-area"}`),
      setKeys(key.sets),
      h("p", { class: "help" }, "Filled marks: poles to planes; open marks: lines. A set's mean is the large mark, with its 95% cone; the dashed great circle is the mean plane."),
      sel.show.includes("density") ? h("p", { class: "help" }, "Shaded: Kamb density of the poles, darker is denser (levels in the downloaded SVG).") : null);
  }

  if (roseSvg.error) {
    put(roseHost, h("p", { class: "msg bad" }, problemText(roseSvg.error)));
  } else {
    lastRose = roseSvg;
    showSvg(roseHost, roseSvg, `Rose diagram of the ${sel.rose === "strike" ? "strikes" : "dip directions"} of the selection, as served`);
  }

  add(statsHost, stats.error ? h("p", { class: "msg bad" }, problemText(stats.error)) : statsTable(stats));
}
