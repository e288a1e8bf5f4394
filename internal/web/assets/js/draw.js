// draw.js: SVG drawing for the page (small nets, plan, section, depth
// strip). Pure functions of their data; no network.

const NS = "http://www.w3.org/2000/svg";

// Okabe & Ito (2008) colour-blind-safe palette, each paired with a marker
// shape so that no distinction rests on colour alone.
const PALETTE = ["#0072B2", "#D55E00", "#009E73", "#CC79A7", "#E69F00", "#56B4E9", "#000000", "#F0E442"];
const SHAPES = ["circle", "square", "triangle", "diamond", "down", "cross", "plus", "star"];

export function styleFor(i) {
  return { colour: PALETTE[i % PALETTE.length], shape: SHAPES[i % SHAPES.length] };
}

// Confidence of orientation runs: fill colour and a pattern, plus a letter.
export const CONFIDENCE = {
  good: { fill: "#0072B2", pattern: "", letter: "G", label: "good" },
  fair: { fill: "#56B4E9", pattern: "hatch", letter: "F", label: "fair" },
  poor: { fill: "#E69F00", pattern: "dots", letter: "P", label: "poor" },
  none: { fill: "#ffffff", pattern: "cross", letter: "N", label: "none (unusable)" },
};

export function el(name, attrs = {}, ...children) {
  const e = document.createElementNS(NS, name);
  for (const [k, v] of Object.entries(attrs)) {
    if (v !== undefined && v !== null) e.setAttribute(k, String(v));
  }
  for (const c of children) {
    if (c === null || c === undefined) continue;
    e.append(typeof c === "string" ? document.createTextNode(c) : c);
  }
  return e;
}

export function svg(w, h, label) {
  return el("svg", { viewBox: `0 0 ${w} ${h}`, role: "img", "aria-label": label, xmlns: NS, class: "chart" });
}

const rad = (d) => (d * Math.PI) / 180;
const f2 = (v) => Math.round(v * 100) / 100;

// equalArea projects a lower-hemisphere line (trend, plunge in degrees) onto
// the unit-radius equal-area (Lambert azimuthal, Schmidt) net, north up:
// r = sqrt(2) sin((90 - plunge) / 2), which is 1 on the primitive circle
// (plunge 0). Returns {x, y} with y up.
function equalArea(trend, plunge) {
  const r = Math.SQRT2 * Math.sin(rad(90 - plunge) / 2);
  return { x: r * Math.sin(rad(trend)), y: r * Math.cos(rad(trend)) };
}

export function marker(shape, x, y, r, attrs = {}) {
  const a = { ...attrs };
  switch (shape) {
    case "square":
      return el("rect", { x: f2(x - r * 0.85), y: f2(y - r * 0.85), width: f2(r * 1.7), height: f2(r * 1.7), ...a });
    case "triangle":
      return el("path", { d: `M${f2(x)} ${f2(y - r * 1.1)}L${f2(x + r)} ${f2(y + r * 0.75)}L${f2(x - r)} ${f2(y + r * 0.75)}Z`, ...a });
    case "down":
      return el("path", { d: `M${f2(x)} ${f2(y + r * 1.1)}L${f2(x + r)} ${f2(y - r * 0.75)}L${f2(x - r)} ${f2(y - r * 0.75)}Z`, ...a });
    case "diamond":
      return el("path", { d: `M${f2(x)} ${f2(y - r * 1.2)}L${f2(x + r)} ${f2(y)}L${f2(x)} ${f2(y + r * 1.2)}L${f2(x - r)} ${f2(y)}Z`, ...a });
    case "cross":
      return el("path", { d: `M${f2(x - r)} ${f2(y - r)}L${f2(x + r)} ${f2(y + r)}M${f2(x + r)} ${f2(y - r)}L${f2(x - r)} ${f2(y + r)}`, ...a, fill: "none", stroke: a.fill || a.stroke, "stroke-width": 2.2 });
    case "plus":
      return el("path", { d: `M${f2(x - r * 1.2)} ${f2(y)}L${f2(x + r * 1.2)} ${f2(y)}M${f2(x)} ${f2(y - r * 1.2)}L${f2(x)} ${f2(y + r * 1.2)}`, ...a, fill: "none", stroke: a.fill || a.stroke, "stroke-width": 2.2 });
    case "star": {
      let d = "";
      for (let i = 0; i < 10; i++) {
        const rr = i % 2 ? r * 0.5 : r * 1.25;
        const t = (Math.PI / 5) * i;
        d += (i ? "L" : "M") + f2(x + rr * Math.sin(t)) + " " + f2(y - rr * Math.cos(t));
      }
      return el("path", { d: d + "Z", ...a });
    }
    default:
      return el("circle", { cx: f2(x), cy: f2(y), r: f2(r), ...a });
  }
}

