// The units the page writes numbers in: metric (mm, g, kg) or imperial (in, oz, lb).
// The core reads both on input whatever the choice; this only decides how the page shows
// numbers. The choice is kept in browser storage and carried in a share link's view.

const KEY = "shakestill.units.v1";
export const UNIT_SYSTEMS = ["metric", "imperial"];
// Exact by definition (international yard and pound, 1959; NIST SP 811, appendix B).
export const INCH_M = 0.0254;
export const POUND_KG = 0.45359237;
export const FOOT_M = 0.3048;

function stored() {
  try {
    const value = globalThis.localStorage?.getItem(KEY);
    return UNIT_SYSTEMS.includes(value) ? value : "metric";
  } catch {
    return "metric"; // storage blocked: the page still works in metric
  }
}

let current = stored();
const listeners = new Set();

export const displayUnits = () => current;
export const isImperial = () => current === "imperial";

/** Choose the units shown; returns true when that changed anything. */
export function setDisplayUnits(value) {
  if (!UNIT_SYSTEMS.includes(value) || value === current) return false;
  current = value;
  try {
    globalThis.localStorage?.setItem(KEY, value);
  } catch {
    // blocked or full: the choice lasts for this visit
  }
  for (const fn of listeners) fn(value);
  return true;
}

export function onUnitsChange(fn) {
  listeners.add(fn);
}

/** A length in metres as [number, unit] for display: mm or in. */
export const lengthShown = (m) => (isImperial() ? [m / INCH_M, "in"] : [m * 1000, "mm"]);

/** An acceleration in m/s² as [number, unit]: m/s² or ft/s². */
export const accelShown = (a) => (isImperial() ? [a / FOOT_M, "ft/s²"] : [a, "m/s²"]);

/**
 * The shortest decimal text whose number times ``factor`` is exactly ``value`` (the core reads
 * "x in" as x * 0.0254), or null when none of up to 12 digits is: the caller then keeps metric.
 */
export function exactIn(value, factor) {
  for (let digits = 1; digits <= 12; digits += 1) {
    const text = String(Number((value / factor).toPrecision(digits)));
    if (!/e/i.test(text) && Number(text) * factor === value) return text;
  }
  return null;
}
