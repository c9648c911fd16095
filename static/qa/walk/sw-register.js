// Register the service worker and tell the user when the app works offline and when an update waits.
// A new version takes over only when the user accepts it.
const notice = () => document.querySelector("[data-sw-notice]");

function show(text, action) {
  const el = notice();
  if (!el) return;
  el.replaceChildren();
  const p = document.createElement("span");
  p.textContent = text;
  el.append(p);
  if (action) {
    const b = document.createElement("button");
    b.type = "button";
    b.className = "primary";
    b.dataset.swAccept = "";
    b.textContent = action.label;
    b.addEventListener("click", action.run);
    el.append(b);
  } else {
    const close = document.createElement("button");
    close.type = "button";
    close.textContent = "OK";
    close.setAttribute("aria-label", "Dismiss");
    close.addEventListener("click", () => { el.hidden = true; });
    el.append(close);
  }
  el.hidden = false;
  el.dataset.swState = action ? "update" : "ready";
}

let accepted = false;

function offerUpdate(worker) {
  show("A new version of the walk is ready. Your unsent changes are kept.", {
    label: "Use new version",
    run: () => {
      accepted = true;
      worker.postMessage({ type: "skip-waiting" });
    },
  });
}

export async function registerWorker() {
  if (!("serviceWorker" in navigator)) return null;
  const hadController = Boolean(navigator.serviceWorker.controller);
  let reloading = false;
  navigator.serviceWorker.addEventListener("controllerchange", () => {
    // Only the version the user accepted reloads the page; the first install just takes control.
    if (accepted && !reloading) {
      reloading = true;
      window.location.reload();
    }
  });
  navigator.serviceWorker.addEventListener("message", (event) => {
    if (event.data && event.data.type === "ready" && !hadController) {
      show("Ready to work offline: the walk now opens without signal.");
    }
  });
  const reg = await navigator.serviceWorker.register("/sw.js", { scope: "/" });
  if (reg.waiting && navigator.serviceWorker.controller) offerUpdate(reg.waiting);
  reg.addEventListener("updatefound", () => {
    const worker = reg.installing;
    worker?.addEventListener("statechange", () => {
      if (worker.state === "installed" && navigator.serviceWorker.controller) offerUpdate(worker);
    });
  });
  document.addEventListener("visibilitychange", () => {
    if (document.visibilityState === "visible") reg.update().catch(() => {});
  });
  return reg;
}

if (document.querySelector("[data-sw-notice]") || document.querySelector("[data-sw-register]")) {
  registerWorker().catch(() => {});
}
