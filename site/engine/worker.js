// Shakestill worker: hosts Pyodide and answers the page's requests through
// shakestill.bridge.handle (JSON in, JSON out). A module worker (Pyodide 314
// refuses classic workers). The served site loads it as it is. Where the
// host cannot serve files the usual way, it sets globalThis.shakestillHost
// before this module runs: {prepare() -> base URL of the site's files, once
// they can be fetched; pyodideOptions: options for loadPyodide, such as
// createPyodideModule (Pyodide's Emscripten module, handed over directly);
// snapshotStore, set by prepare where the host keeps snapshots (site/engine/snapshot.js)}.
// The single-file build does (build_scripts/offline_worker.js), and so does
// the Node.js test runner (tests/pyodide_run.mjs).
//
// Protocol (DEVELOPERS.md): page -> worker {id, op, ...fields} or {id, cancel: true};
// worker -> page {type: "boot", stage, fraction}, {type: "ready", version},
// {type: "boot-failed", message}, {id, type: "progress", fraction, message},
// {id, type: "result", reply}, {id, type: "error", message}.

import { loadPyodide } from "../pyodide/pyodide.mjs";
import { findSnapshot, restoreOptions, snapshotStore, storeSnapshot, takeSnapshot } from "./snapshot.js";

// Pyodide packages loaded from the shipped lock file before the core. loadPyodide's
// `packages` fetches them while Python itself starts, not after.
const PACKAGES = ["micropip", "packaging"];

const queue = []; // requests received and not started yet, oldest first
let state = "booting"; // "booting" | "ready" | "failed"
let failure = "";
let bridge = null;
let busy = false;
// How Python started ("plain" or "snapshot") and the start-up's notes, sent with "ready".
let started = "plain";
const bootLog = [];
const note = (words) => bootLog.push(words);
// {pyodide, store, key} while this visit should leave a snapshot for the next one.
let snapshotDue = null;
let lastWork = 0;
// Quiet time after the last request before the snapshot is taken (it holds Python ~0.5 s).
const SNAPSHOT_IDLE_MS = 1000;

const post = (message) => self.postMessage(message);
const stage = (words, fraction) => post({ type: "boot", stage: words, fraction });
// Named moments of the start-up on the worker's performance timeline, for
// bench/bench_page_load.py's phase table (a mark costs microseconds).
const mark = (name) => performance.mark(`shakestill:${name}`);
mark("worker");

class BootError extends Error {}

// Starting Python takes seconds; this long without an answer means a download has hung.
const LOAD_TIMEOUT_MS = 120_000;

/** Resolves if the file can be fetched (its body is not read), else rejects with why. */
async function reachable(url) {
  const response = await fetch(url);
  response.body?.cancel();
  if (!response.ok) throw new Error(`HTTP ${response.status} for ${url.pathname.split("/").pop()}`);
}

function withinTime(ms, words, promise) {
  let timer;
  const late = new Promise((_, reject) => { timer = setTimeout(() => reject(new Error(words)), ms); });
  return Promise.race([promise, late]).finally(() => clearTimeout(timer));
}

// A Python error's message is its whole traceback; its last line says what happened.
function describe(error) {
  const text = String((error && error.message) || error).trim();
  return error && error.type ? text.split("\n").pop() : text;
}

// Runs one start-up step; a failure names the step in words.
async function step(words, action) {
  try {
    return await action();
  } catch (error) {
    if (error instanceof BootError) throw error;
    throw new BootError(`Could not ${words}: ${describe(error)}`);
  }
}

