// The draft: what the rig sheet holds. It has the shape of a rig file, but every
// quantity is the text the user typed ("25 mm"), kept exactly, valid or not.
// The core parses that text (it is the one place that knows units); this module
// only moves text between the draft and the rig object sent to the core.

import { FOOT_M, INCH_M, POUND_FORCE_N, POUND_KG, exactIn, isImperial } from "./units.js";

/** SI unit of each quantity field, shown after numbers that arrive without one. */
export const LINK_UNITS = {
  length_m: "m", rod_mass_kg: "kg", extra_inertia_kg_m2: "kg m2",
  joint_damping_N_m_s: "N m s", joint_friction_N_m: "N m",
};
const MASS_UNITS = { mass_kg: "kg", at_m: "m" };
const DRIVE_UNITS = {
  stroke_m: "m", rod_length_m: "m", speed_rpm: "rpm",
  axis_tilt_deg: "deg", side_stroke_m: "m", side_phase_deg: "deg",
};
const LEAN_UNIT = "deg"; // limits.max_lean_deg, a single number beside the ranges
const LIMIT_UNITS = { speed_rpm: "rpm", stroke_m: "m" };
export const GRAVITY_UNIT = "m/s2";

/** Drive fields each waveform uses; the others stay in the draft for switching back. */
const DRIVE_FIELDS = {
  sine: ["stroke_m", "speed_rpm"],
  crank: ["stroke_m", "rod_length_m", "speed_rpm"],
  samples: ["samples_m", "stroke_m", "speed_rpm"],
};
export const WAVEFORMS = Object.keys(DRIVE_FIELDS);
export const MAX_LINKS = 3;

export function driveFieldUsed(waveform, key) {
  return (DRIVE_FIELDS[waveform] || []).includes(key);
}

// Numbers from a file (SI) are shown in the unit a technician would say: below a metre in
// mm, below a kilogram in g, as the report shows them. The decimal point moves in the text
// ("0.024" -> "24"), so the core reads back exactly the number the file held.
const SMALLER = { m: ["mm", 3], kg: ["g", 3] };

function shiftDecimal(text, places) {
  const [whole, part = ""] = text.split(".");
  const digits = whole + part.padEnd(places, "0");
  const cut = whole.length + places;
  const joined = `${digits.slice(0, cut)}.${digits.slice(cut)}`.replace(/\.?0*$/, "");
  return joined.replace(/^(-?)0+(?=\d)/, "$1");
}

// With imperial units chosen, every quantity in its imperial unit (ounces under a pound). The
// factors are the core's own products (model/units.py), so "x lb in2" reads back as x * factor.
const IMPERIAL = {
  m: () => ["in", INCH_M],
  kg: (value) => (Math.abs(value) < POUND_KG ? ["oz", POUND_KG / 16] : ["lb", POUND_KG]),
  "kg m2": () => ["lb in2", POUND_KG * (INCH_M * INCH_M)],
  "N m s": () => ["lbf in s", POUND_FORCE_N * INCH_M],
  "N m": () => ["lbf in", POUND_FORCE_N * INCH_M],
  [GRAVITY_UNIT]: () => ["ft/s2", FOOT_M],
};

// Significant digits of a double's shortest decimal (0.3 -> 1, 0.0254 -> 3).
const digitsOf = (value) => Math.abs(value).toExponential().split("e")[0].replace(".", "").length;

/** The imperial text of an SI number: exact when a decimal of at most 12 digits is its very
 * double, else rounded to the number's meaningful digits (two more than it has, at least 4);
 * the draft keeps the SI number beside it (see FROM_SI), so rounding moves no rig. */
function imperialText(value, unit, exactOnly) {
  if (!isImperial() || !IMPERIAL[unit]) return null;
  const [name, factor] = IMPERIAL[unit](value);
  if (value === 0) return `0 ${name}`;
  const exact = exactIn(value, factor);
  if (exactOnly && exact === null) return null;
  const digits = Math.min(12, Math.max(4, digitsOf(value) + 2));
  return `${exact ?? String(Number((value / factor).toPrecision(digits)))} ${name}`;
}

/** A number from a file becomes "24 mm" or "0.3 kg"'s "300 g"; text stays as it is.
 * ``exactOnly``: imperial only where exact (a number the draft does not keep beside it). */
function asText(value, unit, exactOnly = false) {
  if (value === undefined || value === null) return "";
  if (typeof value !== "number") return typeof value === "string" ? value : JSON.stringify(value);
  if (!unit) return String(value);
  const imperial = imperialText(value, unit, exactOnly);
  if (imperial) return imperial;
  const smaller = SMALLER[unit];
  const plain = String(value);
  if (smaller && Math.abs(value) < 1 && !/e/i.test(plain)) {
    return `${shiftDecimal(plain, smaller[1])} ${smaller[0]}`;
  }
  return `${plain} ${unit}`;
}

