// The notice bar at the top of the page and the status chips beside it.

import { h, replaceChildren } from "../lib/dom.js";

/** The core's words as a sentence: capital first letter, full stop at the end. */
export function sentence(text) {
  const t = String(text || "").trim();
  if (!t) return "";
  return t.charAt(0).toUpperCase() + t.slice(1) + (/[.!?]$/.test(t) ? "" : ".");
}

/** notice(text, [{label, run}]), hide() and chip(id, text, state) on the page's elements. */
export function createNotices($) {
  const hide = () => { $("notice").hidden = true; };
  const notice = (text, actions = []) => {
    $("notice-text").textContent = text;
    replaceChildren($("notice-actions"),
      actions.map(({ label, run }) => h("button", { type: "button", on: { click: () => { hide(); run(); } } }, label)),
      h("button", { type: "button", class: "quiet", on: { click: hide } }, "Dismiss"));
    $("notice").hidden = false;
  };
  const chip = (id, text, chipState) => {
    const node = $(id);
    node.textContent = text;
    node.dataset.state = chipState;
  };
  return { notice, hide, chip };
}