async function boot() {
  const host = globalThis.shakestillHost || {};
  let base;
  if (host.prepare) {
    stage("unpacking the embedded files", 0);
    base = new URL(await step("unpack the files embedded in the page", () => host.prepare()));
  } else {
    base = new URL("../", import.meta.url);  // this module sits in engine/
  }
  mark("files");
  // Python starts at once; build-info.json (needed only to install the core) and the look
  // at the WebAssembly file run beside it, not before it.
  const info = step("read build-info.json", async () => {
    const response = await fetch(new URL("build-info.json", base));
    if (!response.ok) throw new Error(`HTTP ${response.status}`);
    return response.json();
  });

  const indexURL = new URL("pyodide/", base).href;
  const store = snapshotStore(host, base);
  const keep = store !== null;
  if (keep) {
    const version = await restore(store, indexURL, info, host.pyodideOptions);
    if (version) return version;
  }
  stage("loading Python", 0.05);
  const problems = [];
  const starting = step("start Python (Pyodide)", () =>
    withinTime(LOAD_TIMEOUT_MS, "Python did not start within two minutes (a file may have stopped downloading)",
      loadPyodide({
        indexURL,
        packages: PACKAGES,
        stdout: () => {},
        stderr: (text) => problems.push(text),
        ...(keep ? { _makeSnapshot: true } : {}),
        ...host.pyodideOptions,
      })),
  );
  // loadPyodide never settles when its WebAssembly fails to download, so look as well.
  const looked = host.prepare ? null
    : step("download Python (pyodide.asm.wasm)", () => reachable(new URL("pyodide.asm.wasm", indexURL)));
  const [pyodide, { name, version: built, wheel, snapshot }] = await Promise.all([starting, info, looked]);

  mark("python");
  stage("loading micropip", 0.7);
  // loadPyodide only logs a package that failed to load (a download, a hash mismatch).
  await step("load micropip and packaging", () => requireLoaded(pyodide, PACKAGES, problems));

  mark("micropip");
  stage("installing the core", 0.8);
  // micropip finds the core in the shipped lock file, so loadPackage fetches
  // the wheel from the site's own folder and checks its sha256.
  await step(`install ${wheel}`, async () => {
    const micropip = pyodide.pyimport("micropip");
    try {
      await micropip.install(name, { index_urls: [] });
    } finally {
      micropip.destroy();
    }
    requireLoaded(pyodide, [name], problems);
  });

  mark("installed");
  stage("starting the core", 0.9);
  return step("import the core", () => {
    const core = pyodide.pyimport("shakestill");
    const version = core.__version__;
    core.destroy();
    if (version !== built) {
      throw new Error(`it reports version ${version}, the site was built with ${built}`);
    }
    bridge = pyodide.pyimport("shakestill.bridge");
    mark("imported");
    // The private API may be gone in another Pyodide: then there is simply no snapshot.
    if (keep && typeof pyodide.makeMemorySnapshot === "function") snapshotDue = { pyodide, store, key: snapshot };
    return version;
  });
}

/**
 * Starts Python from this browser's snapshot of the same build; the core's version answer
 * proves it works. Returns the version, or "" after noting why a plain start follows (a
 * snapshot that failed is deleted).
 */
async function restore(store, indexURL, info, hostOptions) {
  let found;
  try {
    found = await findSnapshot(store, info, note);
  } catch (error) {
    note(`The snapshot store could not be read (${describe(error)}); plain start.`);
    return "";
  }
  if (!found) return "";
  found.bytes.catch(() => {}); // a damaged entry rejects inside loadPyodide, handled below
  stage("restoring Python from this browser's copy", 0.1);
  try {
    const pyodide = await withinTime(LOAD_TIMEOUT_MS, "the snapshot did not start within two minutes",
      loadPyodide({ indexURL, stdout: () => {}, stderr: () => {}, ...restoreOptions(found.bytes), ...hostOptions }));
    mark("python");
    const { version: built } = await info;
    const restored = pyodide.pyimport("shakestill.bridge");
    const answer = JSON.parse(restored.handle('{"op": "version"}'));
    if (answer.ok !== true || answer.version !== built) {
      throw new Error(`it answers ${JSON.stringify(answer)}, the site was built with ${built}`);
    }
    bridge = restored;
    mark("imported");
    started = "snapshot";
    note("Started from the snapshot this browser keeps.");
    return built;
  } catch (error) {
    await found.drop().catch(() => {});
    note(`The stored snapshot did not start (${describe(error)}); deleted it, plain start.`);
    return "";
  }
}

