// What the user typed or chose in the work panels comes back after a reload: every control
// marked `data-keep` in the page (run-up, motion, recovery map, the fit and its pasted log)
// is saved as it changes and restored at start. The rig itself is the autosave's.

import { panelInputs } from "./storage.js";

const SAVE_AFTER_MS = 400; // a pause in typing

function keyOf(el) {
  return el.type === "radio" || el.type === "checkbox" ? `${el.name || el.id}=${el.value}` : el.id;
}

function read(el) {
  return el.type === "radio" || el.type === "checkbox" ? el.checked : el.value;
}

/** Restore the kept values (telling each panel as if the user had set them), then keep them.
 * Returns `forget()`, which drops a save still waiting (the tests' reset, see app.js). */
export function keepPanelInputs(root = document) {
  const controls = () => [...root.querySelectorAll("[data-keep]")];
  const kept = panelInputs.load();
  for (const el of controls()) {
    const value = kept[keyOf(el)];
    if (value === undefined || typeof value !== (typeof read(el))) continue;
    if (typeof value === "boolean") {
      el.checked = value;
    } else if (el.tagName !== "SELECT" || [...el.options].some((o) => o.value === value)) {
      el.value = value;
      el.dispatchEvent(new Event(el.tagName === "SELECT" ? "change" : "input", { bubbles: true }));
    }
  }
  let timer = 0;
  const saveNow = () => {
    timer = 0;
    panelInputs.save(Object.fromEntries(controls().map((el) => [keyOf(el), read(el)])));
  };
  const save = () => {
    clearTimeout(timer);
    timer = setTimeout(saveNow, SAVE_AFTER_MS);
  };
  root.addEventListener("input", (event) => { if (event.target.closest("[data-keep]")) save(); });
  root.addEventListener("change", (event) => { if (event.target.closest("[data-keep]")) save(); });
  // a reload or a closed tab inside the pause still keeps what was just typed
  globalThis.addEventListener?.("pagehide", () => { if (timer) { clearTimeout(timer); saveNow(); } });
  return () => {
    clearTimeout(timer);
    timer = 0;
  };
}