// smallNet draws a lower-hemisphere equal-area net of poles. groups is a list
// of {label, style, poles: [{trend, plunge}], emphasis}. The emphasised group
// (the pole being typed) is drawn last, large, with a ring.
export function smallNet(groups, { size = 260, label = "Equal-area net, lower hemisphere" } = {}) {
  const pad = 22;
  const R = (size - 2 * pad) / 2;
  const cx = size / 2;
  const cy = size / 2;
  const s = svg(size, size, label);
  s.append(el("circle", { cx, cy, r: R, fill: "#fff", stroke: "#000", "stroke-width": 1.5 }));
  for (let t = 0; t < 360; t += 10) {
    const long = t % 90 === 0;
    const x1 = cx + R * Math.sin(rad(t));
    const y1 = cy - R * Math.cos(rad(t));
    const x2 = cx + (R + (long ? 8 : 4)) * Math.sin(rad(t));
    const y2 = cy - (R + (long ? 8 : 4)) * Math.cos(rad(t));
    s.append(el("line", { x1: f2(x1), y1: f2(y1), x2: f2(x2), y2: f2(y2), stroke: "#000", "stroke-width": long ? 1.5 : 1 }));
  }
  s.append(el("text", { x: cx, y: pad - 10, "text-anchor": "middle", class: "net-n" }, "N"));
  s.append(el("path", { d: `M${cx - 5} ${cy}H${cx + 5}M${cx} ${cy - 5}V${cy + 5}`, stroke: "#555", "stroke-width": 1 }));
  const ordered = [...groups].sort((a, b) => (a.emphasis ? 1 : 0) - (b.emphasis ? 1 : 0));
  for (const g of ordered) {
    const grp = el("g", { class: g.emphasis ? "pole-new" : "pole-old", "data-label": g.label });
    for (const p of g.poles) {
      if (!Number.isFinite(p.trend) || !Number.isFinite(p.plunge)) continue;
      const q = equalArea(p.trend, p.plunge);
      const x = cx + R * q.x;
      const y = cy - R * q.y;
      if (g.emphasis) {
        grp.append(el("circle", { cx: f2(x), cy: f2(y), r: 11, fill: "none", stroke: "#000", "stroke-width": 2.5 }));
        grp.append(marker(g.style.shape, x, y, 6.5, { fill: g.style.colour, stroke: "#000", "stroke-width": 1.2 }));
      } else {
        grp.append(marker(g.style.shape, x, y, 3.6, { fill: g.style.colour, stroke: "#000", "stroke-width": 0.6, "fill-opacity": 0.85 }));
      }
    }
    s.append(grp);
  }
  return s;
}

function niceStep(span, target) {
  const raw = span / Math.max(1, target);
  const p = Math.pow(10, Math.floor(Math.log10(raw)));
  for (const m of [1, 2, 2.5, 5, 10]) if (m * p >= raw) return m * p;
  return 10 * p;
}

// frame returns a data->screen mapping for a box with equal scale on both
// axes (plan, section: true shapes) or free scales.
function frame(xmin, xmax, ymin, ymax, w, h, pad, equal) {
  let sx = (w - pad.l - pad.r) / Math.max(1e-9, xmax - xmin);
  let sy = (h - pad.t - pad.b) / Math.max(1e-9, ymax - ymin);
  if (equal) {
    const s = Math.min(sx, sy);
    const ex = (w - pad.l - pad.r) / s - (xmax - xmin);
    const ey = (h - pad.t - pad.b) / s - (ymax - ymin);
    xmin -= ex / 2; xmax += ex / 2; ymin -= ey / 2; ymax += ey / 2;
    sx = sy = s;
  }
  return {
    xmin, xmax, ymin, ymax,
    X: (x) => pad.l + (x - xmin) * sx,
    Y: (y) => h - pad.b - (y - ymin) * sy,
  };
}

