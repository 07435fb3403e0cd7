// Prelude of dist/shakestill-offline.html (a classic script in <head>, after the
// worker's own element and before the page's modules). build_scripts/offline.py fills
// in the markers. The worker bundle (Pyodide's JavaScript with site/engine/worker.js)
// is gzipped in its own element ahead of this script, so the worker starts here, while
// the browser still parses the page and its big archive; the page's other files live
// in one gzip archive held as base64 in a non-running element at the end of <body>.
// This script unpacks that archive on first use, posts its files to every worker it
// starts, answers the page's fetches of those files, and turns
// `new Worker(".../worker.js", {type: "module"})` into the bundled worker started
// from a data: URL, the one kind of worker a page opened from disk may start (the
// first such call adopts the worker started here).
(() => {
  const INDEX = [/* @INDEX@ */]; // [{path, type, size}] in archive order
  const EARLY = {/* @EARLY@ */}; // {path: {type, text}}: small files the page reads at once
  const ELEMENT = "@ELEMENT@";
  const WORKER_ELEMENT = "@WORKER@"; // the gzipped worker bundle, parsed before this script
  const base = new URL("./", location.href).href;
  const paths = new Set([...INDEX.map((entry) => entry.path), ...Object.keys(EARLY)]);
  // The page's Trusted Types policy list names this one (offline.py edits the CSP).
  const policy = self.trustedTypes
    ? trustedTypes.createPolicy("shakestill-offline", {
        createScriptURL: (url) => {
          if (!url.startsWith("data:text/javascript,")) throw new TypeError("not the embedded worker");
          return url;
        },
      })
    : { createScriptURL: (url) => url };
  let unpacked = null;

  function decodeBase64(text) {
    if (Uint8Array.fromBase64) return Uint8Array.fromBase64(text);
    const binary = atob(text);
    const bytes = new Uint8Array(binary.length);
    for (let i = 0; i < binary.length; i++) bytes[i] = binary.charCodeAt(i);
    return bytes;
  }

  async function gunzip(elementId) {
    const element = document.getElementById(elementId);
    if (!element) throw new Error("the page has lost its embedded files");
    const stream = new Blob([decodeBase64(element.textContent.trim())]).stream()
      .pipeThrough(new DecompressionStream("gzip"));
    return new Response(stream).arrayBuffer();
  }

  // The archive sits at the end of <body>: the parser must have read all of it first
  // (the worker starts earlier, from its own element above this script).
  const parsed = document.readyState === "loading"
    ? new Promise((done) => document.addEventListener("DOMContentLoaded", done, { once: true }))
    : Promise.resolve();

  // All files as one ArrayBuffer plus where each one sits in it.
  function unpack() {
    unpacked ??= (async () => {
      await parsed;
      const buffer = await gunzip(ELEMENT);
      const files = new Map();
      let offset = 0;
      for (const entry of INDEX) {
        files.set(entry.path, { ...entry, offset });
        offset += entry.size;
      }
      if (offset !== buffer.byteLength) throw new Error("the embedded files are damaged");
      return { buffer, files };
    })();
    return unpacked;
  }

  function embeddedPath(input) {
    const url = new URL(input instanceof Request ? input.url : String(input), location.href);
    url.hash = "";
    url.search = "";
    if (!url.href.startsWith(base)) return null;
    const path = decodeURIComponent(url.href.slice(base.length));
    return paths.has(path) ? path : null;
  }

  const nativeFetch = window.fetch.bind(window);
  window.fetch = async (input, init) => {
    const path = embeddedPath(input);
    if (path === null) return nativeFetch(input, init);
    if (Object.hasOwn(EARLY, path)) {
      return new Response(EARLY[path].text, { headers: { "Content-Type": EARLY[path].type } });
    }
    const { buffer, files } = await unpack();
    const file = files.get(path);
    const bytes = buffer.slice(file.offset, file.offset + file.size);
    return new Response(bytes, { headers: { "Content-Type": file.type } });
  };

  // A data: URL of the worker's code; only what a URL may not hold is escaped.
  function workerUrl(buffer) {
    const code = new TextDecoder().decode(buffer);
    return "data:text/javascript," + code.replace(/[%#\s]/g, encodeURIComponent);
  }

  // The engine's snapshots for a quick second start (site/engine/snapshot.js): a data:
  // worker has no storage, so this page keeps them in its own Cache Storage (Chromium gives
  // a page opened from disk one), hands them over with the files and stores what it is sent.
  // null where the page has no Cache Storage: the engine then always starts plainly.
  const SNAPSHOTS = "snapshot-of-shakestill-v1";
  const snapshotUrl = (key) => `https://snapshot.shakestill.invalid/${encodeURIComponent(key)}`;

  async function keptSnapshots() {
    if (typeof caches === "undefined") return null;
    try {
      const cache = await caches.open(SNAPSHOTS);
      return await Promise.all((await cache.keys()).map(async (request) => ({
        key: decodeURIComponent(request.url.split("/").pop()),
        blob: await (await cache.match(request)).blob(),
      })));
    } catch {
      return null;
    }
  }

  async function keepSnapshot({ op, key, blob }) {
    const cache = await caches.open(SNAPSHOTS);
    if (op === "put") await cache.put(snapshotUrl(key), new Response(blob));
    else await cache.delete(snapshotUrl(key));
  }

  function answerKeep(worker, request) {
    keepSnapshot(request).then(
      () => worker.postMessage({ type: "shakestill-snapshot-done", id: request.id }),
      (error) => worker.postMessage({ type: "shakestill-snapshot-done", id: request.id,
        error: String((error && error.message) || error) }),
    );
  }

  // Starts the bundled worker, posts it the files once unpacked, and holds what it says
  // until a page-side EmbeddedWorker takes it (port.sink).
  function launch(name) {
    const port = { sink: null, held: [] };
    const deliver = (...event) => (port.sink ? port.sink(...event) : port.held.push(event));
    port.started = gunzip(WORKER_ELEMENT).then((code) => {
      const worker = new NativeWorker(policy.createScriptURL(workerUrl(code)), { type: "module", name });
      worker.addEventListener("message", (event) => {
        if (event.data && event.data.type === "shakestill-snapshot-keep") answerKeep(worker, event.data);
        else deliver("message", event.data);
      });
      worker.addEventListener("messageerror", () => deliver("messageerror"));
      worker.addEventListener("error", (event) => {
        event.preventDefault();
        deliver("error", undefined, event.message);
      });
      // A copy of every file, so a worker started later gets them too.
      Promise.all([unpack(), keptSnapshots()]).then(
        ([{ buffer, files }, snapshots]) => worker.postMessage({ type: "shakestill-embedded", base,
          buffer: buffer.slice(0), index: [...files.values()], snapshots }),
        (error) => worker.postMessage({ type: "shakestill-embedded",
          error: `Could not unpack the files embedded in the page: ${error.message || error}` }),
      );
      return worker;
    });
    return port;
  }

  // Stands for the worker at once (a constructor cannot wait for the
  // unpacking) and passes messages both ways once the real one runs.
  class EmbeddedWorker extends EventTarget {
    constructor(port) {
      super();
      this.onmessage = null;
      this.onerror = null;
      this.onmessageerror = null;
      this.queue = [];
      this.worker = null;
      this.closed = false;
      // After the caller has added its listeners: what the worker said so far, then the rest.
      setTimeout(() => {
        port.sink = (...event) => this.emit(...event);
        for (const event of port.held.splice(0)) this.emit(...event);
      }, 0);
      port.started.then(
        (worker) => this.adopt(worker),
        (error) => setTimeout(() => this.emit("message", { type: "boot-failed",
          message: `Could not unpack the engine embedded in the page: ${error.message || error}` }), 0),
      );
    }

    adopt(worker) {
      if (this.closed) {
        worker.terminate();
        return;
      }
      for (const message of this.queue) worker.postMessage(message);
      this.queue = null;
      this.worker = worker;
    }

    emit(type, data, message) {
      const event = type === "error"
        ? new ErrorEvent("error", { message: message || "the engine worker failed", cancelable: true })
        : new MessageEvent(type, { data });
      const handler = this["on" + type];
      if (typeof handler === "function") handler.call(this, event);
      this.dispatchEvent(event);
    }

    postMessage(message, transfer) {
      if (this.worker) this.worker.postMessage(message, transfer);
      else if (this.queue) this.queue.push(message);
    }

    terminate() {
      this.closed = true;
      if (this.worker) this.worker.terminate();
      this.queue = null;
    }
  }

  const NativeWorker = window.Worker;
  // The engine's start-up takes seconds and needs nothing from the page: begin it now.
  let early = launch("shakestill-engine");
  window.Worker = function Worker(url, options = {}) {
    const target = new URL(String(url), location.href);
    if (!target.pathname.endsWith("/worker.js")) return new NativeWorker(url, options);
    const port = early || launch(options.name);
    early = null;
    return new EmbeddedWorker(port);
  };
})();
