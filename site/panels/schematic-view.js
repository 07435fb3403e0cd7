// The scale sketch: SVG drawn by the core's `schematic` op, inserted as SVG
// nodes (DOMParser + importNode), never as HTML.

import { policy } from "../lib/trusted.js";

/** Parse the core's SVG text into a node ready to insert into this document. */
export function svgNode(svgText, label) {
  const doc = new DOMParser().parseFromString(policy.createHTML(svgText), "image/svg+xml");
  const root = doc.documentElement;
  if (doc.getElementsByTagName("parsererror").length || root.localName !== "svg") {
    throw new Error("the engine's sketch is not readable SVG");
  }
  // Defence in depth: the core's SVG is trusted, but nothing in it may run.
  for (const bad of root.querySelectorAll("script, foreignObject")) bad.remove();
  for (const node of [root, ...root.querySelectorAll("*")]) {
    for (const attr of [...node.attributes]) {
      if (/^on/i.test(attr.name) || /^\s*javascript:/i.test(attr.value)) node.removeAttribute(attr.name);
    }
  }
  const svg = document.importNode(root, true);
  svg.setAttribute("role", "img");
  const title = svg.querySelector("title");
  svg.setAttribute("aria-label", title ? title.textContent : label);
  svg.removeAttribute("width");
  svg.removeAttribute("height");
  return svg;
}

/** Put a new sketch in place of the old one. */
export function showSchematic(holder, svgText) {
  holder.replaceChildren(svgNode(svgText, "Scale sketch of the rig"));
}
