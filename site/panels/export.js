// Saving what the page shows: a plot or map as SVG or PNG, and its numbers as CSV. The
// pictures are the core's SVG as drawn (the moving cursor left out); PNG is that SVG
// rasterised at twice its size on white. Every panel saves through this one module: its
// buttons name the holder (data-save-from) and the panel registers the holder's CSV.

import { download } from "../state/rig-file.js";

const SVG_NS = "http://www.w3.org/2000/svg";
const PNG_SCALE = 2;

/** The SVG's text without the page's own interaction marks. */
export function svgText(svg) {
  const copy = svg.cloneNode(true);
  for (const mark of copy.querySelectorAll(".chart-cursor")) mark.remove();
  copy.setAttribute("xmlns", SVG_NS);
  return new XMLSerializer().serializeToString(copy);
}

export function saveSvg(svg, name) {
  download(`${name}.svg`, svgText(svg), "image/svg+xml");
}

export async function savePng(svg, name) {
  const box = svg.viewBox.baseVal;
  const width = Math.round((box && box.width) || svg.clientWidth);
  const height = Math.round((box && box.height) || svg.clientHeight);
  const url = URL.createObjectURL(new Blob([svgText(svg)], { type: "image/svg+xml" }));
  try {
    const image = new Image();
    image.src = url;
    await image.decode();
    const canvas = document.createElement("canvas");
    canvas.width = width * PNG_SCALE;
    canvas.height = height * PNG_SCALE;
    const paint = canvas.getContext("2d");
    paint.fillStyle = "#ffffff";
    paint.fillRect(0, 0, canvas.width, canvas.height);
    paint.drawImage(image, 0, 0, canvas.width, canvas.height);
    const png = await new Promise((done) => canvas.toBlob(done, "image/png"));
    download(`${name}.png`, png, "image/png");
  } finally {
    URL.revokeObjectURL(url);
  }
}

function cell(value) {
  const text = String(value ?? "");
  return /[",\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

/** CSV text of a header row and data rows (numbers written in full, as JSON does). */
export function csvText(header, rows) {
  const lines = [header, ...rows].map((row) => row.map(cell).join(","));
  return `${lines.join("\n")}\n`;
}

/** A CSV file of a header row and data rows. */
export function saveCsv(name, header, rows) {
  download(`${name}.csv`, csvText(header, rows), "text/csv");
}

// holder id -> () => {header, rows} | CSV text | null: the numbers behind what the holder shows
const CSV_SOURCES = new Map();

/** The panel showing pictures in ``holderId`` says where their numbers are. */
export function registerCsv(holderId, source) {
  CSV_SOURCES.set(holderId, source);
}

function csvOf(holderId) {
  const got = CSV_SOURCES.get(holderId)?.();
  if (!got) return null;
  return typeof got === "string" ? got : csvText(got.header, got.rows);
}

/**
 * Buttons marked `data-save-from="<holder id>"` and `data-save-as="svg"`, `"png"` or `"csv"`
 * save the picture in that holder (its first svg), or the numbers its panel registered, as
 * ``data-save-name``; each is enabled while there is something to save.
 */
export function wireSaveButtons(root = document) {
  const buttons = [...root.querySelectorAll("button[data-save-from]")];
  const pictureIn = (button) => document.getElementById(button.dataset.saveFrom)?.querySelector("svg");
  const ready = (button) => (button.dataset.saveAs === "csv"
    ? Boolean(pictureIn(button)) && csvOf(button.dataset.saveFrom) !== null : Boolean(pictureIn(button)));
  const refresh = () => {
    for (const button of buttons) button.disabled = !ready(button);
  };
  for (const button of buttons) {
    button.addEventListener("click", () => {
      const { saveAs, saveName, saveFrom } = button.dataset;
      if (saveAs === "csv") {
        const text = csvOf(saveFrom);
        if (text !== null) download(`${saveName}.csv`, text, "text/csv");
        return;
      }
      const svg = pictureIn(button);
      if (!svg) return;
      if (saveAs === "png") savePng(svg, saveName);
      else saveSvg(svg, saveName);
    });
    const holder = document.getElementById(button.dataset.saveFrom);
    if (holder) new MutationObserver(refresh).observe(holder, { childList: true, subtree: true });
  }
  refresh();
}
