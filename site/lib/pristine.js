// An element as the page's HTML first gave it (its attributes and children), kept so the
// automated tests' reset (app.js `shakestillResetForTests`) can put a panel's output back as on
// a first visit. Only for elements a panel writes into: their children hold no listeners of
// the page's own (those sit on the element itself or on the controls around it).

/** Keep `elements` as they are now; the function returned puts them back so. */
export function keepPristine(elements) {
  const kept = [...elements].filter(Boolean).map((el) => ({
    el,
    attributes: [...el.attributes].map((a) => [a.name, a.value]),
    children: [...el.childNodes].map((node) => node.cloneNode(true)),
  }));
  return () => {
    for (const { el, attributes, children } of kept) {
      for (const a of [...el.attributes]) el.removeAttribute(a.name);
      for (const [name, value] of attributes) el.setAttribute(name, value);
      el.replaceChildren(...children.map((node) => node.cloneNode(true)));
    }
  };
}
