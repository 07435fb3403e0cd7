// The stability map in words: a short table of where each position holds, row by row, and
// the edges found straight up the side, from the chart data the core sent with the picture.
// It is the map's text alternative (screen readers, and anyone who wants the numbers).

import { h, replaceChildren } from "../lib/dom.js";
import { lengthShown } from "../state/units.js";
import { num } from "./report-view.js";

const SHOWN_ROWS = 8; // enough to see the shape; the CSV has every row
const G0 = 9.80665; // standard gravity, m/s² (CGPM 1901): the side axis in g
const NAMES = { inverted: "Upright holds", hanging: "Hanging holds" };

/** The side axis value in the units on show: "12.5 mm", "0.49 in" or "3.2 g". */
function sideText(chart, y) {
  if (chart.y_axis !== "stroke") return `${num(y / G0, 3)} g`;
  const [value, unit] = lengthShown(y);
  return `${num(value, 3)} ${unit}`;
}

function intervals(list) {
  if (!Array.isArray(list) || !list.length) return "nowhere on this row";
  return list.map(([a, b]) => `${num(a, 4)} to ${num(b, 4)} rpm`).join("; ");
}

/** Evenly spread rows, bottom to top, at most SHOWN_ROWS of them. */
function someRows(rows) {
  const sorted = [...rows].sort((a, b) => a.y - b.y);
  if (sorted.length <= SHOWN_ROWS) return sorted;
  const step = (sorted.length - 1) / (SHOWN_ROWS - 1);
  return Array.from({ length: SHOWN_ROWS }, (_, k) => sorted[Math.round(k * step)]);
}

function edgeList(chart) {
  const items = [];
  for (const [eq, edges] of Object.entries(chart.column_edges || {})) {
    for (const [speed, y, gained] of (edges || []).slice(0, SHOWN_ROWS)) {
      items.push(h("li", { "data-eq": eq }, `${eq === "inverted" ? "Upright" : "Hanging"}: at `
        + `${num(speed, 4)} rpm, ${gained ? "holds above" : "lost above"} ${sideText(chart, y)}`));
    }
  }
  return items.length ? h("ul", { class: "map-edges" }, items) : null;
}

/** Fill ``holder`` with the table of ``chart`` (the core's chart data). */
export function showMapTable(holder, chart) {
  if (!chart || !Array.isArray(chart.rows) || !chart.rows.length) {
    replaceChildren(holder);
    return;
  }
  const eqs = Object.keys(NAMES).filter((eq) => chart.rows[0][eq]);
  const side = chart.y_axis === "stroke" ? "Stroke" : "Peak acceleration";
  replaceChildren(holder, h("details", { class: "map-table" },
    h("summary", {}, "The map as a table"),
    h("table", {},
      h("caption", {}, `Where each position holds, on ${Math.min(chart.rows.length, SHOWN_ROWS)} of the `
        + `map's ${chart.rows.length} rows${chart.complete ? "" : " (map still being drawn)"}`),
      h("thead", {}, h("tr", {}, h("th", { scope: "col" }, side),
        eqs.map((eq) => h("th", { scope: "col" }, NAMES[eq])))),
      h("tbody", {}, someRows(chart.rows).map((row) => h("tr", { "data-y": row.y },
        h("th", { scope: "row" }, sideText(chart, row.y)),
        eqs.map((eq) => h("td", { "data-eq": eq }, intervals(row[eq].stable_intervals_rpm))))))),
    edgeList(chart) ? h("p", { class: "hint" }, "Edges found straight up the side:") : null,
    edgeList(chart)));
}
