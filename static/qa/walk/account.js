// Whose phone data this is. Everything the walk keeps — the IndexedDB of bundles, outbox and photos,
// the photo cache — is named after the signed-in user (the pages carry the user's id), so a different
// person signing in on the same phone never sees or sends the previous person's data.
export function userId() {
  const meta = document.querySelector('meta[name="sealwalk-user"]');
  return (meta && meta.content) || "anonymous";
}

export const dbName = (user = userId()) => `sealwalk-walk-u${user}`;
export const photoCacheName = (user = userId()) => `sealwalk-photos-u${user}`;
