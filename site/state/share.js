// Share links: the whole rig and view live in the URL fragment (after "#"),
// which browsers never send to a server. The core's share_encode and
// share_decode ops do the coding and validate; this module handles the address, and
// peeks at a link's rig to show it in the sheet before the engine has started.

/** The fragment of the page's address without its "#", or null if there is none. */
export function currentFragment(loc = globalThis.location) {
  const fragment = loc.hash.replace(/^#/, "");
  return fragment === "" ? null : fragment;
}

/** The page's address with this fragment. */
export function linkFor(fragment, loc = globalThis.location) {
  return `${loc.href.split("#")[0]}#${String(fragment).replace(/^#/, "")}`;
}

/** Take the fragment off the address bar (the autosave holds the rig from now on). */
export function clearFragment(loc = globalThis.location) {
  try {
    history.replaceState(history.state, "", loc.href.split("#")[0]);
  } catch {
    // Some file:// pages may not rewrite their address; the link then just stays.
  }
}

/**
 * Copy text to the clipboard. Returns true when copied; false when the browser
 * refused (the caller then leaves the link selected in its box for a manual copy).
 */
export async function copyText(text, box) {
  try {
    await navigator.clipboard.writeText(text);
    return true;
  } catch {
    box.focus();
    box.select();
    return false;
  }
}

/**
 * What a link holds ("s1." + base64url of zlib-compressed JSON): {rig, result}, read for
 * display only (the core decodes and validates it as soon as it runs), or null if it cannot
 * be read. ``result`` is the check the sender's page had for this rig, or null.
 */
export async function peekLink(fragment) {
  try {
    const body = String(fragment).replace(/^#/, "");
    if (!body.startsWith("s1.") || typeof DecompressionStream !== "function") return null;
    const b64 = body.slice(3).replace(/-/g, "+").replace(/_/g, "/");
    const bytes = Uint8Array.from(atob(b64 + "=".repeat((4 - (b64.length % 4)) % 4)), (c) => c.charCodeAt(0));
    const stream = new Blob([bytes]).stream().pipeThrough(new DecompressionStream("deflate"));
    const payload = JSON.parse(await new Response(stream).text());
    if (!payload || typeof payload.rig !== "object" || !payload.rig) return null;
    const result = payload.result && typeof payload.result === "object" ? payload.result : null;
    return { rig: payload.rig, result };
  } catch {
    return null;
  }
}
