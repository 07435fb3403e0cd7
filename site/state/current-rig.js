// The rig on the sheet: its draft (texts as typed) and view, autosave, the previous rig
// kept on every replacement, the read-only preview of a link's rig, and the last session's
// rig restored at start (a damaged one set aside, never overwritten). The screen is told
// through the callbacks it is given; this module draws nothing itself.

import { draftFromRig, rewriteUnits, rigFromDraft } from "./draft.js";
import { download } from "./rig-file.js";
import { autosave } from "./storage.js";
import { setDisplayUnits } from "./units.js";

const AUTOSAVE_OFF = "Autosave: off (this browser blocks storage; save a rig file)";
// Typing in one field is one undo step until a pause this long; a gesture that types several
// fields at once (a point picked on the map) is one step when its edits come this close.
const TYPING_PAUSE_MS = 1000;
const ONE_GESTURE_MS = 50;
const MAX_STEPS = 200; // undo steps kept (each a copy of the sheet's texts)

const copy = (draft) => JSON.parse(JSON.stringify(draft));

/**
 * ``screen`` gives: render() the sheet, changed(delay) after any change of rig,
 * notice(text, actions), chip(id, text, state), preview(on) the sheet read-only or not,
 * waiting(text) an empty sheet's words, history(canUndo, canRedo) the undo buttons' state.
 */
