// The rig sheet: renders the draft as labelled fields, writes every keystroke
// back into the draft, and shows the core's problems and warnings beside the
// field whose JSON path they name (aria-describedby), never in an alert.

import { h, replaceChildren, slug } from "../lib/dom.js";
import {
  MAX_LINKS, WAVEFORMS, addLink, addPointMass, driveFieldUsed, getPath, parentPath, removeLink,
  removePointMass, typeAt,
} from "../state/draft.js";
import { INCH_M, isImperial } from "../state/units.js";
import {
  DRIVE_FIELDS, GENERAL_FIELDS, LEAN_LIMIT_FIELD, LIMIT_FIELDS, LINK_FIELDS, MASS_FIELDS, PATH_KEYS,
  WAVEFORM_NAMES, describePath,
} from "../state/rig-fields.js";

const TEXT_INPUT = {
  type: "text", autocomplete: "off", spellcheck: "false", autocapitalize: "off",
  enterkeyhint: "next",
};

/** A message slot for the problems at `path`; fields and groups both have one. */
function messageSlot(path) {
  return h("p", { class: "msg", id: `m-${slug(path)}`, hidden: true });
}

/** One labelled text field (or textarea/select) bound to a draft path. */
function field(draft, path, words, { control = "input", options = null, extraClass = "" } = {}) {
  const id = `f-${slug(path)}`;
  const described = `m-${slug(path)} h-${slug(path)}`;
  const value = getPath(draft, path) ?? "";
  let input;
  if (control === "select") {
    input = h("select", { id, "data-path": path, "aria-describedby": described },
      options.map(([v, text]) => h("option", { value: v, selected: v === value }, text)));
  } else if (control === "textarea") {
    input = h("textarea", { ...TEXT_INPUT, id, "data-path": path, rows: 4,
      "aria-describedby": described });
    input.value = value;
  } else {
    input = h("input", { ...TEXT_INPUT, id, "data-path": path, "aria-describedby": described });
    input.value = value;
  }
  return h("div", { class: `field ${extraClass}`.trim(), "data-msg-path": path },
    h("label", { for: id }, words.label),
    input,
    messageSlot(path),
    h("p", { class: "hint", id: `h-${slug(path)}` }, words.hint));
}

function group(path, legend, className, ...children) {
  return h("fieldset", { class: className, "data-msg-path": path,
    "aria-describedby": `m-${slug(path)}` },
  h("legend", {}, legend), messageSlot(path), ...children);
}

function linkName(index, count) {
  if (index === 0) return "Link 1, on the pivot";
  return index === count - 1 ? `Link ${index + 1}, the top` : `Link ${index + 1}`;
}

function pointMassRows(draft, i) {
  const link = draft.links[i];
  return link.point_masses.map((_, j) => {
    const base = `links[${i}].point_masses[${j}]`;
    return group(base, `Point mass ${j + 1}`, "mass-row",
      h("div", { class: "pair" },
        field(draft, `${base}.mass_kg`, MASS_FIELDS.mass_kg),
        field(draft, `${base}.at_m`, MASS_FIELDS.at_m)),
      h("button", { type: "button", class: "quiet", "data-action": "remove-mass",
        "data-link": i, "data-mass": j }, `Remove point mass ${j + 1}`));
  });
}

function linkGroup(draft, i) {
  const count = draft.links.length;
  const base = `links[${i}]`;
  const fields = Object.entries(LINK_FIELDS).map(([key, words]) => field(draft, `${base}.${key}`, words));
  return group(base, linkName(i, count), "link",
    h("div", { class: "grid" }, fields),
    h("div", { class: "masses", "data-msg-path": `${base}.point_masses` },
      h("h4", {}, "Point masses"), messageSlot(`${base}.point_masses`),
      pointMassRows(draft, i),
      h("button", { type: "button", "data-action": "add-mass", "data-link": i },
        `Add a point mass to link ${i + 1}`)),
    count > 1
      ? h("button", { type: "button", class: "quiet danger", "data-action": "remove-link",
        "data-link": i }, `Remove link ${i + 1}`)
      : null);
}

