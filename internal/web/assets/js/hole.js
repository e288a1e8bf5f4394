// hole.js: one hole: a depth strip (runs by confidence, measurements by type,
// QA flags at depth), the measurements with derived values (sortable, with
// the server's filters), export of the current filter to CSV, and the survey.

import { download, query, get } from "./api.js";
import { h, fmt, az, say, problemText, add, put } from "./dom.js";
import { runs, qaReport } from "./data.js";
import { surveyCard } from "./surveys.js";
import { depthStrip } from "./draw.js";
import { confidenceLegend, severityLegend, typeLegend } from "./legend.js";

// PAGE is how many rows the hole view asks for at a time: the server pages
// in depth order by keyset, so a long hole opens as fast as a short one.
const PAGE = 250;

const COLUMNS = [
  { key: "id", label: "Id", num: true, get: (m) => m.id },
  { key: "depth", label: "Depth", num: true, unit: true, get: (m) => m.depth, d: 2 },
  { key: "type", label: "Type", get: (m) => m.type },
  { key: "alpha", label: "\u03b1", num: true, get: (m) => m.alpha, d: 0 },
  { key: "beta", label: "\u03b2", num: true, get: (m) => m.beta, d: 0 },
  { key: "gamma", label: "\u03b3", num: true, get: (m) => m.gamma, d: 0 },
  { key: "dip", label: "Dip", num: true, get: (m) => m.derived && m.derived.dip, d: 0 },
  { key: "dip_direction", label: "Dip dir.", num: true, az: true, get: (m) => m.derived && m.derived.dip_direction },
  { key: "strike", label: "Strike", num: true, az: true, get: (m) => m.derived && m.derived.strike },
  { key: "line", label: "Line tr./pl.", get: (m) => m.derived && m.derived.line_trend, text: (m) => (m.derived && m.derived.line_trend != null ? `${az(m.derived.line_trend)} / ${fmt(m.derived.line_plunge, 0)}` : "") },
  { key: "true_thickness", label: "True thick.", num: true, unit: true, get: (m) => m.derived && m.derived.true_thickness, d: 2 },
  { key: "run", label: "Run", get: (m) => m.derived && m.derived.run_confidence },
  { key: "warnings", label: "Warnings", wide: true, get: (m) => ((m.derived && m.derived.warnings) || []).join("; ") + (m.derived && m.derived.error ? m.derived.error : "") },
  { key: "logged_by", label: "Logged by", get: (m) => m.logged_by },
];