function grid(s, fr, w, h, pad, xlabel, ylabel) {
  const gx = el("g", { class: "grid" });
  const sxs = niceStep(fr.xmax - fr.xmin, 5);
  for (let v = Math.ceil(fr.xmin / sxs) * sxs; v <= fr.xmax; v += sxs) {
    const x = fr.X(v);
    gx.append(el("line", { x1: f2(x), y1: pad.t, x2: f2(x), y2: h - pad.b }));
    gx.append(el("text", { x: f2(x), y: h - pad.b + 16, "text-anchor": "middle" }, String(Math.round(v))));
  }
  const sys = niceStep(fr.ymax - fr.ymin, 5);
  for (let v = Math.ceil(fr.ymin / sys) * sys; v <= fr.ymax; v += sys) {
    const y = fr.Y(v);
    gx.append(el("line", { x1: pad.l, y1: f2(y), x2: w - pad.r, y2: f2(y) }));
    gx.append(el("text", { x: pad.l - 6, y: f2(y + 4), "text-anchor": "end" }, String(Math.round(v))));
  }
  gx.append(el("text", { x: (pad.l + w - pad.r) / 2, y: h - 6, "text-anchor": "middle", class: "axis" }, xlabel));
  gx.append(el("text", { x: 14, y: (pad.t + h - pad.b) / 2, "text-anchor": "middle", class: "axis", transform: `rotate(-90 14 ${(pad.t + h - pad.b) / 2})` }, ylabel));
  s.append(gx);
}

// planView draws collars and traces in easting/northing with equal scales;
// line = {azimuth, through: {e, n}, half} adds the section line.
export function planView(holes, { w = 560, h = 420, line, unit = "m", onPick } = {}) {
  const s = svg(w, h, "Plan view of collars and hole traces");
  const pts = holes.flatMap((hd) => hd.path.map((p) => [p.easting, p.northing]));
  if (!pts.length) return s;
  let [xmin, xmax, ymin, ymax] = bounds(pts);
  const m = Math.max(20, 0.08 * Math.max(xmax - xmin, ymax - ymin));
  const pad = { l: 66, r: 18, t: 16, b: 40 };
  const fr = frame(xmin - m, xmax + m, ymin - m, ymax + m, w, h, pad, true);
  grid(s, fr, w, h, pad, `Easting (${unit})`, `Northing (${unit})`);
  if (line) {
    const dx = Math.sin(rad(line.azimuth)) * line.half;
    const dy = Math.cos(rad(line.azimuth)) * line.half;
    s.append(el("line", { class: "section-line", x1: f2(fr.X(line.through.e - dx)), y1: f2(fr.Y(line.through.n - dy)), x2: f2(fr.X(line.through.e + dx)), y2: f2(fr.Y(line.through.n + dy)) }));
    s.append(el("text", { class: "section-end", x: f2(fr.X(line.through.e - dx)), y: f2(fr.Y(line.through.n - dy) - 6) }, "A"));
    s.append(el("text", { class: "section-end", x: f2(fr.X(line.through.e + dx)), y: f2(fr.Y(line.through.n + dy) - 6) }, "B"));
  }
  holes.forEach((hd) => {
    const d = hd.path.map((p, i) => (i ? "L" : "M") + f2(fr.X(p.easting)) + " " + f2(fr.Y(p.northing))).join("");
    const g = el("g", { class: "trace", "data-hole": hd.name, tabindex: onPick ? 0 : null });
    g.append(el("path", { d, fill: "none" }));
    const c = hd.path[0];
    g.append(el("circle", { cx: f2(fr.X(c.easting)), cy: f2(fr.Y(c.northing)), r: 5 }));
    g.append(el("text", { x: f2(fr.X(c.easting) + 8), y: f2(fr.Y(c.northing) - 8) }, hd.name));
    if (onPick) {
      g.addEventListener("click", () => onPick(hd));
      g.addEventListener("keydown", (e) => { if (e.key === "Enter") onPick(hd); });
    }
    s.append(g);
  });
  return s;
}

