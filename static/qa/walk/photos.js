// Photos on the phone: downscale to a long edge of at most 2560 px, re-encode as a plain JPEG
// (no metadata, so the server keeps it byte for byte) and hash it for the resumable upload.
export const LONG_EDGE = 2560;

export async function sha256Hex(blob) {
  const digest = await crypto.subtle.digest("SHA-256", await blob.arrayBuffer());
  return [...new Uint8Array(digest)].map((b) => b.toString(16).padStart(2, "0")).join("");
}

async function encode(bitmap, width, height) {
  if (typeof OffscreenCanvas !== "undefined") {
    const canvas = new OffscreenCanvas(width, height);
    canvas.getContext("2d").drawImage(bitmap, 0, 0, width, height);
    return canvas.convertToBlob({ type: "image/jpeg", quality: 0.85 });
  }
  const canvas = document.createElement("canvas");
  canvas.width = width;
  canvas.height = height;
  canvas.getContext("2d").drawImage(bitmap, 0, 0, width, height);
  return new Promise((resolve) => canvas.toBlob(resolve, "image/jpeg", 0.85));
}

/** A File from the camera or gallery → {blob, sha256, width, height, captured_at}. */
export async function prepare(file) {
  const bitmap = await createImageBitmap(file, { imageOrientation: "from-image" });
  const scale = Math.min(1, LONG_EDGE / Math.max(bitmap.width, bitmap.height));
  const width = Math.max(1, Math.round(bitmap.width * scale));
  const height = Math.max(1, Math.round(bitmap.height * scale));
  const blob = await encode(bitmap, width, height);
  bitmap.close();
  // The camera's file time is the capture time on phones; the re-encoded JPEG carries none.
  const captured = file.lastModified ? new Date(file.lastModified).toISOString() : new Date().toISOString();
  return { blob, size: blob.size, sha256: await sha256Hex(blob), width, height, captured_at: captured };
}
