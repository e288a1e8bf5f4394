// draw.js: SVG drawing for the page (small nets, plan, section, depth
// strip). Pure functions of their data; no network.

const NS = "http://www.w3.org/2000/svg";

// The visual language (type colours and marks, run confidence, severity)
// is defined once, on the server (package visual), and served by
// GET /v1/legend; main.js hands it here with useLegend before any view draws.
let L = null;

export function useLegend(legend) {
  L = legend;
}

export function legend() {
  return L;
}

// styleOfType is how a type code is drawn everywhere: the colour and mark
// stored with the project's vocabulary.
export function styleOfType(types, code) {
  const t = types.find((x) => x.code === code);
  return t ? { colour: t.colour, shape: t.mark } : { colour: "#6b6b6b", shape: "circle" };
}

// confidence returns {code, word, fill, pattern} of a run rating; unknown
// ratings are drawn as the last (none).
export function confidence(code) {
  const cs = L.confidences;
  return cs.find((c) => c.code === String(code || "").trim().toLowerCase()) || cs[cs.length - 1];
}

export function confidences() {
  return L.confidences;
}

// severity returns {code, word, fill, mark} of a QA severity.
export function severity(code) {
  const ss = L.severities;
  return ss.find((s) => s.code === code) || ss[ss.length - 1];
}

export function severities() {
  return L.severities;
}

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

// marker draws a mark of the legend centred at (x, y) with size r. The
// served paths are drawn at size 100 round the origin.
export function marker(shape, x, y, r, attrs = {}) {
  const d = (L && (L.mark_paths[shape] || L.mark_paths.circle)) || "";
  return el("path", { d, transform: `translate(${f2(x)} ${f2(y)}) scale(${r / 100})`, "vector-effect": "non-scaling-stroke", "data-mark": shape, ...attrs });
}

