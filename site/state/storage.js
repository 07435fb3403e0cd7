// Autosave: the draft (every text as typed, valid or not) and the view go to
// localStorage on each edit, so a reload or a crash loses nothing. Opening a
// link, a file or the demo first moves the current draft to a "previous" slot.

const KEY = "shakestill.autosave.v1";
const PREVIOUS = "shakestill.previous.v1";

function store() {
  try {
    return globalThis.localStorage || null;
  } catch {
    return null; // storage blocked by browser settings
  }
}

function read(key) {
  try {
    const text = store()?.getItem(key);
    const data = text ? JSON.parse(text) : null;
    return data && typeof data === "object" && data.draft ? data : null;
  } catch {
    return null;
  }
}

function write(key, draft, view) {
  const s = store();
  if (!s) return false;
  try {
    s.setItem(key, JSON.stringify({ draft, view, saved: new Date().toISOString() }));
    return true;
  } catch {
    return false; // full or blocked: the caller says autosave is off
  }
}

export const autosave = {
  load: () => read(KEY),
  save: (draft, view) => write(KEY, draft, view),
  /** Keep the current draft as "previous" before something else replaces it. */
  keepPrevious(draft, view) {
    return write(PREVIOUS, draft, view);
  },
  previous: () => read(PREVIOUS),
  available: () => {
    const s = store();
    if (!s) return false;
    try {
      s.setItem("shakestill.probe", "1");
      s.removeItem("shakestill.probe");
      return true;
    } catch {
      return false;
    }
  },
};
