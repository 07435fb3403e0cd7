// First module of the single file's worker bundle (offline.py bundles it with
// site/engine/worker.js and Pyodide). The worker runs from a data: URL, so it can
// fetch nothing itself: the page posts it every embedded file first, and
// this module answers every fetch from those bytes (nothing reaches the
// network or the disk) and hands Pyodide its Emscripten module directly.
import createPyodideModule from "shakestill-pyodide-asm";

let received;
const files = new Promise((resolve) => {
  received = resolve;
});

// The page's files message comes first; site/engine/worker.js never sees it.
self.addEventListener("message", function first(event) {
  const data = event.data;
  if (!data || data.type !== "shakestill-embedded") return;
  event.stopImmediatePropagation();
  self.removeEventListener("message", first);
  received(data);
});

globalThis.shakestillHost = {
  pyodideOptions: { createPyodideModule },
  snapshotStore: null,
  // Resolves to the base URL the embedded files are named under.
  async prepare() {
    const { base, buffer, index, error, snapshots } = await files;
    if (error) throw new Error(error);
    answerFetches(base, buffer, index);
    if (snapshots) this.snapshotStore = pageStore(snapshots);
    return base;
  },
};

// A worker from a data: URL has no storage of its own: the page keeps the snapshots
// (site/engine/snapshot.js) in its Cache Storage, sends the ones it has with the files
// ([{key, blob}]) and stores or deletes one when asked.
const asked = new Map();
let lastAsk = 0;
self.addEventListener("message", (event) => {
  const data = event.data;
  if (!data || data.type !== "shakestill-snapshot-done") return;
  event.stopImmediatePropagation();
  const settle = asked.get(data.id);
  asked.delete(data.id);
  if (data.error) settle?.reject(new Error(data.error));
  else settle?.resolve();
});

function askPage(op, key, blob) {
  return new Promise((resolve, reject) => {
    const id = ++lastAsk;
    asked.set(id, { resolve, reject });
    self.postMessage({ type: "shakestill-snapshot-keep", id, op, key, blob });
  });
}

function pageStore(snapshots) {
  return {
    entries: async () => snapshots.map(({ key, blob }) => ({
      key, read: async () => blob, remove: () => askPage("delete", key) })),
    put: (key, blob) => askPage("put", key, blob),
  };
}

function answerFetches(base, buffer, index) {
  const byUrl = new Map(index.map((file) => [new URL(file.path, base).href, file]));
  const nativeFetch = self.fetch.bind(self);
  self.fetch = async (input, init = {}) => {
    const url = new URL(input instanceof Request ? input.url : String(input), base);
    if (url.protocol === "data:") return nativeFetch(input, init);
    url.hash = "";
    url.search = "";
    const file = byUrl.get(url.href);
    if (!file) return new Response(`${url.href} is not embedded in this page`, { status: 404 });
    const bytes = new Uint8Array(buffer, file.offset, file.size);
    const integrity = init.integrity || (input instanceof Request && input.integrity);
    if (integrity) await checkIntegrity(bytes, integrity, file.path);
    return new Response(bytes.slice(), { headers: { "Content-Type": file.type } });
  };
}

// The check a browser makes for fetch(url, {integrity}): "sha256-<base64>".
// Pyodide asks for it with every package, from the lock file's sha256.
async function checkIntegrity(bytes, integrity, path) {
  const [algorithm, expected] = integrity.trim().split(/-(.*)/s);
  if (algorithm !== "sha256") throw new TypeError(`${path}: unsupported integrity ${algorithm}`);
  const digest = new Uint8Array(await crypto.subtle.digest("SHA-256", bytes));
  const actual = btoa(String.fromCharCode(...digest));
  if (actual !== expected) throw new TypeError(`${path}: sha256 does not match the lock file`);
}
