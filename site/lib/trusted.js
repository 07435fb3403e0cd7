// The page's one Trusted Types policy (the CSP demands one for every HTML and
// script-URL sink). Only two things pass it: the core's SVG sketch, which is
// parsed as XML by DOMParser, and same-origin or blob: script URLs for the
// engine worker and the service worker. User text never goes near it.

function sameOriginOrBlob(url) {
  const parsed = new URL(url, document.baseURI);
  const here = new URL(document.baseURI);
  if (parsed.protocol === "blob:") return parsed.href;
  if (parsed.protocol === here.protocol && parsed.origin === here.origin) return parsed.href;
  throw new TypeError(`script address not allowed: ${url}`);
}

const rules = {
  createHTML: (svgText) => svgText,
  createScriptURL: sameOriginOrBlob,
};

export const policy = globalThis.trustedTypes?.createPolicy
  ? globalThis.trustedTypes.createPolicy("shakestill", rules)
  : rules;
