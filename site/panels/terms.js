// Words a technician may not know, each with a one-line explanation shown on hover and on
// keyboard focus (a real element linked by aria-describedby, not a title tooltip, so
// screen readers and keyboards get it too). Escape hides it again (WCAG 1.4.13).

import { h } from "../lib/dom.js";

export const TERMS = {
  floquet: "How much a small disturbance is multiplied over one drive cycle: below 1 it dies away, "
    + "above 1 it grows.",
  growth: "The largest Floquet multiplier: how many times bigger a small swing gets every drive cycle.",
  sway: "The slow swing of the held pendulum about its position, under the fast shake of the drive.",
  tongue: "A band of drive speeds where the hanging pendulum swings itself up (parametric resonance); "
    + "n = 1 is the principal one, near twice its natural frequency.",
  window: "The range of speed (or stroke) around the operating point where this position stays stable.",
  knock: "The largest sudden push (a rate, in rad/s) the upright pendulum recovers from.",
  recovery: "Which starting angles and rates the pendulum recovers from, and which make it fall.",
  accel: "Lines of equal peak pivot acceleration, in g (9.80665 m/s²), across speed and stroke.",
};

let made = 0;

/** ``words`` marked as a term with the explanation of ``key`` (a key of TERMS). */
export function term(words, key) {
  made += 1;
  const id = `term-tip-${made}`;
  return h("span", { class: "term", tabindex: "0", "aria-describedby": id },
    words, h("span", { class: "term-tip", role: "tooltip", id }, TERMS[key]));
}

/** The page's own HTML marks terms as <span data-term="key">words</span>: give them theirs. */
export function markTerms(root = document) {
  for (const el of root.querySelectorAll("[data-term]")) {
    if (el.classList.contains("term") || !TERMS[el.dataset.term]) continue;
    el.replaceWith(term(el.textContent, el.dataset.term));
  }
}

// Escape hides a shown explanation until the pointer or focus leaves the term.
document.addEventListener("keydown", (event) => {
  if (event.key !== "Escape") return;
  const shown = document.activeElement?.closest?.(".term");
  if (shown) shown.classList.add("tip-hidden");
});
const showAgain = (event) => event.target.closest?.(".term")?.classList.remove("tip-hidden");
document.addEventListener("focusout", showAgain);
document.addEventListener("pointerover", showAgain);