// Once the page has its first result and has been quiet a moment, leave a snapshot behind.
function snapshotWhenIdle() {
  if (!snapshotDue) return;
  const wait = lastWork + SNAPSHOT_IDLE_MS - performance.now();
  if (busy || queue.length || wait > 0) {
    setTimeout(snapshotWhenIdle, Math.max(wait, 100));
    return;
  }
  const { pyodide, store, key } = snapshotDue;
  snapshotDue = null;
  let bytes;
  try {
    bytes = takeSnapshot(pyodide);
  } catch (error) {
    post({ type: "snapshot", state: "failed", message: describe(error) });
    return;
  }
  storeSnapshot(store, key, bytes).then(
    (packed) => post({ type: "snapshot", state: "stored", bytes: bytes.length, packed }),
    (error) => post({ type: "snapshot", state: "failed", message: describe(error) }),
  );
}

function requireLoaded(pyodide, names, errors) {
  const missing = names.filter((name) => !(name in pyodide.loadedPackages));
  if (missing.length) {
    const detail = errors.length ? ` (${errors.join(" ")})` : "";
    throw new Error(`${missing.join(", ")} did not load${detail}`);
  }
}

function receive(message) {
  if (!message || typeof message !== "object") return;
  if (message.cancel) {
    cancel(message.id);
    return;
  }
  if (typeof message.op !== "string") {
    post({ id: message.id, type: "error", message: "A request needs an op, a string such as \"check\"." });
    return;
  }
  if (state === "failed") {
    refuse(message, failure);
    return;
  }
  // A newer request of the same op makes an older one that has not started pointless
  // (for the steps of a job: of the same job; two jobs may run side by side).
  for (const old of queue.filter((queued) => queued.op === message.op && queued.job === message.job)) {
    drop(old, `Replaced by a newer ${message.op} request before it started.`);
  }
  queue.push(message);
  pump();
}

function cancel(id) {
  const queued = queue.find((request) => request.id === id);
  if (queued) drop(queued, "Cancelled before it started.");
}

function drop(request, words) {
  queue.splice(queue.indexOf(request), 1);
  post({ id: request.id, type: "error", message: words, cancelled: true });
}

function refuse(request, words) {
  post({ id: request.id, type: "error", message: words });
}

// Start the next request on a fresh task, so a cancel or a newer request
// already waiting in the message queue is seen before the older one starts.
function pump() {
  if (busy || state !== "ready" || !queue.length) return;
  busy = true;
  setTimeout(() => {
    const request = queue.shift();
    if (request) run(request);
    busy = false;
    pump();
  }, 0);
}

/** Whether Python still answers after an error (a fatal error leaves it unusable). */
function alive() {
  try {
    return JSON.parse(bridge.handle('{"op": "version"}')).ok === true;
  } catch {
    return false;
  }
}

function run(request) {
  const { id, ...fields } = request;
  post({ id, type: "progress", fraction: 0, message: "started" });
  let reply;
  try {
    reply = JSON.parse(bridge.handle(JSON.stringify(fields)));
  } catch (error) {
    const message = `The core failed on ${request.op}: ${describe(error)}`;
    if (alive()) {
      post({ id, type: "error", message });
    } else {
      // Python itself died (a fatal error in Pyodide): nothing more can run in this worker.
      // The page starts a fresh one and keeps the user's rig; see worker-client.js.
      state = "failed";
      failure = message;
      post({ id, type: "fatal", op: request.op, message });
    }
    return;
  }
  if (request.op === "check" && !performance.getEntriesByName("shakestill:check").length) mark("check");
  post({ id, type: "result", reply });
  lastWork = performance.now();
  if (request.op === "check" && snapshotDue) setTimeout(snapshotWhenIdle, SNAPSHOT_IDLE_MS);
}

// Start last: boot() runs up to loadPyodide at once, so every declaration above must exist.
self.addEventListener("message", (event) => receive(event.data));
boot().then(
  (version) => {
    state = "ready";
    post({ type: "ready", version, started, log: bootLog });
    pump();
  },
  (error) => {
    state = "failed";
    failure = error instanceof BootError ? error.message : `Start-up failed: ${describe(error)}`;
    post({ type: "boot-failed", message: failure });
    while (queue.length) refuse(queue.shift(), failure);
  },
);