// A number that arrived as SI (a file, the demo, a link) is written in the display units, and
// the draft keeps it beside the text written for it: draft[FROM_SI][path] = [si, text, unit].
// While the field still holds that text, the rig sent to the core carries the very number
// (rounded inches move nothing), and a change of units writes it again in the new ones.
// A text the user typed is never rewritten and is sent as typed.
export const FROM_SI = "_from_si";
const KEPT = new Set(["m", "kg", ...Object.keys(IMPERIAL)]); // bare numbers the core reads as SI

function record(draft, path, value, unit) {
  const text = asText(value, unit);
  if (typeof value === "number" && KEPT.has(unit)) draft[FROM_SI][path] = [value, text, unit];
  return text;
}

/** The user typed ``text`` at ``path``: it is theirs now, sent as typed, never rewritten. */
export function typeAt(draft, path, text) {
  setPath(draft, path, text);
  if (draft[FROM_SI]) delete draft[FROM_SI][path];
}

/** Write the draft's numbers that came as SI again in the display units now chosen; the
 * texts the user typed stay. True when any text changed. */
export function rewriteUnits(draft) {
  let changed = false;
  for (const [path, [value, text, unit]] of Object.entries(draft?.[FROM_SI] || {})) {
    if (getPath(draft, path) !== text) continue; // typed over: the user's own now
    const next = asText(value, unit);
    draft[FROM_SI][path] = [value, next, unit];
    if (next !== text) {
      setPath(draft, path, next);
      changed = true;
    }
  }
  return changed;
}

/** A copy of the draft with each untouched field's text replaced by its SI number. */
function withNumbers(draft) {
  const out = JSON.parse(JSON.stringify({ ...draft, [FROM_SI]: undefined }));
  for (const [path, [value, text]] of Object.entries(draft[FROM_SI] || {})) {
    if (getPath(out, path) === text) setPath(out, path, value);
  }
  return out;
}

/** After a link or point mass at ``index`` of the list at ``list`` is removed: its kept
 * numbers go, those after it move down one place. */
function dropRecords(draft, list, index) {
  const kept = draft[FROM_SI];
  if (!kept) return;
  const head = `${list}[`;
  for (const path of Object.keys(kept)) {
    if (!path.startsWith(head)) continue;
    const k = Number(path.slice(head.length, path.indexOf("]", head.length)));
    const entry = kept[path];
    delete kept[path];
    if (k > index) kept[`${head}${k - 1}${path.slice(path.indexOf("]", head.length))}`] = entry;
    else if (k < index) kept[path] = entry;
  }
}

function isObject(value) {
  return value !== null && typeof value === "object" && !Array.isArray(value);
}

function textFields(draft, prefix, obj, units) {
  const out = { ...obj };
  for (const [key, unit] of Object.entries(units)) out[key] = record(draft, `${prefix}${key}`, obj[key], unit);
  return out;
}

/** Samples as one editable text: numbers joined by commas, each with its unit. */
export function samplesText(samples) {
  if (typeof samples === "string") return samples;
  if (!Array.isArray(samples)) return "";
  return samples.map((s) => asText(s, "m", true)).join(", ");
}

/** Turn a rig object (from a file, the demo, a link) into a draft. Unknown fields are kept. */
export function draftFromRig(rig) {
  const src = isObject(rig) ? rig : {};
  const draft = { ...src };
  draft.format = src.format ?? "shakestill-rig";
  draft.version = src.version ?? 1;
  draft[FROM_SI] = {};
  draft.title = typeof src.title === "string" ? src.title : asText(src.title, "");
  draft.g_m_s2 = record(draft, "g_m_s2", src.g_m_s2, GRAVITY_UNIT);
  const links = Array.isArray(src.links) ? src.links : [];
  draft.links = links.map((link, i) => {
    const obj = isObject(link) ? link : {};
    const out = textFields(draft, `links[${i}].`, obj, LINK_UNITS);
    const masses = Array.isArray(obj.point_masses) ? obj.point_masses : [];
    out.point_masses = masses.map((p, j) => textFields(draft, `links[${i}].point_masses[${j}].`,
      isObject(p) ? p : {}, MASS_UNITS));
    return out;
  });
  if (draft.links.length === 0) {
    draft.links.push({ ...textFields(draft, "links[0].", {}, LINK_UNITS), point_masses: [] });
  }
  const drive = isObject(src.drive) ? src.drive : {};
  draft.drive = textFields(draft, "drive.", drive, DRIVE_UNITS);
  draft.drive.waveform = WAVEFORMS.includes(drive.waveform) ? drive.waveform : "sine";
  draft.drive.samples_m = samplesText(drive.samples_m);
  const limits = isObject(src.limits) ? src.limits : {};
  draft.limits = { ...limits };
  for (const [key, unit] of Object.entries(LIMIT_UNITS)) {
    const pair = Array.isArray(limits[key]) ? limits[key] : [];
    draft.limits[key] = [0, 1].map((i) => record(draft, `limits.${key}[${i}]`, pair[i], unit));
  }
  draft.limits.max_lean_deg = asText(limits.max_lean_deg, LEAN_UNIT);
  return draft;
}

