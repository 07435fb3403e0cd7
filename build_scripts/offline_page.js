// Prelude of dist/shakestill-offline.html (a classic script, first in <head>,
// so it runs before the page's own modules). build_scripts/offline.py fills
// in the markers. The page's files live in one gzip archive held as base64
// in a non-running script element. This script unpacks it on first use,
// answers the page's fetches of those files, and turns
// `new Worker(".../worker.js", {type: "module"})` into the bundled worker
// started from a data: URL, the one kind of worker a page opened from disk
// may start.
(() => {
  const INDEX = [/* @INDEX@ */]; // [{path, type, size}] in archive order
  const ELEMENT = "@ELEMENT@";
  const WORKER_BUNDLE = "@BUNDLE@"; // path of the bundled worker in the archive
  const base = new URL("./", location.href).href;
  const paths = new Set(INDEX.map((entry) => entry.path));
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

  // All files as one ArrayBuffer plus where each one sits in it.
  function unpack() {
    unpacked ??= (async () => {
      const element = document.getElementById(ELEMENT);
      if (!element) throw new Error("the page has lost its embedded files");
      const packed = decodeBase64(element.textContent.trim());
      const stream = new Blob([packed]).stream().pipeThrough(new DecompressionStream("gzip"));
      const buffer = await new Response(stream).arrayBuffer();
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
    const { buffer, files } = await unpack();
    const file = files.get(path);
    const bytes = buffer.slice(file.offset, file.offset + file.size);
    return new Response(bytes, { headers: { "Content-Type": file.type } });
  };

  // A data: URL of the worker's code; only what a URL may not hold is escaped.
  function workerUrl(buffer, file) {
    const code = new TextDecoder().decode(new Uint8Array(buffer, file.offset, file.size));
    return "data:text/javascript," + code.replace(/[%#\s]/g, encodeURIComponent);
  }

  // Stands for the worker at once (a constructor cannot wait for the
  // unpacking) and passes messages both ways once the real one runs.
  class EmbeddedWorker extends EventTarget {
    constructor(options) {
      super();
      this.onmessage = null;
      this.onerror = null;
      this.onmessageerror = null;
      this.queue = [];
      this.worker = null;
      this.closed = false;
      unpack().then(
        ({ buffer, files }) => this.start(buffer, files, options),
        (error) => this.emit("message", { type: "boot-failed",
          message: `Could not unpack the files embedded in the page: ${error.message || error}` }),
      );
    }

    start(buffer, files, options) {
      if (this.closed) return;
      const url = workerUrl(buffer, files.get(WORKER_BUNDLE));
      const worker = new NativeWorker(policy.createScriptURL(url), { type: "module", name: options.name });
      worker.addEventListener("message", (event) => this.emit("message", event.data));
      worker.addEventListener("messageerror", () => this.emit("messageerror"));
      worker.addEventListener("error", (event) => {
        event.preventDefault();
        this.emit("error", undefined, event.message);
      });
      // A copy of every file, so a worker started later gets them too.
      worker.postMessage({ type: "shakestill-embedded", base, buffer: buffer.slice(0),
                           index: [...files.values()] });
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
  window.Worker = function Worker(url, options = {}) {
    const target = new URL(String(url), location.href);
    if (target.pathname.endsWith("/worker.js")) return new EmbeddedWorker(options);
    return new NativeWorker(url, options);
  };
})();
