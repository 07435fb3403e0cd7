// Small DOM helpers. Text always goes in as text nodes (never parsed as HTML),
// so nothing a user types or loads can become markup.

/**
 * Make an element: h("p", {class: "note", id: "x"}, "text", childNode, ...).
 * Props: class, text, hidden, on: {event: handler}, anything else is an attribute
 * (false/null/undefined leave it out, true sets it empty).
 */
export function h(tag, props = {}, ...children) {
  const node = document.createElement(tag);
  for (const [key, value] of Object.entries(props)) {
    if (value === false || value === null || value === undefined) continue;
    if (key === "on") {
      for (const [event, handler] of Object.entries(value)) node.addEventListener(event, handler);
    } else if (key === "text") {
      node.textContent = String(value);
    } else if (key === "hidden") {
      node.hidden = Boolean(value);
    } else {
      node.setAttribute(key, value === true ? "" : String(value));
    }
  }
  append(node, children);
  return node;
}

/** Append children: nodes as they are, strings and numbers as text; arrays are flattened. */
export function append(node, children) {
  for (const child of children.flat(Infinity)) {
    if (child === null || child === undefined || child === false) continue;
    node.append(child instanceof Node ? child : document.createTextNode(String(child)));
  }
  return node;
}

/** Replace all children of a node. */
export function replaceChildren(node, ...children) {
  node.replaceChildren();
  return append(node, children);
}

/** An id-safe slug of a JSON path: "links[0].length_m" -> "links-0-length_m". */
export function slug(path) {
  return path.replace(/[^A-Za-z0-9_]+/g, "-").replace(/^-|-$/g, "") || "rig";
}