// sectionView projects the traces onto the vertical plane through the
// section line: x = distance along the line from A, y = elevation. Points
// farther than `width` from the line are drawn faint.
export function sectionView(holes, { w = 560, h = 360, line, unit = "m" } = {}) {
  const s = svg(w, h, `Section along azimuth ${line.azimuth}`);
  const ux = Math.sin(rad(line.azimuth));
  const uy = Math.cos(rad(line.azimuth));
  const proj = (p) => ({
    x: (p.easting - line.through.e) * ux + (p.northing - line.through.n) * uy + line.half,
    off: Math.abs(-(p.easting - line.through.e) * uy + (p.northing - line.through.n) * ux),
    z: p.elevation,
  });
  const all = holes.flatMap((hd) => hd.path.map(proj));
  if (!all.length) return s;
  const [xmin, xmax, ymin, ymax] = bounds(all.map((p) => [p.x, p.z]));
  const m = Math.max(20, 0.06 * Math.max(xmax - xmin, ymax - ymin));
  const pad = { l: 66, r: 18, t: 16, b: 40 };
  const fr = frame(Math.min(0, xmin - m), Math.max(2 * line.half, xmax + m), ymin - m, ymax + m, w, h, pad, true);
  grid(s, fr, w, h, pad, `Distance along A\u2013B (${unit}), azimuth ${Math.round(line.azimuth)}\u00b0`, `Elevation (${unit})`);
  s.append(el("text", { class: "section-end", x: f2(fr.X(0)), y: pad.t + 12 }, "A"));
  s.append(el("text", { class: "section-end", x: f2(fr.X(2 * line.half)), y: pad.t + 12, "text-anchor": "end" }, "B"));
  holes.forEach((hd) => {
    const pp = hd.path.map(proj);
    const far = pp.every((p) => p.off > line.width);
    const d = pp.map((p, i) => (i ? "L" : "M") + f2(fr.X(p.x)) + " " + f2(fr.Y(p.z))).join("");
    const g = el("g", { class: "trace" + (far ? " far" : ""), "data-hole": hd.name });
    g.append(el("path", { d, fill: "none" }));
    g.append(el("circle", { cx: f2(fr.X(pp[0].x)), cy: f2(fr.Y(pp[0].z)), r: 4.5 }));
    g.append(el("text", { x: f2(fr.X(pp[0].x) + 6), y: f2(fr.Y(pp[0].z) - 8) }, hd.name));
    s.append(g);
  });
  return s;
}

function bounds(pts) {
  let xmin = Infinity, xmax = -Infinity, ymin = Infinity, ymax = -Infinity;
  for (const [x, y] of pts) {
    if (x < xmin) xmin = x; if (x > xmax) xmax = x;
    if (y < ymin) ymin = y; if (y > ymax) ymax = y;
  }
  return [xmin, xmax, ymin, ymax];
}

// patternDefs holds the fill patterns of the run confidences (url(#pat-...)),
// shared by the depth strip and the overview's bars.
export function patternDefs() {
  const defs = el("defs");
  defs.append(el("pattern", { id: "pat-hatch", width: 6, height: 6, patternUnits: "userSpaceOnUse", patternTransform: "rotate(45)" },
    el("rect", { width: 6, height: 6, fill: CONFIDENCE.fair.fill }), el("line", { x1: 0, y1: 0, x2: 0, y2: 6, stroke: "#000", "stroke-width": 1.6 })));
  defs.append(el("pattern", { id: "pat-dots", width: 6, height: 6, patternUnits: "userSpaceOnUse" },
    el("rect", { width: 6, height: 6, fill: CONFIDENCE.poor.fill }), el("circle", { cx: 3, cy: 3, r: 1.3, fill: "#000" })));
  defs.append(el("pattern", { id: "pat-cross", width: 8, height: 8, patternUnits: "userSpaceOnUse" },
    el("rect", { width: 8, height: 8, fill: "#fff" }), el("path", { d: "M0 0L8 8M8 0L0 8", stroke: "#555", "stroke-width": 1.2 })));
  return defs;
}

export function confidenceFill(c) {
  const k = CONFIDENCE[c] || CONFIDENCE.none;
  return k.pattern ? `url(#pat-${k.pattern})` : k.fill;
}

