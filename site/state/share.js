// Share links: the whole rig and view live in the URL fragment (after "#"),
// which browsers never send to a server. The core's share_encode and
// share_decode ops do the coding; this module only handles the address.

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
