// Autosave: the draft (every text as typed, valid or not) and the view go to
// localStorage on each edit, so a reload or a crash loses nothing. Opening a
// link, a file or the demo first moves the current draft to a "previous" slot.

const KEY = "shakestill.autosave.v1";
const PREVIOUS = "shakestill.previous.v1";
// An autosave that cannot be read is moved here, never overwritten: the user can download it.
const DAMAGED = "shakestill.damaged.v1";
// The last check the engine gave, with the exact rig it was for (shown at once next visit).
const LAST_CHECK = "shakestill.lastcheck.v1";

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

// The work panels' inputs (run-up, motion, recovery map, the fit and its pasted log).
const INPUTS = "shakestill.inputs.v1";

/** The panels' inputs by key, kept apart from the rig so a damaged one never costs the rig. */
export const panelInputs = {
  load() {
    try {
      const data = JSON.parse(store()?.getItem(INPUTS) || "null");
      return data && typeof data === "object" && !Array.isArray(data) ? data : {};
    } catch {
      return {};
    }
  },
  save(values) {
    try {
      store()?.setItem(INPUTS, JSON.stringify(values));
    } catch {
      // full or blocked: the inputs are simply not kept
    }
  },
};

export const autosave = {
  load: () => read(KEY),
  save: (draft, view) => write(KEY, draft, view),
  /** Keep the current draft as "previous" before something else replaces it. */
  keepPrevious(draft, view) {
    return write(PREVIOUS, draft, view);
  },
  previous: () => read(PREVIOUS),
  /**
   * Move an autosave that cannot be used (unreadable, or ``force``: read but unusable) to
   * the damaged slot before anything overwrites it; returns its text, or "" if none.
   */
  setAside(force = false) {
    const s = store();
    try {
      const text = s?.getItem(KEY);
      if (!text || (!force && read(KEY))) return "";
      s.setItem(DAMAGED, text);
      s.removeItem(KEY);
      return text;
    } catch {
      return "";
    }
  },
  keepCheck(rig, reply) {
    try {
      store()?.setItem(LAST_CHECK, JSON.stringify({ rig, reply }));
    } catch {
      // full or blocked: next visit simply waits for the engine
    }
  },
  /** The last check's reply if it was for exactly this rig (every text as typed), else null. */
  checkFor(rig) {
    try {
      const last = JSON.parse(store()?.getItem(LAST_CHECK) || "null");
      return last && JSON.stringify(last.rig) === JSON.stringify(rig) ? last.reply : null;
    } catch {
      return null;
    }
  },
  damagedText: () => {
    try {
      return store()?.getItem(DAMAGED) || "";
    } catch {
      return "";
    }
  },
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

// The work panels' last results, one key each, with the exact rig each is for and when it was
// worked out: a reload shows them again, marked as from the last session (panels/last-session.js).
const RESULT = (panel) => `shakestill.result.${panel}.v1`;
// Characters of JSON one panel may keep: a long motion run is megabytes, and the autosave and the
// inputs must still fit in the browser's few megabytes; a larger result is remembered as too large.
export const RESULT_BUDGET = 1_000_000;

export const lastResults = {
  /** Keep a panel's result for the rig ``rigKey`` (its JSON text): the first of ``choices``
   * (plain JSON, fullest first) that fits the budget, else a note that it was too large. */
  keep(panel, rigKey, ...choices) {
    const saved = new Date().toISOString();
    const text = choices.map((data) => JSON.stringify({ rig: rigKey, saved, data }))
      .find((t) => t.length <= RESULT_BUDGET) ?? JSON.stringify({ rig: rigKey, saved, data: null });
    try {
      store()?.setItem(RESULT(panel), text);
    } catch {
      lastResults.drop(panel); // full or blocked: better none than one of another run
    }
  },
  /** {rig, saved, data} as kept (data null: it was too large), or null. */
  take(panel) {
    try {
      const kept = JSON.parse(store()?.getItem(RESULT(panel)) || "null");
      return kept && typeof kept.rig === "string" && typeof kept.saved === "string" && "data" in kept
        ? kept : null;
    } catch {
      return null;
    }
  },
  drop(panel) {
    try {
      store()?.removeItem(RESULT(panel));
    } catch {
      // blocked: nothing was kept either
    }
  },
};