// smallNet draws a lower-hemisphere equal-area net of poles. groups is a list
// of {label, style, poles: [{trend, plunge}], emphasis}. The emphasised group
// (the pole being typed) is drawn last, large, with a ring.
export function smallNet(groups, { size = 260, label = "Equal-area net, lower hemisphere" } = {}) {
  const pad = 26;
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
    const a = clipSegment([fr.X(line.through.e - dx), fr.Y(line.through.n - dy)], [fr.X(line.through.e + dx), fr.Y(line.through.n + dy)], pad.l, pad.t, w - pad.r, h - pad.b);
    if (a) {
      const [[x1, y1], [x2, y2]] = a;
      s.append(el("line", { class: "section-line", x1: f2(x1), y1: f2(y1), x2: f2(x2), y2: f2(y2) }));
      // End labels sit just inside the frame, beside the line's ends.
      const ux = (x2 - x1) / Math.hypot(x2 - x1, y2 - y1 || 1e-9), uy = (y2 - y1) / Math.hypot(x2 - x1, y2 - y1 || 1e-9);
      s.append(el("text", { class: "section-end", x: f2(x1 + ux * 14 - uy * 12), y: f2(y1 + uy * 14 + ux * 12 + 5), "text-anchor": "middle" }, "A"));
      s.append(el("text", { class: "section-end", x: f2(x2 - ux * 14 - uy * 12), y: f2(y2 - uy * 14 + ux * 12 + 5), "text-anchor": "middle" }, "B"));
    }
  }
  const placed = [];
  holes.forEach((hd) => {
    const d = hd.path.map((p, i) => (i ? "L" : "M") + f2(fr.X(p.easting)) + " " + f2(fr.Y(p.northing))).join("");
    const g = el("g", { class: "trace", "data-hole": hd.name, tabindex: onPick ? 0 : null });
    g.append(el("path", { d, fill: "none" }));
    const c = hd.path[0];
    g.append(el("circle", { cx: f2(fr.X(c.easting)), cy: f2(fr.Y(c.northing)), r: 5 }));
    g.append(placeLabel(placed, fr.X(c.easting) + 8, fr.Y(c.northing) - 8, hd.name));
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
  const placed = [{ x: fr.X(0) - 8, y: pad.t, w: 16, h: 16 }, { x: fr.X(2 * line.half) - 16, y: pad.t, w: 16, h: 16 }];
  holes.forEach((hd) => {
    const pp = hd.path.map(proj);
    const far = pp.every((p) => p.off > line.width);
    const d = pp.map((p, i) => (i ? "L" : "M") + f2(fr.X(p.x)) + " " + f2(fr.Y(p.z))).join("");
    const g = el("g", { class: "trace" + (far ? " far" : ""), "data-hole": hd.name });
    g.append(el("path", { d, fill: "none" }));
    g.append(el("circle", { cx: f2(fr.X(pp[0].x)), cy: f2(fr.Y(pp[0].z)), r: 4.5 }));
    g.append(placeLabel(placed, fr.X(pp[0].x) + 6, fr.Y(pp[0].z) - 8, hd.name));
    s.append(g);
  });
  return s;
}

// clipSegment clips the segment p-q to the box [x0, x1] x [y0, y1]
// (Liang-Barsky); null when it misses the box.
function clipSegment(p, q, x0, y0, x1, y1) {
  let t0 = 0, t1 = 1;
  const dx = q[0] - p[0], dy = q[1] - p[1];
  for (const [pp, qq] of [[-dx, p[0] - x0], [dx, x1 - p[0]], [-dy, p[1] - y0], [dy, y1 - p[1]]]) {
    if (pp === 0) { if (qq < 0) return null; continue; }
    const r = qq / pp;
    if (pp < 0) { if (r > t1) return null; if (r > t0) t0 = r; } else { if (r < t0) return null; if (r < t1) t1 = r; }
  }
  return [[p[0] + t0 * dx, p[1] + t0 * dy], [p[0] + t1 * dx, p[1] + t1 * dy]];
}

// placeLabel returns a text at (x, y), moved up (then down) in line steps
// until its box clears every label already placed; the box is recorded.
// Widths are estimated at 0.75 em a character (12 px bold), generously.
function placeLabel(placed, x, y, text) {
  const w = text.length * 9 + 2, hgt = 16;
  const hits = (yy) => placed.some((b) => x < b.x + b.w && b.x < x + w && yy - hgt < b.y + b.h && b.y < yy + 3);
  let yy = y;
  for (const dy of [0, -18, -36, 18, 36, -54, 54, -72, 72]) {
    if (!hits(y + dy)) { yy = y + dy; break; }
  }
  placed.push({ x, y: yy - hgt, w, h: hgt });
  return el("text", { x: f2(x), y: f2(yy), class: "hole-label" }, text);
}

function bounds(pts) {
  let xmin = Infinity, xmax = -Infinity, ymin = Infinity, ymax = -Infinity;
  for (const [x, y] of pts) {
    if (x < xmin) xmin = x; if (x > xmax) xmax = x;
    if (y < ymin) ymin = y; if (y > ymax) ymax = y;
  }
  return [xmin, xmax, ymin, ymax];
}

// patternDefs holds the fill patterns of the run confidences
// (url(#conf-...)), as served in the legend.
export function patternDefs() {
  const defs = el("defs");
  const doc = new DOMParser().parseFromString(`<svg xmlns="${NS}">${L.confidences.map((c) => c.svg).join("")}</svg>`, "image/svg+xml");
  for (const p of [...doc.documentElement.children]) defs.append(document.importNode(p, true));
  return defs;
}

export function confidenceFill(c) {
  const k = confidence(c);
  return k.pattern ? `url(#conf-${k.code})` : k.fill;
}

// confSwatch is a legend swatch of a run confidence (the patterns come from
// the page's shared defs).
export function confSwatch(code) {
  const s = svg(26, 14, "");
  s.setAttribute("aria-hidden", "true");
  s.classList.add("keyshape", "wide");
  s.append(el("rect", { x: 0.75, y: 0.75, width: 24.5, height: 12.5, fill: confidenceFill(code), stroke: "#000", "stroke-width": 1.5, "data-confidence": code }));
  return s;
}

// severityKey is a legend swatch of a QA severity: its mark and fill.
export function severityKey(code) {
  const v = severity(code);
  return shapeKey({ colour: v.fill, shape: v.mark });
}

// depthStrip draws one hole down the page: runs by confidence, measurements
// by type in columns, QA flags at depth. onPick(kind, item) is called on a
// click or Enter on a measurement or flag.
export function depthStrip({ depth, runs, measurements, types, flags, unit = "m", onPick, highlightRun, vocab }) {
  // Columns are as wide as the longest type code needs (11 px bold heads).
  const colW = Math.max(34, ...types.map((t) => t.code.length * 7.5 + 8));
  const typeCols = types.length || 1;
  const xRun = 46, x0 = xRun + 40;
  const w = x0 + typeCols * colW + 44;
  const h = Math.max(520, Math.min(1600, depth * 2.2)) + 70;
  const top = 56, bottom = 14;
  const s = svg(w, h, "Depth strip: runs, measurements and QA flags");
  s.append(patternDefs());
  const Y = (d) => top + (d / Math.max(1, depth)) * (h - top - bottom);
  const step = niceStep(depth, 12);
  const ax = el("g", { class: "grid" });
  for (let d = 0; d <= depth + 1e-9; d += step) {
    ax.append(el("line", { x1: 40, y1: f2(Y(d)), x2: w - 6, y2: f2(Y(d)) }));
    ax.append(el("text", { x: 36, y: f2(Y(d) + 4), "text-anchor": "end" }, String(Math.round(d))));
  }
  ax.append(el("text", { x: 4, y: top - 32, class: "axis" }, `Depth (${unit})`));
  s.append(ax);
  s.append(el("text", { x: xRun + 14, y: top - 12, "text-anchor": "middle", class: "head" }, "Runs"));
  for (const r of runs) {
    const k = confidence(r.confidence);
    const rect = el("rect", { x: xRun, y: f2(Y(r.from)), width: 28, height: f2(Math.max(1, Y(r.to) - Y(r.from))), fill: confidenceFill(r.confidence), stroke: "#000", "stroke-width": 0.7, "data-confidence": r.confidence, "data-id": r.id, class: highlightRun && String(r.id) === String(highlightRun) ? "hl-run" : null });
    rect.append(el("title", {}, `${r.from}\u2013${r.to} ${unit}: ${k.word}${r.mismatch != null ? `, mismatch ${r.mismatch}\u00b0` : ""}`));
    s.append(rect);
  }
  types.forEach((t, i) => {
    const x = x0 + i * colW + colW / 2;
    s.append(el("text", { x, y: top - 12, "text-anchor": "middle", class: "head" }, t.code));
    s.append(el("line", { x1: x, y1: top, x2: x, y2: h - bottom, class: "col" }));
  });
  const colOf = new Map(types.map((t, i) => [t.code, i]));
  const mg = el("g", { class: "strip-m" });
  for (const m of measurements) {
    const i = colOf.has(m.type) ? colOf.get(m.type) : 0;
    const st = styleOfType(vocab || types, m.type);
    const mk = marker(st.shape, x0 + i * colW + colW / 2, Y(m.depth), 4.2, { fill: st.colour, stroke: "#000", "stroke-width": 0.6, "data-id": m.id, tabindex: onPick ? 0 : null });
    mk.append(el("title", {}, `${m.type} at ${m.depth} ${unit}`));
    if (onPick) {
      mk.addEventListener("click", () => onPick("measurement", m));
      mk.addEventListener("keydown", (e) => { if (e.key === "Enter") onPick("measurement", m); });
    }
    mg.append(mk);
  }
  s.append(mg);
  const xf = x0 + typeCols * colW + 14;
  s.append(el("text", { x: xf + 8, y: top - 12, "text-anchor": "middle", class: "head" }, "QA"));
  for (const f of flags || []) {
    const sev = f.severity || "info";
    const y = Y(f.depth || 0);
    const sv = severity(sev);
    const tri = marker(sv.mark, xf + 6, y, 5.5, { fill: sv.fill, stroke: "#000", "stroke-width": 1.2, class: "flag " + sev, tabindex: onPick ? 0 : null });
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
