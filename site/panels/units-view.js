// The display units' radio buttons (metric / imperial) and what a change redraws: the
// verdict, the map and the sheet's new numbers follow; what the user typed is never rewritten.

import { displayUnits, onUnitsChange, setDisplayUnits } from "../state/units.js";

/** ``inputs``: the radio buttons; ``redraw(units)`` runs after each change (and a link's). */
export function wireUnits(inputs, redraw) {
  const mark = () => {
    for (const input of inputs) input.checked = input.value === displayUnits();
  };
  mark();
  for (const input of inputs) {
    input.addEventListener("change", () => {
      if (input.checked) setDisplayUnits(input.value);
    });
  }
  onUnitsChange((units) => {
    mark();
    redraw(units);
  });
}
