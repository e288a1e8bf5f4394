// imports.js: loading a file into the programme (the import route): the
// kind of file, a check first (dry run: nothing is written), how duplicate
// measurement rows are treated, and progress while the file goes up. Every
// rule about the rows is the server's; the page shows what it answers.

import { upload, query, ApiError } from "./api.js";
import { h, say, problemText, add, put } from "./dom.js";

// KINDS are the import route's kinds, with what each file holds.
const KINDS = [
  { code: "collars", label: "Collars (holes)", help: "One row per hole: hole_id, easting, northing, elevation, azimuth, dip, final_depth; optional crs, declination, grid_convergence, survey_date." },
  { code: "surveys", label: "Surveys", help: "Stations per hole: hole_id, depth, azimuth, dip; optional kind (gyro, magnetic, planned, other) and instrument. Rows of a hole replace its survey set (or its set of that kind)." },
  { code: "runs", label: "Orientation runs", help: "hole_id, from, to, confidence (good, fair, poor, none); optional mismatch and comment." },
  { code: "measurements", label: "Measurements (structures)", help: "hole_id, depth, type, alpha, beta; optional gamma, apparent_thickness, comment, logged_by, logged_at. An empty beta is an unoriented measurement." },
  { code: "intervals", label: "Core intervals", help: "hole_id, from, to and what was logged: recovered, solid, sound or pieces, natural and induced breaks. Rows of a hole replace its intervals." },
  { code: "discontinuities", label: "AGS4 discontinuities and core", help: "An AGS4 file: DISC rows become measurements, CORE rows the core intervals of the holes they name." },
];

// DUPLICATES are the route's choices for measurement rows that repeat a
// stored row or an earlier row of the file.
const DUPLICATES = [
  { code: "refuse", label: "Refuse the file (nothing is stored)", help: "each duplicate is listed with its line" },
  { code: "skip", label: "Leave duplicates out", help: "the other rows are stored" },
  { code: "keep", label: "Store duplicates anyway", help: "for real repeats, e.g. a re-logged run" },
];

const bytes = (n) => (n < 1024 ? `${n} bytes` : n < 1048576 ? `${(n / 1024).toFixed(1)} kB` : `${(n / 1048576).toFixed(1)} MB`);

// key returns a fresh Idempotency-Key: a retried upload of the same choice
// returns the first answer and writes nothing twice.
function key() {
  const b = new Uint8Array(16);
  crypto.getRandomValues(b);
  return "page-" + [...b].map((x) => x.toString(16).padStart(2, "0")).join("");
}

