// Runs the built site's own worker (dist/site/engine/worker.js) under Node.js and
// drives it with the worker message protocol, for tests/test_pyodide.py.
//
//   node tests/pyodide_run.mjs SITE_DIR < script.json
//
// script.json: {"batches": [[messages], ...], "timeout_s": number}. The
// first batch is posted at once, while the worker boots; each later one all
// together once the worker is ready and every request before it has had its
// result or error. Prints one JSON object: {"messages": [every message the
// worker posted, in order]}.
//
// Node is not a browser, so this stands in for what a worker has: a global
// scope with postMessage/addEventListener, and fetch of file: URLs (Pyodide
// itself reads its files with node:fs under Node).
import { readFileSync } from "node:fs";
import { readFile } from "node:fs/promises";
import { resolve } from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";

const site = resolve(process.argv[2] || "dist/site");
const script = JSON.parse(readFileSync(0, "utf8"));
const timeout = (script.timeout_s || 300) * 1000;

const messages = [];
const open = new Set(); // ids of requests without a final reply yet
let booted = null;
const bootDone = new Promise((done) => {
  booted = done;
});

const scope = new EventTarget();
scope.postMessage = (message) => {
  message = structuredClone(message);
  messages.push(message);
  if (message.type === "ready" || message.type === "boot-failed") booted(message);
  if (message.type === "result" || message.type === "error") open.delete(message.id);
};
globalThis.self = scope;

const nativeFetch = globalThis.fetch;
globalThis.fetch = async (input, init) => {
  const url = new URL(input instanceof Request ? input.url : String(input));
  if (url.protocol !== "file:") return nativeFetch(input, init);
  try {
    return new Response(await readFile(fileURLToPath(url)));
  } catch {
    return new Response("", { status: 404 });
  }
};

function send(list) {
  for (const message of list || []) {
    if (message.id !== undefined && !message.cancel) open.add(message.id);
    scope.dispatchEvent(new MessageEvent("message", { data: message }));
  }
}

const timer = setTimeout(() => {
  messages.push({ type: "runner-timeout", open: [...open] });
  finish(2);
}, timeout);

function finish(code) {
  clearTimeout(timer);
  process.stdout.write(JSON.stringify({ messages }) + "\n", () => process.exit(code));
}

// Pyodide under Node takes its folder as a path, not a file: URL.
globalThis.shakestillHost = { pyodideOptions: { indexURL: resolve(site, "pyodide") + "/" } };
await import(pathToFileURL(resolve(site, "engine", "worker.js")).href);
const [first = [], ...later] = script.batches || [];
send(first);
const boot = await bootDone;
const settled = async () => {
  while (open.size) await new Promise((next) => setTimeout(next, 20));
};
await settled();
if (boot.type === "ready") {
  for (const batch of later) {
    send(batch);
    await settled();
  }
}
finish(0);
