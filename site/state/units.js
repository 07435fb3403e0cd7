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

export const STANDARD_GRAVITY = 9.80665; // m/s², exact (CGPM 1901): 1 lbf = 1 lb × this
export const POUND_FORCE_N = POUND_KG * STANDARD_GRAVITY;
export const HORSEPOWER_W = 745.69987158227022; // mechanical: 550 ft lbf/s (NIST SP 811)

// Every kind of quantity the page writes, as [unit, SI per unit] for each system; the core's
// words and pictures use the same table (pycore render/shown.py) so both agree.
const SHOWN = {
  length: { metric: ["mm", 1e-3], imperial: ["in", INCH_M] },
  mass: { metric: ["kg", 1], imperial: ["lb", POUND_KG] },
  force: { metric: ["N", 1], imperial: ["lbf", POUND_FORCE_N] },
  power: { metric: ["W", 1], imperial: ["hp", HORSEPOWER_W] },
  accel: { metric: ["m/s²", 1], imperial: ["ft/s²", FOOT_M] },
  velocity: { metric: ["m/s", 1], imperial: ["ft/s", FOOT_M] },
  damping: { metric: ["N m s", 1], imperial: ["lbf in s", POUND_FORCE_N * INCH_M] },
  torque: { metric: ["N m", 1], imperial: ["lbf in", POUND_FORCE_N * INCH_M] },
  inertia: { metric: ["kg m²", 1], imperial: ["lb in²", POUND_KG * INCH_M * INCH_M] },
};

/** An SI value of ``kind`` as [number, unit] in the units chosen: shown(0.0254, "length") is
 * [1, "in"] in imperial, [25.4, "mm"] in metric. */
export function shown(si, kind) {
  const [unit, perUnit] = SHOWN[kind][current];
  // mm: multiply by 1000 (exact for decimal metres more often than dividing by 1e-3)
  return [perUnit === 1e-3 ? si * 1000 : si / perUnit, unit];
}

/** The unit a kind is written in now ("in", "lbf", ...). */
export const unitOf = (kind) => SHOWN[kind][current][0];

/** A length in metres as [number, unit] for display: mm or in. */
export const lengthShown = (m) => shown(m, "length");

/** An acceleration in m/s² as [number, unit]: m/s² or ft/s². */
export const accelShown = (a) => shown(a, "accel");

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

/** "12.5 lbf": an SI value of ``kind`` written by ``format(number)`` with its unit. */
export function quantityText(si, kind, format) {
  const [value, unit] = shown(si, kind);
  return `${format(value)} ${unit}`;
}
