// legend.js: the HTML legends of the visual language, the same words,
// fills and marks in every view (served by GET /v1/legend).

import { h } from "./dom.js";
import { confidences, confSwatch, severities, severityKey, shapeKey, styleOfType } from "./draw.js";

// confidenceLegend keys the run confidences.
export function confidenceLegend() {
  return h("p", { class: "legend legend-conf" }, h("span", { class: "legend-head" }, "Runs:"),
    confidences().map((c) => h("span", { class: "key", "data-confidence": c.code }, confSwatch(c.code), c.word)));
}

// severityLegend keys the QA severities; only lists the codes given (all
// when none).
export function severityLegend(codes) {
  return h("p", { class: "legend legend-sev" }, h("span", { class: "legend-head" }, "QA:"),
    severities().filter((s) => !codes || codes.includes(s.code)).map((s) => h("span", { class: "key", "data-severity": s.code }, severityKey(s.code), s.word)));
}

// typeLegend keys the given type codes with their stored colour and mark;
// counts (a Map code -> n) are added when given.
export function typeLegend(types, codes, counts) {
  return h("p", { class: "legend legend-types" }, h("span", { class: "legend-head" }, "Types:"),
    codes.map((code) => {
      const st = styleOfType(types, code);
      return h("span", { class: "key", "data-type": code, "data-colour": st.colour, "data-mark": st.shape }, shapeKey(st), counts ? `${code} (${counts.get(code) || 0})` : code);
    }));
}