export async function holeView(ctx, holeId) {
  const { p, host, params } = ctx;
  const unit = p.unit;
  if (!p.holes.length) {
    add(host, h("h1", {}, "Hole"), h("p", {}, "This programme has no holes yet."));
    return;
  }
  const ho = p.holes.find((x) => String(x.id) === String(holeId)) || p.holes[0];
  const pick = h("select", { id: "hole-pick", "aria-label": "Hole" }, p.holes.map((x) => h("option", { value: x.id, selected: x.id === ho.id }, x.name)));
  pick.addEventListener("change", () => ctx.go(`#/p/${p.id}/hole/${pick.value}`));
  add(host, h("div", { class: "title-row" }, h("h1", {}, `Hole ${ho.name}`), pick,
    h("a", { class: "button", href: `#/p/${p.id}/log?hole=${ho.id}` }, "Log in this hole")));
  add(host, h("p", { class: "lede" },
    `Collar ${fmt(ho.easting, 1)} E, ${fmt(ho.northing, 1)} N, ${fmt(ho.elevation, 1)} ${unit}; azimuth ${az(ho.azimuth)}, dip ${fmt(ho.dip, 0)}; final depth ${fmt(ho.final_depth, 1)} ${unit}` + (ho.crs ? `; ${ho.crs}` : "") + "."));

  // Filter state lives in the URL so a view can be shared and reloaded.
  const f = {
    type: (params.get("type") || "").split(",").filter(Boolean),
    min_depth: params.get("min_depth") || "",
    max_depth: params.get("max_depth") || "",
    from: params.get("from") || "",
    to: params.get("to") || "",
  };
  const sort = { key: params.get("sort") || "depth", dir: params.get("dir") === "desc" ? -1 : 1 };

  const stripBox = h("section", { class: "card strip-card" }, h("h2", {}, "Depth strip"), h("p", { class: "loading" }, "Loading\u2026"));
  const tableBox = h("section", { class: "card table-card" });
  const surveyBox = h("section", { class: "card" });
  add(host, h("div", { class: "hole-grid" }, stripBox, tableBox), surveyBox);

  // Filters: exactly the server's measurement filters, so the table and the
  // CSV export always hold the same rows.
  const serverFilter = (q) => ({ hole: ho.name, type: q.type, min_depth: q.min_depth, max_depth: q.max_depth, from: q.from, to: q.to });
  const pageOf = (after) => get(`/v1/projects/${p.id}/measurements` + query({ ...serverFilter(f), order: "depth", limit: PAGE, after }));

  const [rs, first, qa] = await Promise.all([
    runs(p.id, ho.id),
    pageOf(""),
    qaReport(p.id, ho.id).catch((e) => ({ error: e })),
  ]);
  if (!ctx.isCurrent()) return;
  const flags = !qa.error ? (qa.findings || []).filter((x) => !x.hole_id || x.hole_id === ho.name) : [];
  let filtered = first.items || [];
  let nextAfter = first.next_after;

  const highlightM = params.get("m");
  const highlightS = params.get("station");

  const onPick = (kind, item) => {
    if (kind === "measurement") focusRow(item.id);
    else if (kind === "flag") {
      if (item.id && item.source !== "runs") focusRow(item.id);
      else say(`${item.check} at ${item.depth} ${unit}: ${item.message}`);
    }
  };
  const stripHost = h("div", { class: "strip-host" });
  const stripNote = h("p", { class: "help", id: "strip-note" });
  const typeKey = h("div", {});
  function drawStrip() {
    const used = [...new Set(filtered.map((m) => m.type))];
    const typesUsed = p.types.filter((t) => used.includes(t.code));
    put(stripHost, depthStrip({ depth: ho.final_depth, runs: rs, measurements: filtered, types: typesUsed, vocab: p.types, flags, unit, onPick, highlightRun: params.get("run") }));
    put(typeKey, typeLegend(p.types, typesUsed.map((t) => t.code)));
    stripNote.textContent = nextAfter != null ? `Measurements drawn: the ${filtered.length} shown in the table (to ${fmt(filtered[filtered.length - 1].depth, 2)} ${unit}).` : "";
  }
  put(stripBox, h("h2", {}, "Depth strip"), stripHost, stripNote,
    confidenceLegend(), typeKey, severityLegend(),
    qa.error ? h("p", { class: "msg bad" }, "QA could not be read: " + problemText(qa.error)) : null);

  // Filters: exactly the server's measurement filters, so the table and the
  // CSV export always hold the same rows.
  const typeBoxes = p.types.map((t) => h("label", { class: "check" }, h("input", { type: "checkbox", name: "type", value: t.code, checked: f.type.includes(t.code) }), t.code));
  const minD = h("input", { id: "flt-min", inputmode: "decimal", value: f.min_depth, size: 6 });
  const maxD = h("input", { id: "flt-max", inputmode: "decimal", value: f.max_depth, size: 6 });
  const from = h("input", { id: "flt-from", type: "date", value: f.from });
  const to = h("input", { id: "flt-to", type: "date", value: f.to });
  const filterMsg = h("span", { class: "field-msg", role: "alert" });
  const filterForm = h("form", { class: "filters", id: "filters" },
    h("fieldset", {}, h("legend", {}, "Types (none ticked: all)"), typeBoxes),
    h("div", { class: "field inline" }, h("label", { for: "flt-min" }, `Depth from (${unit})`), minD, h("label", { for: "flt-max" }, "to"), maxD),
    h("div", { class: "field inline" }, h("label", { for: "flt-from" }, "Logged from"), from, h("label", { for: "flt-to" }, "to"), to),
    h("div", { class: "actions" }, h("button", { type: "submit", class: "primary" }, "Apply filter"),
      h("button", { type: "button", id: "export-csv", onclick: () => exportCsv() }, "Export CSV"), filterMsg));
  filterForm.addEventListener("submit", (e) => {
    e.preventDefault();
    const q = readFilter();
    if (!q) return;
    ctx.go(`#/p/${p.id}/hole/${ho.id}` + query({ ...q, type: q.type, sort: sort.key, dir: sort.dir < 0 ? "desc" : "" }));
  });

  function readFilter() {
    const q = { type: typeBoxes.map((l) => l.firstChild).filter((c) => c.checked).map((c) => c.value), min_depth: minD.value.trim(), max_depth: maxD.value.trim(), from: from.value, to: to.value };
    for (const [k, el] of [["min_depth", minD], ["max_depth", maxD]]) {
      if (q[k] !== "" && !Number.isFinite(Number(q[k]))) {
        filterMsg.textContent = `${k.replace("_", " ")}: \u201c${q[k]}\u201d is not a number.`;
        el.setAttribute("aria-invalid", "true");
        el.focus();
        return null;
      }
      el.removeAttribute("aria-invalid");
    }
    filterMsg.textContent = "";
    return q;
  }

  async function exportCsv() {
    const q = readFilter();
    if (!q) return;
    try {
      await download(`/v1/projects/${p.id}/measurements.csv` + query(serverFilter(q)), `${ho.name}-measurements.csv`, "text/csv");
      say("CSV exported.", "ok");
    } catch (e) {
      filterMsg.textContent = "Export failed: " + problemText(e);
    }
  }

  const tbody = h("tbody");
  const headRow = h("tr", {}, h("th", { scope: "col" }, h("span", { class: "sr" }, "Actions")), COLUMNS.map((c) => {
    const label = c.unit ? `${c.label} (${unit})` : c.label;
    const btn = h("button", { type: "button", class: "sort", "data-key": c.key }, label);
    btn.addEventListener("click", () => {
      sort.dir = sort.key === c.key ? -sort.dir : 1;
      sort.key = c.key;
      history.replaceState(null, "", location.hash.replace(/([?&])(sort|dir)=[^&]*/g, "").replace(/[?&]$/, "") + (location.hash.includes("?") ? "&" : "?") + `sort=${sort.key}${sort.dir < 0 ? "&dir=desc" : ""}`);
      renderRows();
    });
    return h("th", { scope: "col", "aria-sort": "none", "data-key": c.key }, btn);
  }));
  const table = h("table", { class: "data", id: "measurements" }, h("thead", {}, headRow), tbody);

  function renderRows() {
    drawStrip();
    const col = COLUMNS.find((c) => c.key === sort.key) || COLUMNS[1];
    const rows = [...filtered].sort((a, b) => {
      const x = col.get(a), y = col.get(b);
      if (x == null && y == null) return a.depth - b.depth;
      if (x == null) return 1;
      if (y == null) return -1;
      const c = typeof x === "number" && typeof y === "number" ? x - y : String(x).localeCompare(String(y), undefined, { numeric: true });
      return c * sort.dir || a.depth - b.depth;
    });
    for (const th of headRow.querySelectorAll("th[data-key]")) th.setAttribute("aria-sort", th.dataset.key === sort.key ? (sort.dir > 0 ? "ascending" : "descending") : "none");
    put(tbody, ...rows.map((m) => h("tr", { "data-id": m.id, id: `m-${m.id}`, class: m.derived && (m.derived.error || (m.derived.warnings || []).length) ? "warned" : "" },
      h("td", { "data-key": "edit" }, h("a", { href: `#/p/${p.id}/log?hole=${ho.id}&edit=${m.id}` }, "Edit")),
      COLUMNS.map((c) => {
        const v = c.get(m);
        let t = c.text ? c.text(m) : v;
        if (!c.text && c.num) t = v == null ? "" : c.az ? az(v) : fmt(v, c.d ?? 0);
        return h("td", { class: c.num ? "num" : c.key === "warnings" ? "warn" : "", "data-key": c.key }, t ?? "");
      }))));
  }

  function focusRow(id) {
    const tr = document.getElementById(`m-${id}`);
    if (!tr) { say(`Measurement ${id} is not in the current filter.`); return; }
    for (const x of tbody.querySelectorAll("tr.hl")) x.classList.remove("hl");
    tr.classList.add("hl");
    tr.scrollIntoView({ block: "center" });
    const a = tr.querySelector("a");
    if (a) a.focus({ preventScroll: true });
  }

  const heading = h("h2", { id: "table-heading" });
  const more = h("button", { type: "button", id: "more-rows" }, `Show the next ${PAGE}`);
  const moreRow = h("div", { class: "actions" }, more);
  // The hole's QA report counts its measurements: the total when no filter
  // narrows the rows.
  const unfiltered = !(f.type.length || f.min_depth || f.max_depth || f.from || f.to);
  const hr = !qa.error && unfiltered ? (qa.holes || []).find((x) => x.hole_id === ho.name) : null;
  const total = hr ? hr.measurements : null;
  function setHeading() {
    heading.textContent = `Measurements (${filtered.length}${total != null && total !== filtered.length ? ` of ${total}` : nextAfter != null ? ", more below" : ""})`;
    moreRow.hidden = nextAfter == null;
  }
  more.addEventListener("click", async () => {
    more.disabled = true;
    try {
      const pg = await pageOf(nextAfter);
      filtered = filtered.concat(pg.items || []);
      nextAfter = pg.next_after;
      setHeading();
      renderRows();
    } catch (e) {
      say(problemText(e), "bad");
    } finally {
      more.disabled = false;
    }
  });
  put(tableBox, heading,
    filterForm, h("div", { class: "scroll tall" }, table), moreRow,
    h("p", { class: "help" }, `Rows come in depth order, ${PAGE} at a time; a click on a heading sorts the rows shown. Dip directions, strikes and trends in degrees from ${p.project.output_azimuth_ref} north; derived on each read from the current survey.`));
  setHeading();
  renderRows();

  // Surveys: the sets, the one in use and why, its stations with QA flags
  // (so QA flags on a station have somewhere to point).
  await surveyCard(ctx, surveyBox, ho, flags, highlightS);
  if (!ctx.isCurrent()) return;

  if (highlightM) {
    // A finding may point below the first page: fetch on until the row is in.
    for (let guard = 0; guard < 200 && nextAfter != null && !filtered.some((m) => String(m.id) === String(highlightM)); guard++) {
      const pg = await pageOf(nextAfter);
      if (!ctx.isCurrent()) return;
      filtered = filtered.concat(pg.items || []);
      nextAfter = pg.next_after;
    }
    setHeading();
    renderRows();
    focusRow(highlightM);
  }
  const runRect = stripBox.querySelector("rect.hl-run");
  if (runRect) {
    const r = rs.find((x) => String(x.id) === params.get("run"));
    if (r) say(`Run ${r.from}\u2013${r.to} ${unit}, rated ${r.confidence}${r.mismatch != null ? `, mismatch ${r.mismatch}\u00b0` : ""}.`);
    runRect.scrollIntoView({ block: "center" });
  }
  if (highlightS !== null) {
    const tr = surveyBox.querySelector("tr.hl");
    if (tr) tr.scrollIntoView({ block: "center" });
  }
}
