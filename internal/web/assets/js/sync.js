// sync.js: the conflicts sync kept on this service, each with its two
// versions beside each other, field by field, for a person to choose. The
// server lines the fields up (the same lines `corvane sync --conflicts`
// prints); the page only shows them and sends the choice.

import { h, put, add, problemText, say } from "./dom.js";
import { get, request } from "./api.js";

export async function syncView(ctx) {
  const { p, host } = ctx;
  add(host, h("h1", {}, "Sync conflicts"),
    h("p", { class: "help" }, "A record changed on a laptop and here since they last agreed is kept in both versions until someone chooses. ",
      "Keep local writes the laptop's version over this one; keep remote leaves this one. The audit trail records the choice."));
  const body = h("div", { id: "sync-conflicts" }, h("p", { class: "loading" }, "Loading\u2026"));
  add(host, body);
  let list;
  try {
    list = (await get(`/v1/projects/${p.id}/sync/conflicts?status=open`)).items || [];
  } catch (e) {
    put(body, h("p", { class: "msg bad" }, "The conflicts could not be read: " + problemText(e)));
    return;
  }
  if (!ctx.isCurrent()) return;
  if (!list.length) {
    put(body, h("p", { id: "no-conflicts" }, "No open conflicts."));
    return;
  }
  put(body, list.map((c) => conflictCard(ctx, c)));
}

function conflictCard(ctx, c) {
  const what = c.table.replace(/s$/, "").replace("_", " ");
  const resolve = async (keep) => {
    try {
      await request("POST", `/v1/projects/${ctx.p.id}/sync/conflicts/${encodeURIComponent(c.id)}/resolve`, { body: { keep } });
      say(`Conflict resolved: kept ${keep}.`);
      ctx.go(`#/p/${ctx.p.id}/sync?fresh`);
    } catch (e) {
      say(problemText(e), "bad");
    }
  };
  return h("section", { class: "conflict", "data-conflict": c.id },
    h("h2", {}, `${c.kind === "refused" ? "Refused" : "Conflict"}: ${what} ${c.global_id}`),
    h("p", {}, `Pushed by ${c.actor || "?"} from replica ${c.replica} (from version ${c.base_version}); here at version ${c.remote_version}.`),
    c.reason ? h("p", { class: "msg bad" }, c.reason) : null,
    h("table", { class: "data compact" },
      h("thead", {}, h("tr", {}, h("th", {}, "field"), h("th", {}, `local (laptop, v${c.local_version})`), h("th", {}, `remote (here, v${c.remote_version})`))),
      h("tbody", {}, (c.fields || []).map((f) => h("tr", { class: f.differs ? "differs" : null },
        h("td", {}, f.field), h("td", {}, f.local), h("td", {}, f.remote))))),
    h("div", { class: "title-row" },
      h("button", { type: "button", class: "primary", "data-keep": "local", onclick: () => resolve("local") }, "Keep local"),
      h("button", { type: "button", "data-keep": "remote", onclick: () => resolve("remote") }, "Keep remote")));
}
