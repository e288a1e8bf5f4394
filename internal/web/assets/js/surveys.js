// surveys.js: a hole's surveys in the hole view: the hole's survey set and
// its sets by kind (gyro, magnetic, planned, other) with instrument, date
// and north reference, which one derived values use and why (the server's
// rule, domain.UsedSurveyWhy), a choice of the preferred set, and the
// stations of the set in use with their QA flags.

import { request, get, ApiError } from "./api.js";
import { h, fmt, say, problemText, add, put } from "./dom.js";
import { survey } from "./data.js";

// why turns the server's reason into a sentence.
function why(reason, priority) {
  switch (reason) {
    case "preferred": return "it is marked preferred for this hole";
    case "priority": return `it is the first kind of the project's survey priority (${priority.replaceAll(",", ", ")}) that this hole has`;
    case "survey-set": return "no set by kind is preferred" + (priority ? " and the project's survey priority names none of this hole's kinds" : " and the project sets no survey priority");
    case "kind-order": return "no set is preferred, no priority applies and the hole has no survey set of its own, so the first in the order gyro, magnetic, planned, other is taken";
    default: return "";
  }
}

const span = (st) => (st.length ? `${fmt(st[0].depth, 1)}\u2013${fmt(st[st.length - 1].depth, 1)}` : "\u2013");

// surveyCard fills box with the hole's surveys. flags are the hole's QA
// findings; highlight is a station depth to mark (from a QA link).
export async function surveyCard(ctx, box, ho, flags, highlight) {
  const { p } = ctx;
  const unit = p.unit;
  const [plain, ks] = await Promise.all([survey(p.id, ho.id, true), get(`/v1/projects/${p.id}/holes/${ho.id}/surveys`)]);
  if (!ctx.isCurrent()) return;
  const sets = ks.sets || [];
  const priority = p.project.survey_priority || "";
  const rows = [];
  if (plain) rows.push({ name: "survey", kind: "survey set", instrument: plain.instrument, date: plain.survey_date, ref: plain.azimuth_ref, stations: plain.stations || [], preferred: null });
  for (const s of sets) rows.push({ name: s.kind, kind: `${s.kind} set`, instrument: s.instrument, date: s.survey_date, ref: s.azimuth_ref, stations: s.stations || [], preferred: s.preferred, set: s });
  const msg = h("span", { class: "field-msg", id: "survey-msg", role: "status" });

  async function prefer(target, on) {
    const s = target.set;
    try {
      await request("PUT", `/v1/projects/${p.id}/holes/${ho.id}/surveys/${s.kind}`, {
        body: { instrument: s.instrument, azimuth_ref: s.azimuth_ref, survey_date: s.survey_date, declination: s.declination, preferred: on, stations: s.stations },
        ifMatch: `"${s.version}"`,
      });
      say(on ? `The ${s.kind} set is now preferred for ${ho.name}; derived values use it.` : `No set is preferred for ${ho.name} now.`, "ok");
      // The whole view again: the derived values of the table change with
      // the set in use.
      ctx.go(location.hash);
    } catch (e) {
      if (!(e instanceof ApiError)) throw e;
      msg.textContent = e.status === 403 ? "Only an admin token can choose the preferred set."
        : e.status === 412 ? "The set changed on the server since it was read; shown again as it is now." : "Not changed: " + problemText(e);
      if (e.status === 412) await surveyCard(ctx, box, ho, flags, highlight);
    }
  }

  const inUse = rows.find((r) => r.name === ks.used);
  const table = rows.length ? h("div", { class: "scroll" }, h("table", { class: "data compact wrap-head", id: "survey-sets" },
    h("thead", {}, h("tr", {}, ["Set", "Instrument", "Date", "North", `Stations (${unit})`, "In use", "Preferred"].map((t) => h("th", { scope: "col" }, t)))),
    h("tbody", {}, rows.map((r) => h("tr", { "data-set": r.name, class: r === inUse ? "in-use" : "" },
      h("th", { scope: "row" }, r.kind),
      h("td", {}, r.instrument || "unknown"),
      h("td", { class: "nowrap" }, r.date || "undated"),
      h("td", {}, r.ref),
      h("td", { class: "num" }, `${r.stations.length}: ${span(r.stations)}`),
      h("td", { class: "in-use-cell" }, r === inUse ? h("strong", {}, "\u2714 yes") : ""),
      h("td", {}, r.preferred === null ? h("span", { class: "help" }, "\u2013") : r.preferred
        ? h("button", { type: "button", class: "small", "data-unprefer": r.name, onclick: () => prefer(r, false) }, "\u2605 Preferred")
        : h("button", { type: "button", class: "small", "data-prefer": r.name, onclick: () => prefer(r, true) }, "Prefer")))))))
    : null;

  const st = inUse ? inUse.stations : [];
  put(box, h("h2", {}, rows.length > 1 ? `Surveys (${rows.length} sets)` : "Survey"),
    rows.length > 1 || sets.length ? [table,
      h("p", { class: "help", id: "survey-why" }, inUse ? `Derived values use the ${inUse.kind}: ${why(ks.used_because, priority)}.` : "No survey is in use."),
      msg] : null,
    st.length
      ? h("div", { class: "scroll" }, h("table", { class: "data compact", id: "stations" },
        rows.length > 1 ? h("caption", {}, `Stations of the ${inUse.kind} (in use).`) : null,
        h("thead", {}, h("tr", {}, h("th", { scope: "col", class: "num" }, "#"), h("th", { scope: "col", class: "num" }, `Depth (${unit})`), h("th", { scope: "col", class: "num" }, `Azimuth (${inUse.ref})`), h("th", { scope: "col", class: "num" }, "Dip"), h("th", { scope: "col" }, "QA"))),
        h("tbody", {}, st.map((s, i) => {
          const fl = flags.filter((x) => x.source === "surveys" && (x.station ? x.station === i + 1 : Math.abs(x.depth - s.depth) < 1e-6));
          return h("tr", { id: `st-${i}`, "data-depth": s.depth, class: highlight !== null && Math.abs(Number(highlight) - s.depth) < 1e-6 ? "hl" : "" },
            h("td", { class: "num" }, i + 1), h("td", { class: "num" }, fmt(s.depth, 1)), h("td", { class: "num" }, fmt(s.azimuth, 1)), h("td", { class: "num" }, fmt(s.dip, 1)),
            h("td", {}, fl.map((x) => x.message).join("; ")));
        }))))
      : h("p", {}, "No survey: the collar direction is used for the whole hole."),
    inUse && rows.length === 1 ? h("p", { class: "help" }, `Survey ${inUse.date || "undated"}, azimuths from ${inUse.ref} north.`) : null);
}
