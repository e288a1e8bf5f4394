// main.js: the page's entry point: sign-in, the view router (hash routes)
// and the programme data shared by the views.

import { getToken, setToken, whenUnauthorized, get, getAll, request, ApiError } from "./api.js";
import { h, clear, say, problemText, add, put } from "./dom.js";
import { overview } from "./overview.js";
import { logging } from "./logging.js";
import { holeView } from "./hole.js";
import { netsView } from "./nets.js";
import { qaView } from "./qa.js";
import { importView } from "./imports.js";
import { syncView } from "./sync.js";
import { useLegend, patternDefs, svg } from "./draw.js";

const main = document.getElementById("main");
const nav = document.getElementById("nav");
const signout = document.getElementById("signout");
const projectName = document.getElementById("project-name");

// ctx is handed to every view: the project, its holes and type vocabulary,
// loaded once per project and refreshed on demand.
const cache = new Map();

// The visual language is loaded once per page: served by the server, it is
// the only definition of type marks, run confidence fills and severities.
let legendLoaded = null;
function loadLegend() {
  if (!legendLoaded) {
    legendLoaded = get("/v1/legend").then((l) => {
      useLegend(l);
      const defs = svg(0, 0, "");
      defs.setAttribute("aria-hidden", "true");
      defs.classList.add("defs-only");
      defs.id = "shared-defs";
      defs.append(patternDefs());
      document.body.append(defs);
      return l;
    }).catch((e) => { legendLoaded = null; throw e; });
  }
  return legendLoaded;
}

export async function programme(pid, fresh = false) {
  await loadLegend();
  if (!fresh && cache.has(pid)) return cache.get(pid);
  const [project, holes, types] = await Promise.all([
    get(`/v1/projects/${pid}`),
    getAll(`/v1/projects/${pid}/holes`),
    get(`/v1/projects/${pid}/types`).then((r) => r.items || []),
  ]);
  holes.sort((a, b) => a.name.localeCompare(b.name, undefined, { numeric: true }));
  types.sort((a, b) => a.code.localeCompare(b.code));
  const p = { id: pid, project, holes, types, unit: project.length_unit || "m" };
  cache.set(pid, p);
  return p;
}