// depthStrip draws one hole down the page: runs by confidence, measurements
// by type in columns, QA flags at depth. onPick(kind, item) is called on a
// click or Enter on a measurement or flag.
export function depthStrip({ depth, runs, measurements, types, flags, unit = "m", onPick, highlightRun }) {
  const colW = 52;
  const typeCols = types.length || 1;
  const w = 90 + 56 + typeCols * colW + 70 + 20;
  const h = Math.max(520, Math.min(1600, depth * 2.2)) + 70;
  const top = 56, bottom = 14;
  const s = svg(w, h, "Depth strip: runs, measurements and QA flags");
  s.append(patternDefs());
  const Y = (d) => top + (d / Math.max(1, depth)) * (h - top - bottom);
  const step = niceStep(depth, 12);
  const ax = el("g", { class: "grid" });
  for (let d = 0; d <= depth + 1e-9; d += step) {
    ax.append(el("line", { x1: 60, y1: f2(Y(d)), x2: w - 10, y2: f2(Y(d)) }));
    ax.append(el("text", { x: 54, y: f2(Y(d) + 4), "text-anchor": "end" }, String(Math.round(d))));
  }
  ax.append(el("text", { x: 14, y: top - 30, class: "axis" }, `Depth (${unit})`));
  s.append(ax);
  const xRun = 70;
  s.append(el("text", { x: xRun + 18, y: top - 12, "text-anchor": "middle", class: "head" }, "Runs"));
  for (const r of runs) {
    const k = CONFIDENCE[r.confidence] || CONFIDENCE.none;
    const rect = el("rect", { x: xRun, y: f2(Y(r.from)), width: 36, height: f2(Math.max(1, Y(r.to) - Y(r.from))), fill: confidenceFill(r.confidence), stroke: "#000", "stroke-width": 0.7, "data-confidence": r.confidence, "data-id": r.id, class: highlightRun && String(r.id) === String(highlightRun) ? "hl-run" : null });
    rect.append(el("title", {}, `${r.from}\u2013${r.to} ${unit}: ${k.label}${r.mismatch != null ? `, mismatch ${r.mismatch}\u00b0` : ""}`));
    s.append(rect);
  }
  const x0 = xRun + 56;
  types.forEach((t, i) => {
    const x = x0 + i * colW + colW / 2;
    s.append(el("text", { x, y: top - 12, "text-anchor": "middle", class: "head" }, t.code));
    s.append(el("line", { x1: x, y1: top, x2: x, y2: h - bottom, class: "col" }));
  });
  const colOf = new Map(types.map((t, i) => [t.code, i]));
  const mg = el("g", { class: "strip-m" });
  for (const m of measurements) {
    const i = colOf.has(m.type) ? colOf.get(m.type) : 0;
    const st = styleFor(i);
    const mk = marker(st.shape, x0 + i * colW + colW / 2, Y(m.depth), 4.2, { fill: st.colour, stroke: "#000", "stroke-width": 0.6, "data-id": m.id, tabindex: onPick ? 0 : null });
    mk.append(el("title", {}, `${m.type} at ${m.depth} ${unit}`));
    if (onPick) {
      mk.addEventListener("click", () => onPick("measurement", m));
      mk.addEventListener("keydown", (e) => { if (e.key === "Enter") onPick("measurement", m); });
    }
    mg.append(mk);
  }
  s.append(mg);
  const xf = x0 + typeCols * colW + 24;
  s.append(el("text", { x: xf + 8, y: top - 12, "text-anchor": "middle", class: "head" }, "QA"));
  for (const f of flags || []) {
    const sev = f.severity || "info";
    const y = Y(f.depth || 0);
    const tri = el("path", { d: `M${xf} ${f2(y)}l12 -7v14z`, class: "flag " + sev, tabindex: onPick ? 0 : null });
    tri.append(el("title", {}, `${f.check} at ${f.depth} ${unit}: ${f.message}`));
    if (onPick) {
      tri.addEventListener("click", () => onPick("flag", f));
      tri.addEventListener("keydown", (e) => { if (e.key === "Enter") onPick("flag", f); });
    }
    s.append(tri);
  }
  return s;
}

// shapeKey is a legend swatch: the marker of a style, 16 px square.
export function shapeKey(style) {
  const s = svg(16, 16, "");
  s.setAttribute("aria-hidden", "true");
  s.classList.add("keyshape");
  s.append(marker(style.shape, 8, 8, 5, { fill: style.colour, stroke: "#000", "stroke-width": 0.8 }));
  return s;
}