export async function importView(ctx) {
  const { p, host, params } = ctx;
  add(host, h("h1", {}, "Load a file"));
  const kindSel = h("select", { id: "imp-kind", name: "kind" }, KINDS.map((k) => h("option", { value: k.code, selected: k.code === (params.get("kind") || "measurements") }, k.label)));
  const kindHelp = h("p", { class: "help", id: "imp-kind-help" });
  const file = h("input", { id: "imp-file", name: "file", type: "file", accept: ".csv,.ags,text/csv,text/plain" });
  const dupBoxes = DUPLICATES.map((d) => h("label", { class: "check" },
    h("input", { type: "radio", name: "duplicates", value: d.code, checked: d.code === "refuse" }), h("span", {}, d.label, h("span", { class: "help" }, ` \u2013 ${d.help}`))));
  const dupSet = h("fieldset", { id: "imp-dups" }, h("legend", {}, "Measurement rows already stored (same hole, depth, type, alpha, beta, gamma)"), dupBoxes);
  const checkBtn = h("button", { type: "button", id: "imp-check" }, "Check the file");
  const loadBtn = h("button", { type: "submit", class: "primary", id: "imp-load" }, "Load");
  const stopBtn = h("button", { type: "button", class: "quiet", id: "imp-stop", hidden: true }, "Stop");
  const bar = h("progress", { id: "imp-bar", max: 1, value: 0 });
  const barText = h("span", { id: "imp-progress-text" });
  const progress = h("div", { class: "progress", id: "imp-progress", hidden: true }, bar, barText);
  const form = h("form", { class: "card import-form", id: "import-form", novalidate: true },
    h("div", { class: "field" }, h("label", { for: "imp-kind" }, "What the file holds"), kindSel, kindHelp),
    h("div", { class: "field" }, h("label", { for: "imp-file" }, "File"), file),
    dupSet,
    h("div", { class: "actions" }, checkBtn, loadBtn, stopBtn),
    progress,
    h("p", { class: "help" }, "Check reads every row and writes nothing. Load writes every row or none: one bad row stops the file, and every bad row is listed with its line and column."));
  const result = h("section", { class: "card", id: "imp-result", "aria-live": "polite", hidden: true });
  add(host, form, result);

  let idem = { sig: "", key: "" };
  const showKind = () => {
    const k = KINDS.find((x) => x.code === kindSel.value);
    kindHelp.textContent = k.help;
    dupSet.hidden = !(k.code === "measurements" || k.code === "discontinuities");
  };
  kindSel.addEventListener("change", showKind);
  showKind();

  let busy = null;
  stopBtn.addEventListener("click", () => busy && busy.abort());

  async function send(dryRun) {
    const f = file.files && file.files[0];
    if (!f) {
      put(result, h("p", { class: "msg bad" }, "Choose a file first."));
      result.hidden = false;
      file.focus();
      return;
    }
    const kind = kindSel.value;
    const dup = dupSet.hidden ? "" : form.querySelector("input[name=duplicates]:checked").value;
    // One key per file, kind and choice: a second Load of the same choice
    // (after a lost answer) is answered from the first and writes nothing.
    const sig = [f.name, f.size, f.lastModified, kind, dup].join("|");
    if (!dryRun && idem.sig !== sig) idem = { sig, key: key() };
    busy = new AbortController();
    checkBtn.disabled = loadBtn.disabled = true;
    stopBtn.hidden = false;
    progress.hidden = false;
    bar.value = 0;
    barText.textContent = "";
    const t0 = performance.now();
    try {
      const r = await upload(`/v1/projects/${p.id}/imports/${kind}` + query({ dry_run: dryRun ? "true" : "", duplicates: dup === "refuse" ? "" : dup }), f, {
        headers: { "X-Filename": f.name.slice(0, 200), "Idempotency-Key": dryRun ? "" : idem.key },
        signal: busy.signal,
        onProgress: (e) => {
          if (e.phase === "sending") {
            bar.max = Math.max(1, e.total);
            bar.value = e.sent;
            const s = (performance.now() - t0) / 1000;
            barText.textContent = `Sending ${bytes(e.sent)} of ${bytes(e.total)}` + (s > 0.5 && e.sent ? ` (${bytes(Math.round(e.sent / s))}/s)` : "");
          } else {
            bar.removeAttribute("value"); // indeterminate: the server reads the rows
            barText.textContent = `Sent ${bytes(e.total)}; the server is ${dryRun ? "checking" : "checking and storing"} the rows\u2026`;
          }
        },
      });
      bar.max = 1;
      bar.value = 1;
      barText.textContent = `Done in ${((performance.now() - t0) / 1000).toFixed(1)} s.`;
      showResult(r.data, dryRun, dup);
      if (!dryRun && !r.data.replayed) {
        await ctx.refresh();
        say(`${r.data.file || f.name}: loaded.`, "ok");
      }
    } catch (e) {
      bar.max = 1;
      bar.value = 0;
      if (e.name === "AbortError") {
        barText.textContent = "Stopped; nothing was stored.";
        return;
      }
      if (!(e instanceof ApiError)) throw e;
      barText.textContent = e.status ? `Answered in ${((performance.now() - t0) / 1000).toFixed(1)} s.` : "";
      if (e.status !== 401) showProblem(e, dryRun);
    } finally {
      busy = null;
      checkBtn.disabled = loadBtn.disabled = false;
      stopBtn.hidden = true;
    }
  }

  function showResult(r, dryRun, dup) {
    const dupWord = dup === "keep" ? (dryRun ? "would be stored anyway" : "stored anyway") : "";
    put(result,
      h("h2", {}, dryRun ? "Check: every row can be loaded" : r.replayed ? "Already loaded" : "Loaded"),
      r.replayed ? h("p", { class: "msg" }, "This is the answer to the earlier upload of the same file and choice; nothing was written again.") : null,
      h("dl", { class: "summary", id: "imp-summary" },
        h("dt", {}, "File"), h("dd", {}, r.file || "\u2013"),
        h("dt", {}, "Rows read"), h("dd", { id: "imp-rows" }, r.rows),
        h("dt", {}, dryRun ? "Would be new" : "New"), h("dd", { id: "imp-created" }, r.created),
        h("dt", {}, dryRun ? "Would replace" : "Replaced"), h("dd", { id: "imp-updated" }, r.updated),
        r.duplicates != null ? [h("dt", {}, "Duplicates found"), h("dd", { id: "imp-duplicates" }, r.duplicates + (r.duplicates && dupWord ? ` (${dupWord})` : ""))] : null,
        r.skipped ? [h("dt", {}, dryRun ? "Would be left out" : "Left out"), h("dd", { id: "imp-skipped" }, r.skipped)] : null),
      dryRun ? h("p", { class: "help" }, "Nothing was written. Load stores the file as checked.") : null);
    result.hidden = false;
  }

  function showProblem(e, dryRun) {
    const items = e.errors || [];
    const dups = items.filter((x) => /duplicate/i.test(x.detail || ""));
    put(result,
      h("h2", {}, dryRun ? "Check: the file cannot be loaded as it is" : "Not loaded"),
      h("p", { class: "msg bad", id: "imp-problem" }, problemText(e)),
      dups.length ? h("p", { class: "help", id: "imp-dup-hint" }, "Some rows repeat measurements already stored (or earlier rows of the file). Choose to leave them out or to store them anyway, then check again.") : null,
      items.length ? h("div", { class: "scroll" }, h("table", { class: "data", id: "imp-errors" },
        h("thead", {}, h("tr", {}, ["Line", "Column", "Problem"].map((t) => h("th", { scope: "col" }, t)))),
        h("tbody", {}, items.slice(0, 500).map((x) => h("tr", {}, h("td", { class: "num" }, x.line ?? ""), h("td", {}, x.column || x.field || ""), h("td", {}, x.detail)))))) : null,
      items.length > 500 ? h("p", { class: "help" }, `The first 500 of ${items.length} problems.`) : null,
      h("p", { class: "help" }, "Nothing was written."));
    result.hidden = false;
  }

  checkBtn.addEventListener("click", () => send(true));
  form.addEventListener("submit", (e) => { e.preventDefault(); send(false); });
}