function parseHash() {
  const raw = location.hash.replace(/^#/, "") || "/";
  const [path, qs] = raw.split("?");
  const parts = path.split("/").filter(Boolean);
  return { parts, params: new URLSearchParams(qs || "") };
}

export function go(hash) {
  if (location.hash === hash) route();
  else location.hash = hash;
}

whenUnauthorized(() => {
  setToken("");
  cache.clear();
  signIn("The server did not accept the token (it may have expired or been revoked). Sign in again.");
});

signout.addEventListener("click", () => {
  setToken("");
  cache.clear();
  go("#/signin");
});

function setNav(pid, view, holeId) {
  nav.hidden = !pid;
  document.body.dataset.view = pid ? view : "signin";
  for (const a of nav.querySelectorAll("a")) {
    const v = a.dataset.view;
    let href = `#/p/${pid}`;
    if (v === "log") href += "/log" + (holeId ? `?hole=${holeId}` : "");
    if (v === "hole") href += holeId ? `/hole/${holeId}` : "/hole";
    if (v === "nets") href += "/nets";
    if (v === "qa") href += "/qa";
    if (v === "import") href += "/import";
    if (v === "sync") href += "/sync";
    a.href = href;
    if (v === view) a.setAttribute("aria-current", "page");
    else a.removeAttribute("aria-current");
  }
}

let lastHole = "";
let generation = 0;

async function route() {
  const gen = ++generation;
  const { parts, params } = parseHash();
  signout.hidden = !getToken();
  if (!getToken() || parts[0] === "signin") {
    signout.hidden = true;
    setNav("", "");
    projectName.textContent = "";
    return signIn();
  }
  if (parts[0] !== "p" || !parts[1]) {
    setNav("", "");
    projectName.textContent = "";
    return projects();
  }
  const pid = parts[1];
  const view = parts[2] || "overview";
  if (view === "hole" && parts[3]) lastHole = parts[3];
  if (params.get("hole")) lastHole = params.get("hole");
  setNav(pid, view, lastHole);
  put(main, h("p", { class: "loading" }, "Loading\u2026"));
  try {
    const p = await programme(pid, params.has("fresh"));
    if (gen !== generation) return;
    projectName.textContent = p.project.name;
    document.title = `${p.project.name} \u2013 corvane`;
    const host = h("div", { class: "view", "data-view": view });
    const ctx = { p, params, host, go, refresh: () => programme(pid, true), isCurrent: () => gen === generation };
    put(main, host);
    switch (view) {
      case "overview": await overview(ctx); break;
      case "log": await logging(ctx); break;
      case "hole": await holeView(ctx, parts[3] || lastHole || (p.holes[0] && p.holes[0].id)); break;
      case "nets": await netsView(ctx); break;
      case "qa": await qaView(ctx); break;
      case "import": await importView(ctx); break;
      case "sync": await syncView(ctx); break;
      default: add(host, h("p", { class: "msg bad" }, `There is no view called \u201c${view}\u201d.`));
    }
  } catch (e) {
    if (gen !== generation) return;
    if (e instanceof ApiError && e.status === 401) return;
    put(main, h("div", { class: "msg bad", role: "alert" }, problemText(e)));
    if (!(e instanceof ApiError)) console.error(e);
  }
}

function signIn(reason) {
  document.title = "Sign in \u2013 corvane";
  const input = h("input", { id: "token", name: "token", type: "password", autocomplete: "off", spellcheck: "false", required: true, "aria-describedby": "token-help" });
  const err = h("p", { class: "field-msg", id: "token-msg", role: "alert" });
  const form = h("form", { class: "signin card", novalidate: true },
    h("h1", {}, "Sign in"),
    reason ? h("p", { class: "msg bad" }, reason) : null,
    h("label", { for: "token" }, "API token"),
    input,
    err,
    h("p", { id: "token-help", class: "help" },
      "Paste the token you were given (made with ",
      h("code", {}, "corvane token create"),
      "). It is kept in this browser tab only and is forgotten when the tab is closed."),
    h("button", { type: "submit", class: "primary" }, "Sign in"));
  form.addEventListener("submit", async (e) => {
    e.preventDefault();
    const t = input.value.trim();
    if (!t) {
      err.textContent = "Enter a token.";
      input.setAttribute("aria-invalid", "true");
      input.focus();
      return;
    }
    setToken(t);
    try {
      await request("GET", "/v1/projects?limit=1", { quiet401: true });
      input.value = "";
      go("#/");
    } catch (e2) {
      setToken("");
      err.textContent = e2 instanceof ApiError && (e2.status === 401 || e2.status === 403)
        ? "The server does not accept this token."
        : problemText(e2);
      input.setAttribute("aria-invalid", "true");
      input.select();
    }
  });
  put(main, form);
  input.focus();
}

async function projects() {
  document.title = "Programmes \u2013 corvane";
  put(main, h("p", { class: "loading" }, "Loading\u2026"));
  try {
    const list = await getAll("/v1/projects");
    if (list.length === 1 && !sessionStorage.getItem("corvane.chose")) {
      go(`#/p/${list[0].id}`);
      return;
    }
    const ul = h("ul", { class: "projects" }, list.map((p) =>
      h("li", {}, h("a", { href: `#/p/${p.id}`, onclick: () => sessionStorage.setItem("corvane.chose", "1") }, p.name),
        p.description ? h("span", { class: "help" }, " \u2013 " + p.description) : null)));
    put(main, h("section", { class: "card" }, h("h1", {}, "Programmes"),
      list.length ? ul : h("p", {}, "This token reaches no programme yet.")));
  } catch (e) {
    if (e instanceof ApiError && e.status === 401) return;
    put(main, h("div", { class: "msg bad", role: "alert" }, problemText(e)));
  }
}

window.addEventListener("hashchange", route);
window.addEventListener("unhandledrejection", (e) => {
  if (e.reason instanceof ApiError) {
    say(problemText(e.reason), "bad");
    e.preventDefault();
  }
});
route();