/** Copy obj, dropping blank quantity texts (a missing optional number is 0 in the core). */
function withoutBlanks(obj, keys) {
  const out = { ...obj };
  for (const key of keys) {
    const text = typeof out[key] === "string" ? out[key].trim() : out[key];
    if (text === "" || text === undefined) delete out[key];
    else out[key] = text;
  }
  return out;
}

/** Split the samples text at commas, semicolons and line breaks; each item keeps its unit. */
export function splitSamples(text) {
  return String(text).split(/[,;\n]+/).map((s) => s.trim()).filter((s) => s !== "");
}

/** The rig object sent to the core: the user's texts, blanks left out, unused drive fields left out. */
export function rigFromDraft(typed) {
  const draft = withNumbers(typed);
  const rig = withoutBlanks(draft, ["g_m_s2"]);
  delete rig[FROM_SI];
  rig.links = draft.links.map((link) => {
    const out = withoutBlanks(link, Object.keys(LINK_UNITS));
    out.point_masses = link.point_masses.map((p) => withoutBlanks(p, Object.keys(MASS_UNITS)));
    return out;
  });
  const drive = withoutBlanks(draft.drive, Object.keys(DRIVE_UNITS));
  const samples = splitSamples(draft.drive.samples_m || "");
  if (samples.length) drive.samples_m = samples;
  else delete drive.samples_m;
  for (const key of ["stroke_m", "rod_length_m", "samples_m"]) {
    if (!driveFieldUsed(drive.waveform, key)) delete drive[key];
  }
  rig.drive = drive;
  const limits = { ...draft.limits };
  for (const key of Object.keys(LIMIT_UNITS)) {
    const pair = (draft.limits[key] || ["", ""]).map((s) => (typeof s === "number" ? s : String(s).trim()));
    if (pair[0] === "" && pair[1] === "") delete limits[key];
    else limits[key] = pair;
  }
  const lean = String(draft.limits.max_lean_deg ?? "").trim();
  if (lean === "") delete limits.max_lean_deg;
  else limits.max_lean_deg = lean;
  rig.limits = limits;
  return rig;
}

/** "links[0].point_masses[1].at_m" -> ["links", 0, "point_masses", 1, "at_m"]. */
export function parsePath(path) {
  const parts = [];
  for (const match of path.matchAll(/([^.[\]]+)|\[(\d+)\]/g)) {
    parts.push(match[2] !== undefined ? Number(match[2]) : match[1]);
  }
  return parts;
}

/** The path one level up: "links[0].length_m" -> "links[0]" -> "links" -> "". */
export function parentPath(path) {
  return path.replace(/(\.[^.[\]]+|\[\d+\])$|^[^.[\]]+$/, "");
}

export function getPath(obj, path) {
  return parsePath(path).reduce((node, key) => (node == null ? undefined : node[key]), obj);
}

export function setPath(obj, path, value) {
  const keys = parsePath(path);
  const last = keys.pop();
  const parent = keys.reduce((node, key) => node[key], obj);
  parent[last] = value;
}

/** A new link, copied from the one below it: a rig usually repeats its links. */
export function addLink(draft) {
  if (draft.links.length >= MAX_LINKS) return false;
  const from = `links[${draft.links.length - 1}]`;
  draft.links.push(structuredClone(draft.links[draft.links.length - 1]));
  const kept = draft[FROM_SI] || {}; // the copied texts keep their SI numbers too
  for (const [path, entry] of Object.entries(kept)) {
    if (path.startsWith(`${from}.`)) kept[`links[${draft.links.length - 1}]${path.slice(from.length)}`] = [...entry];
  }
  return true;
}

export function removeLink(draft, index) {
  if (draft.links.length <= 1) return false;
  draft.links.splice(index, 1);
  dropRecords(draft, "links", index);
  return true;
}

export function addPointMass(draft, linkIndex) {
  const link = draft.links[linkIndex];
  link.point_masses.push({ mass_kg: "", at_m: link.length_m || "" });
}

export function removePointMass(draft, linkIndex, massIndex) {
  draft.links[linkIndex].point_masses.splice(massIndex, 1);
  dropRecords(draft, `links[${linkIndex}].point_masses`, massIndex);
}