function driveGroup(draft) {
  const waveform = draft.drive.waveform;
  const used = (key) => driveFieldUsed(waveform, key);
  const stroke = field(draft, "drive.stroke_m",
    waveform === "samples" ? DRIVE_FIELDS.stroke_m_samples : DRIVE_FIELDS.stroke_m);
  const rod = field(draft, "drive.rod_length_m", DRIVE_FIELDS.rod_length_m);
  const samples = field(draft, "drive.samples_m", DRIVE_FIELDS.samples_m,
    { control: "textarea", extraClass: "wide" });
  rod.hidden = !used("rod_length_m");
  samples.hidden = !used("samples_m");
  return group("drive", "Drive", "drive",
    h("div", { class: "grid" },
      field(draft, "drive.waveform", DRIVE_FIELDS.waveform, {
        control: "select", options: WAVEFORMS.map((w) => [w, WAVEFORM_NAMES[w]]), extraClass: "wide",
      }),
      samples, stroke, rod,
      field(draft, "drive.speed_rpm", DRIVE_FIELDS.speed_rpm)),
    h("details", { class: "drive-path", open: PATH_KEYS.some((k) => getPath(draft, `drive.${k}`)) },
      h("summary", {}, "Drive off vertical (tilt, sideways motion)"),
      h("div", { class: "grid" },
        PATH_KEYS.map((key) => field(draft, `drive.${key}`, DRIVE_FIELDS[key])))));
}

function limitsGroup(draft) {
  const pairs = Object.entries(LIMIT_FIELDS).map(([key, words]) => {
    const base = `limits.${key}`;
    return group(base, words.label, "range",
      h("div", { class: "pair" },
        field(draft, `${base}[0]`, { label: "From", hint: "" }),
        field(draft, `${base}[1]`, { label: "To", hint: "" })),
      h("p", { class: "hint" }, words.hint));
  });
  return group("limits", "Limits", "limits",
    h("p", { class: "hint" }, "Windows are searched inside these ranges only."), pairs,
    field(draft, "limits.max_lean_deg", LEAN_LIMIT_FIELD));
}

/**
 * Render the rig sheet into `root` and report edits.
 * onEdit(path): a field's text changed (the draft is already updated).
 * onStructure(): links or point masses were added or removed, or the waveform changed.
 */
