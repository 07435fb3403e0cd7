// Saving what the page shows: a plot or map as SVG or PNG, and its numbers as CSV. The
// pictures are the core's SVG as drawn (the moving cursor left out); PNG is that SVG
// rasterised at twice its size on white.

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

/** A CSV file of a header row and data rows (numbers written in full, as JSON does). */
export function saveCsv(name, header, rows) {
  const lines = [header, ...rows].map((row) => row.map(cell).join(","));
  download(`${name}.csv`, `${lines.join("\n")}\n`, "text/csv");
}

/**
 * Buttons marked `data-save-from="<holder id>"` and `data-save-as="svg"` or `"png"` save the
 * picture in that holder (its first svg) as ``data-save-name``; each is enabled while its
 * holder shows a picture.
 */
export function wireSaveButtons(root = document) {
  const buttons = [...root.querySelectorAll("button[data-save-from]")];
  const pictureIn = (button) => document.getElementById(button.dataset.saveFrom)?.querySelector("svg");
  const refresh = () => {
    for (const button of buttons) button.disabled = !pictureIn(button);
  };
  for (const button of buttons) {
    button.addEventListener("click", () => {
      const svg = pictureIn(button);
      if (!svg) return;
      if (button.dataset.saveAs === "png") savePng(svg, button.dataset.saveName);
      else saveSvg(svg, button.dataset.saveName);
    });
    const holder = document.getElementById(button.dataset.saveFrom);
    if (holder) new MutationObserver(refresh).observe(holder, { childList: true, subtree: true });
  }
  refresh();
}
