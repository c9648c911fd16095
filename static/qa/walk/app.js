// The walk: a hash router over screens that read the job from IndexedDB. Screens re-render when the
// store changes, except forms, which keep what the user is typing.
import * as store from "./store.js";
import * as sync from "./sync.js";
import { renderSyncBar } from "./syncbar.js";
import { jobsView } from "./views/jobs.js";
import { wallsView } from "./views/walls.js";
import { wallView } from "./views/wall.js";
import { findingFormView } from "./views/finding-form.js";
import { findingView } from "./views/finding.js";
import { conflictsView } from "./views/conflicts.js";

const root = document.querySelector("[data-view]");
const bar = document.querySelector("[data-syncbar]");
const titleEl = document.querySelector("[data-title]");
const backEl = document.querySelector("[data-back]");
const dockEl = document.querySelector("[data-dock]");
const ui = { level: null, search: "" };
let current = null;

function parse(hash) {
  const parts = hash.replace(/^#\/?/, "").split("/").filter(Boolean);
  const r = { name: "jobs", job: null };
  if (parts[0] === "j" && parts[1]) {
    r.job = Number(parts[1]);
    r.name = "walls";
    if (parts[2] === "w" && parts[3]) {
      r.wall = Number(parts[3]);
      r.name = "wall";
      if (parts[4] === "new" && parts[5]) Object.assign(r, { name: "new", point: Number(parts[5]) });
    } else if (parts[2] === "f" && parts[3]) {
      Object.assign(r, { name: parts[4] === "edit" ? "edit" : "finding", finding: parts[3] });
    } else if (parts[2] === "conflicts") {
      r.name = "conflicts";
    }
  }
  return r;
}

const VIEWS = {
  jobs: jobsView, walls: wallsView, wall: wallView, new: findingFormView, edit: findingFormView,
  finding: findingView, conflicts: conflictsView,
};
const FORMS = new Set(["new", "edit"]);
const INLINE_BAR = new Set(["new", "edit", "finding"]);

export function go(hash) {
  if (location.hash === hash) render(true);
  else location.hash = hash;
}

async function render(routeChanged) {
  const route = parse(location.hash);
  const state = route.job ? await store.load(route.job) : null;
  if (route.job) sync.watch(route.job);
  if (route.job && !state && route.name !== "jobs") {
    route.name = "jobs";
  }
  const ctx = { route, state, ui, go, setTitle, back: setBack, sync, dock: setDock };
  if (routeChanged || !FORMS.has(route.name)) {
    const active = document.activeElement;
    const keep = active && active.dataset && active.dataset.keepFocus;
    const caret = keep && active.selectionStart;
    setDock(null);
    await VIEWS[route.name](root, ctx);
    if (routeChanged) {
      window.scrollTo(0, 0);
      root.querySelector("h1")?.focus({ preventScroll: true });
    } else if (keep) {
      const again = root.querySelector(`[data-keep-focus="${keep}"]`);
      if (again) {
        again.focus();
        if (caret !== null && again.setSelectionRange) again.setSelectionRange(caret, caret);
      }
    }
  }
  current = route;
  // Screens with a form keep the sync bar at the end of the page: it never sits over a field.
  if (INLINE_BAR.has(route.name)) document.body.dataset.bar = "inline";
  else delete document.body.dataset.bar;
  renderSyncBar(bar, ctx);
  document.body.dataset.ready = "1";
}

function setTitle(text) {
  titleEl.textContent = text;
  document.title = `${text} · Sealwalk walk`;
}

// The dock holds the screen's one big action (the wall's "next unchecked"), just above the sync bar.
function setDock(node) {
  if (!dockEl) return;
  dockEl.replaceChildren(...(node ? [node] : []));
  dockEl.hidden = !node;
}

function setBack(hash, label) {
  backEl.hidden = !hash;
  if (hash) {
    backEl.setAttribute("href", hash);
    backEl.setAttribute("aria-label", `Back to ${label}`);
  }
}

let queued = false;
store.onChange(() => {
  if (queued) return;
  queued = true;
  requestAnimationFrame(() => {
    queued = false;
    render(false);
  });
});

window.addEventListener("hashchange", () => render(true));
window.addEventListener("online", () => render(false));
window.addEventListener("offline", () => render(false));

// The sync bar and the dock are fixed to the bottom of the screen. The page keeps room below its
// content for both, and while the user types (a field has focus, or the keyboard is up) they leave
// the bottom of the screen, so they never cover the field being filled in.
const FIELD = "input:not([type=radio]):not([type=checkbox]):not([type=file]):not([type=button]):not([type=submit]), select, textarea";
function typing(on) {
  if (on) document.body.dataset.typing = "1";
  else delete document.body.dataset.typing;
}
let leaving = null;
document.addEventListener("focusin", (e) => {
  clearTimeout(leaving);
  typing(e.target.matches && e.target.matches(FIELD));
});
// The bar comes back a moment after the field loses focus: a tap that moved the focus (say, on "Save")
// must land where the finger was, not on a bar that slid in between press and release.
document.addEventListener("focusout", () => {
  clearTimeout(leaving);
  leaving = setTimeout(() => {
    const a = document.activeElement;
    const keyboard = window.visualViewport && window.visualViewport.height < window.innerHeight - 120;
    typing((a && a.matches && a.matches(FIELD)) || keyboard);
  }, 400);
});
window.visualViewport?.addEventListener("resize", () => {
  if (window.visualViewport.height < window.innerHeight - 120) typing(true);
});
function bottomSpace() {
  const used = (bar.offsetHeight || 0) + (dockEl && !dockEl.hidden ? dockEl.offsetHeight : 0);
  document.body.style.setProperty("--bottom-space", `${used + 16}px`);
  document.body.style.setProperty("--bar-h", `${bar.offsetHeight || 0}px`);
}
if (window.ResizeObserver) {
  const watchSize = new ResizeObserver(bottomSpace);
  watchSize.observe(bar);
  if (dockEl) watchSize.observe(dockEl);
}

sync.start();
render(true).then(() => {
  if (current && current.job) sync.syncNow(current.job);
});
