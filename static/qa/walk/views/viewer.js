// A photo full size, over the screen: labelled defect or fix, with its size, previous / next, and a
// plain close button. Offline it shows the full image when the phone has it, otherwise the small copy
// and says so.
import { h, replace } from "../dom.js";
import { cachedBlobUrl, fullUrl } from "../photocache.js";

let dialog = null;

function mb(bytes) {
  return bytes > 1e6 ? `${(bytes / 1e6).toFixed(1)} MB` : `${Math.max(1, Math.round(bytes / 1e3))} kB`;
}

export function purposeText(photo) {
  return photo.purpose === "fix" ? "Fix" : "Defect";
}

/** One photo as a tappable thumbnail with its label; ``list`` is every photo the viewer can step through. */
export function thumb(photo, list, index, extra = null) {
  return h("li", { "data-photo": photo.id, "data-photo-state": photo.local ? photo.state : "server", "data-purpose": photo.purpose },
    h("button", { type: "button", class: "thumb-button", "data-open-photo": photo.id,
      "aria-label": `Open the ${purposeText(photo).toLowerCase()} photo ${index + 1} full size`,
      onclick: () => openViewer(list, index) },
      h("img", { src: photo.src, alt: "", width: 96, height: 96, loading: "lazy",
        onerror: (e) => { e.target.closest("li")?.setAttribute("data-photo-missing", ""); } }),
      h("span", { class: `photo-label ${photo.purpose === "fix" ? "fix" : "defect"}` }, purposeText(photo))),
    extra);
}

async function show(list, index) {
  const photo = list[index];
  const img = h("img", { class: "viewer-img", alt: `${purposeText(photo)} photo ${index + 1} of ${list.length}`, "data-viewer-img": "" });
  const note = h("p", { class: "viewer-note", "aria-live": "polite" });
  let src = photo.full;
  if (!photo.local) {
    const cached = await cachedBlobUrl(fullUrl(photo.server));
    if (cached) src = cached;
    else if (!navigator.onLine) {
      src = (await cachedBlobUrl(photo.server.thumbnail_url)) || photo.src;
      note.textContent = "The full photo is not on this phone: this is the small copy. Get the full photos from the job list when there is signal.";
      img.dataset.viewerSmall = "";
    }
  }
  img.src = src;
  img.addEventListener("error", () => { note.textContent = "This photo could not be shown here."; }, { once: true });
  const size = photo.bytes ? ` · ${mb(photo.bytes)}` : "";
  replace(dialog,
    h("div", { class: "viewer-bar" },
      h("span", { class: `photo-label ${photo.purpose === "fix" ? "fix" : "defect"}`, "data-viewer-label": photo.purpose },
        `${purposeText(photo)} photo`),
      h("span", { class: "viewer-count" }, `${index + 1} of ${list.length}${size}`),
      h("button", { type: "button", class: "viewer-close", "data-close-viewer": "", onclick: () => dialog.close() }, "Close")),
    h("div", { class: "viewer-body" }, img),
    note,
    list.length > 1 ? h("div", { class: "viewer-steps" },
      h("button", { type: "button", "data-viewer-prev": "", onclick: () => show(list, (index + list.length - 1) % list.length) }, "‹ Previous"),
      h("button", { type: "button", "data-viewer-next": "", onclick: () => show(list, (index + 1) % list.length) }, "Next ›")) : null);
}

export function openViewer(list, index) {
  if (!dialog) {
    dialog = h("dialog", { class: "viewer", "data-viewer": "", "aria-label": "Photo" });
    document.body.append(dialog);
  }
  show(list, index).then(() => {
    if (!dialog.open) dialog.showModal();
  });
}