export function createRigForm(root, { getDraft, onEdit, onStructure, onFocusSection }) {
  root.addEventListener("input", (event) => {
    const path = event.target.dataset.path;
    if (!path) return;
    typeAt(getDraft(), path, event.target.value);
    if (path === "drive.waveform") {
      render();
      onStructure(path);
      focus(path);
    } else {
      onEdit(path);
    }
  });

  root.addEventListener("focusin", (event) => {
    const section = event.target.closest("[data-section]");
    if (section) onFocusSection(section.dataset.section);
  });

  root.addEventListener("click", (event) => {
    const button = event.target.closest("button[data-action]");
    if (!button) return;
    const draft = getDraft();
    const i = Number(button.dataset.link);
    const j = Number(button.dataset.mass);
    let next = null;
    switch (button.dataset.action) {
      case "add-link":
        if (!addLink(draft)) return;
        next = `links[${draft.links.length - 1}].length_m`;
        break;
      case "remove-link":
        if (!removeLink(draft, i)) return;
        next = `links[${Math.min(i, draft.links.length - 1)}].length_m`;
        break;
      case "add-mass":
        addPointMass(draft, i);
        next = `links[${i}].point_masses[${draft.links[i].point_masses.length - 1}].mass_kg`;
        break;
      case "remove-mass":
        removePointMass(draft, i, j);
        next = `links[${i}].point_masses`;
        break;
      default:
        return;
    }
    render();
    onStructure(button.dataset.action);
    focus(next);
  });

  function render() {
    const draft = getDraft();
    const links = draft.links.map((_, i) => linkGroup(draft, i));
    replaceChildren(root,
      h("div", { class: "sheet-problems", id: "sheet-problems", hidden: true },
        h("h3", {}, "Needs attention"), h("ul", {})),
      h("section", { class: "sheet-section", "data-section": "pendulum",
        "aria-labelledby": "sec-pendulum" },
      h("h3", { id: "sec-pendulum" }, "Pendulum"),
      h("div", { class: "grid" },
        field(draft, "title", GENERAL_FIELDS.title, { extraClass: "wide" }),
        field(draft, "g_m_s2", GENERAL_FIELDS.g_m_s2)),
      h("div", { class: "links", "data-msg-path": "links" }, messageSlot("links"), links),
      draft.links.length < MAX_LINKS
        ? h("button", { type: "button", "data-action": "add-link" },
          `Add link ${draft.links.length + 1} on top`)
        : h("p", { class: "hint" }, `Up to ${MAX_LINKS} links.`)),
      h("section", { class: "sheet-section", "data-section": "drive",
        "aria-labelledby": "sec-drive" },
      h("h3", { id: "sec-drive", class: "visually-hidden" }, "Drive"), driveGroup(draft)),
      h("section", { class: "sheet-section", "data-section": "limits",
        "aria-labelledby": "sec-limits" },
      h("h3", { id: "sec-limits", class: "visually-hidden" }, "Limits"), limitsGroup(draft)));
  }

  /** Move focus to the control (or group) at `path`, if it is on the sheet. */
  function focus(path) {
    if (!path) return;
    const target = root.querySelector(`[data-path="${CSS.escape(path)}"]`)
      || root.querySelector(`[data-msg-path="${CSS.escape(path)}"]`);
    if (!target) return;
    if (!target.matches("input, select, textarea, button")) target.setAttribute("tabindex", "-1");
    target.focus();
    target.scrollIntoView({ block: "nearest" });
  }

  /** The nearest slot for a path: the field itself, else its group, else the sheet's list. */
  function slotFor(path) {
    for (let p = path; p; p = parentPath(p)) {
      const holder = root.querySelector(`[data-msg-path="${CSS.escape(p)}"]`);
      if (holder && !holder.closest("[hidden]")) return holder;
    }
    return null;
  }

  /** Show problems (and warnings) beside their fields; returns how many found no field. */
  function showProblems(problems = [], warnings = []) {
    for (const msg of root.querySelectorAll(".msg")) {
      msg.replaceChildren();
      msg.hidden = true;
      msg.classList.remove("is-problem", "is-warning");
    }
    for (const bad of root.querySelectorAll("[aria-invalid]")) bad.removeAttribute("aria-invalid");
    const list = root.querySelector("#sheet-problems");
    const items = [];
    const entries = [
      ...problems.map((p) => ({ ...p, kind: "problem" })),
      ...warnings.map((p) => ({ ...p, kind: "warning" })),
    ];
    for (const entry of entries) {
      const holder = slotFor(entry.path);
      if (holder) {
        const msg = holder.querySelector(":scope > .msg");
        msg.append(h("span", { class: "msg-line" },
          entry.kind === "problem" ? "Problem: " : "Note: ", entry.message));
        msg.hidden = false;
        msg.classList.add(entry.kind === "problem" ? "is-problem" : "is-warning");
        if (entry.kind === "problem") {
          const control = holder.querySelector(":scope > input, :scope > select, :scope > textarea");
          if (control) control.setAttribute("aria-invalid", "true");
        }
      }
      if (entry.kind === "problem" || !holder) items.push({ entry, placed: Boolean(holder) });
    }
    replaceChildren(list.querySelector("ul"), items.map(({ entry, placed }) => h("li",
      { class: entry.kind === "problem" ? "is-problem" : "is-warning" },
      placed
        ? h("button", { type: "button", class: "link-button", "data-goto": entry.path },
          describePath(entry.path))
        : h("strong", {}, entry.path === "(rig)" ? "Rig" : describePath(entry.path)),
      ": ", entry.message, " ", h("code", {}, entry.path))));
    list.hidden = items.length === 0;
    return items.filter((i) => !i.placed).length;
  }

  root.addEventListener("click", (event) => {
    const go = event.target.closest("button[data-goto]");
    if (go) focus(go.dataset.goto);
  });

  /** A point picked on the map becomes the operating point: typed into the sheet like an edit. */
  function typeOperatingPoint({ speed_rpm, stroke_m }) {
    const put = (path, text) => {
      const input = root.querySelector(`[data-path="${path}"]`);
      if (!input) return;
      input.value = text;
      input.dispatchEvent(new Event("input", { bubbles: true }));
    };
    put("drive.speed_rpm", `${speed_rpm} rpm`);
    if (stroke_m === undefined) return;
    put("drive.stroke_m", isImperial() ? `${Number((stroke_m / INCH_M).toFixed(6))} in`
      : `${Number((stroke_m * 1000).toFixed(6))} mm`);
  }

  return { render, showProblems, focus, typeOperatingPoint };
}
