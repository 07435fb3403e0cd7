// A work panel's last result comes back after a reload (state/storage.js lastResults): shown as
// it was, and marked as from the last session until the panel works it out again: data-state
// "cached" (as the check report's cached verdict) and data-kept "last-session".

import { h } from "../lib/dom.js";
import { lastResults } from "../state/storage.js";

function when(iso) {
  const date = new Date(iso);
  return Number.isNaN(date.getTime()) ? "an earlier visit"
    : date.toLocaleString(undefined, { dateStyle: "medium", timeStyle: "short" });
}

/** A shown result is of the rig on the sheet: worked out now, or kept from the last session for it. */
export const isCurrent = (el) => el.dataset.state === "fresh" || el.dataset.state === "cached";

/** A result just worked out: current, and no longer the last session's. */
export function markFresh(el) {
  el.dataset.state = "fresh";
  delete el.dataset.kept;
}

/** Write a result on show again (new units) with ``show``, keeping its marks: stale stays
 * stale, the last session's stays the last session's. */
export function showAgain(el, show) {
  const { state, kept } = el.dataset;
  show();
  el.dataset.state = state;
  if (kept) el.dataset.kept = kept;
}

/**
 * The keeping of one panel's result. ``holder`` carries the state; ``note`` (the holder unless
 * given) gets the words, first, where the panel's next result replaces them.
 */
export function lastSession(panel, holder, note = holder) {
  let words = ""; // the note on show, to write again after the panel rewrites its result
  const say = () => note.prepend(h("p", { class: "last-session", role: "note" }, words));
  return {
    /** Keep the result just shown: ``choices`` fullest first (see lastResults.keep). */
    keep: (rigKey, ...choices) => lastResults.keep(panel, rigKey, ...choices),
    /** Show the kept result, if any, with ``show(data)`` and mark it; returns the rig (JSON
     * text) it was worked out for, or "" when nothing is shown. */
    restore(show) {
      const kept = lastResults.take(panel);
      if (!kept) return "";
      if (kept.data === null) {
        note.prepend(h("p", { class: "last-session" }, `Your last session's result here (${when(kept.saved)}) `
          + "was too large to keep in this browser: work it out again."));
        return "";
      }
      try {
        show(kept.data);
      } catch (err) {
        console.warn(`The ${panel} result kept from the last session could not be shown`, err);
        lastResults.drop(panel); // kept by an older page in another shape
        return "";
      }
      holder.dataset.state = "cached";
      holder.dataset.kept = "last-session";
      words = `From your last session (${when(kept.saved)}); work it out again to refresh it.`;
      say();
      return kept.rig;
    },
    /** The panel wrote its kept result again (new units): the note too, while it is the last session's. */
    sayAgain() {
      if (holder.dataset.kept && !note.querySelector(".last-session")) say();
    },
  };
}