export function createCurrentRig(screen) {
  // Page-wide undo over every change to the rig: ``past`` holds the sheet's drafts as they
  // were before each step, ``settled`` the draft as it was after the last change (the form
  // edits the draft in place, so the state before a keystroke must be kept beforehand).
  const history = { past: [], future: [], settled: null, lastPath: null, lastTime: 0 };
  let checked = null; // {rig: JSON text, reply}: this visit's last fresh check

  function step(before) {
    history.past.push(before);
    if (history.past.length > MAX_STEPS) history.past.shift();
    history.future = [];
  }

  function settle() {
    history.settled = rig.draft ? copy(rig.draft) : null;
    screen.history(history.past.length > 0, history.future.length > 0);
  }

  function travel(from, to) {
    if (!from.length || !rig.draft) return;
    to.push(copy(rig.draft));
    rig.draft = from.pop();
    history.lastPath = null;
    settle();
    screen.render();
    rig.save();
    screen.changed(0);
  }

  const rig = {
    draft: null, // what the sheet holds
    preview: null, // a link's rig shown (read-only) until the engine has checked the link
    view: { v: 1, focus: "pendulum" },

    /** The draft the sheet shows: the link's preview while there is one. */
    shown: () => rig.preview || rig.draft,

    /** The rig as the engine reads it (null before there is one). */
    current: () => rig.draft && rigFromDraft(rig.draft),

    save() {
      if (!rig.draft) return;
      const ok = autosave.save(rig.draft, rig.view);
      screen.chip("chip-autosave", ok ? "Autosave: on" : AUTOSAVE_OFF, ok ? "on" : "off");
    },

    focus(section) {
      rig.view.focus = section;
      rig.save();
    },

    /** The first rig of a visit (the last session's, or the build's demo): no undo step. */
    begin(draft) {
      rig.draft = draft;
      settle();
    },

    use(draft, view = null) {
      if (rig.draft && JSON.stringify(rig.draft) !== JSON.stringify(draft)) step(copy(rig.draft));
      rig.draft = draft;
      history.lastPath = null;
      settle();
      if (view && typeof view === "object") rig.view = { ...rig.view, ...view };
      screen.render();
      rig.save();
      screen.changed(0);
      const section = document.querySelector(`[data-section="${CSS.escape(rig.view.focus || "")}"]`);
      if (view && section) section.scrollIntoView({ block: "start" });
    },

    /** Replace the rig with another one, keeping the current one as "previous". */
    replace(next, view, what) {
      const had = rig.draft;
      if (had) autosave.keepPrevious(had, rig.view);
      // A link carries the sender's display units: its numbers are written in them.
      if (view && typeof view === "object") setDisplayUnits(view.units);
      rig.use(draftFromRig(next), view);
      screen.notice(`${what}.`, had ? [{ label: "Bring back my previous rig", run: rig.restorePrevious }] : []);
    },

    restorePrevious() {
      const previous = autosave.previous();
      if (!previous) return;
      autosave.keepPrevious(rig.draft, rig.view);
      rig.use(previous.draft, previous.view);
      screen.notice("Your previous rig is back (the one you just left is kept as previous).",
        [{ label: "Swap back", run: rig.restorePrevious }]);
    },

    /** The display units changed: numbers that came as SI are written in the new units (the
     * rig itself does not move, so this is no undo step); what the user typed stays. */
    unitsChanged() {
      const previewed = rig.preview && rewriteUnits(rig.preview);
      if (rig.draft && rewriteUnits(rig.draft)) {
        settle();
        rig.save();
      } else if (!previewed) return;
      screen.render();
    },

    /** The sheet's draft has just been edited at ``path``: one undo step per burst of typing. */
    edited(path) {
      const now = Date.now();
      const gap = now - history.lastTime;
      if (history.settled && (gap > TYPING_PAUSE_MS || (path !== history.lastPath && gap > ONE_GESTURE_MS))) {
        step(history.settled);
      }
      history.lastPath = path;
      history.lastTime = now;
      settle();
    },

    /** No rig, no undo history, no last check: the state of a first visit before the demo
     * loads (the page's reset for tests, see app.js; storage is cleared by the caller). */
    forget() {
      rig.draft = null;
      rig.preview = null;
      rig.view = { v: 1, focus: "pendulum" };
      history.past = [];
      history.future = [];
      history.lastPath = null;
      checked = null;
      screen.preview(false);
      settle();
    },

    undo: () => travel(history.past, history.future),
    redo: () => travel(history.future, history.past),

    /** A link's rig on the sheet at once, read-only until the engine has checked the link. */
    startPreview(linked) {
      rig.preview = draftFromRig(linked);
      screen.preview(true);
      screen.render();
    },

    endPreview() {
      if (!rig.preview) return;
      rig.preview = null;
      screen.preview(false);
      if (rig.draft) screen.render();
      else screen.waiting("The demo rig loads now.");
    },

    /** The last session's rig; false when there is none (a damaged one is set aside and offered). */
    restoreSaved() {
      if (!autosave.available()) screen.chip("chip-autosave", AUTOSAVE_OFF, "off");
      const saved = autosave.load();
      if (saved) {
        try {
          rigFromDraft(saved.draft); // throws on a draft of the wrong shape
          rig.begin(saved.draft);
          if (saved.view && typeof saved.view === "object") rig.view = { ...rig.view, ...saved.view };
          screen.render();
          return true;
        } catch {
          autosave.setAside(true);
        }
      } else if (!autosave.setAside()) {
        screen.waiting("The demo rig loads when the engine has started.");
        return false;
      }
      screen.waiting("The demo rig loads when the engine has started.");
      screen.notice("The rig saved in this browser last time could not be read (it is damaged), so the demo "
        + "rig is shown instead. The damaged copy is kept: download it to look at it or send it to us.",
      [{ label: "Download the damaged copy", run: () => download("shakestill-damaged-autosave.txt", autosave.damagedText()) }]);
      return false;
    },

    /** The last fresh check for exactly the rig on the sheet (every text as typed), if any:
     * this visit's (kept in memory, storage or not), else the one stored from the last visit. */
    lastCheck() {
      if (!rig.draft) return null;
      const now = JSON.stringify(rigFromDraft(rig.draft));
      if (checked && checked.rig === now) return checked.reply;
      return autosave.checkFor(rigFromDraft(rig.draft));
    },
    keepCheck(current, reply) {
      checked = { rig: JSON.stringify(current), reply };
      autosave.keepCheck(current, reply);
    },
  };
  return rig;
}
