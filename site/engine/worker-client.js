// Talks to the engine worker (site/engine/worker.js) by the worker message protocol in
// DEVELOPERS.md. Requests on the same channel supersede each other: a new one
// cancels the one before, whose late reply is dropped. Requests made before
// the worker is ready wait here and go out when it is.

export class Cancelled extends Error {
  constructor() {
    super("cancelled: a newer request took its place");
    this.name = "Cancelled";
  }
}

// Fresh workers started after Python died on an input, before the client gives up.
const MAX_RESTARTS = 3;

/** Where the worker's module sits, from the page (build_scripts/offline.py bundles the same). */
export const WORKER_PATH = "engine/worker.js";

/** Start the engine worker (a module worker; the single-file build swaps in its own). */
export function startEngineWorker(policy) {
  const url = new URL(WORKER_PATH, document.baseURI).href;
  return new Worker(policy.createScriptURL(url), { type: "module", name: "shakestill-engine" });
}

/**
 * Starts the engine worker now, so Python's seconds-long start-up runs while the page
 * builds its panels; returns the `startWorker` for the EngineClient made later, which
 * takes this worker first (or the browser's refusal, reported by the client) and starts
 * fresh ones after that.
 */
export function startEngineWorkerEarly(policy) {
  let early;
  try {
    early = startEngineWorker(policy);
  } catch (error) {
    early = error instanceof Error ? error : new Error(String(error));
  }
  return () => {
    const first = early;
    early = null;
    if (first instanceof Error) throw first;
    return first || startEngineWorker(policy);
  };
}

export class EngineClient {
  /**
   * @param {() => Worker} startWorker  makes the worker (may throw: reported as a failed start)
   * @param {object} hooks  onBoot({stage, fraction}), onReady(version, {started, log}),
   *   onFail(message), onSnapshot({state}) (the worker kept a snapshot for the next visit)
   */
  constructor(startWorker, { onBoot = () => {}, onReady = () => {}, onFail = () => {},
    onRestart = () => {}, onSnapshot = () => {} } = {}) {
    this.hooks = { onBoot, onReady, onFail, onRestart, onSnapshot };
    this.startWorker = startWorker;
    this.nextId = 1;
    this.pending = new Map(); // id -> {message, resolve, reject, onProgress, sent}
    this.channels = new Map(); // channel -> id of its live request
    this.restarts = 0;
    this.start();
  }

  start() {
    this.state = "starting";
    try {
      this.worker = this.startWorker();
    } catch (err) {
      this.fail(`the browser refused to start the engine: ${err.message || err}`);
      return;
    }
    this.worker.addEventListener("message", (event) => this.receive(event.data));
    this.worker.addEventListener("error", (event) => {
      event.preventDefault();
      this.fail(event.message
        ? `the engine stopped with an error: ${event.message}`
        : "the engine script could not be loaded or run");
    });
    this.worker.addEventListener("messageerror", () => this.fail("the engine sent a message that could not be read"));
  }

  /**
   * Python died on one request (a fatal error in Pyodide): that request fails with the
   * engine's words, the others wait, and a fresh worker starts; the page keeps its rig.
   * More than MAX_RESTARTS deaths in one visit is a failure, not a loop.
   */
  restart(msg) {
    const job = this.pending.get(msg.id);
    if (job) {
      this.settle(msg.id);
      job.reject(new Error(`the engine stopped on this ${msg.op || "request"} and is starting again: ${msg.message}`));
    }
    this.worker.terminate();
    if (this.restarts >= MAX_RESTARTS) {
      this.fail(`the engine stopped again: ${msg.message}`);
      return;
    }
    this.restarts += 1;
    for (const waiting of this.pending.values()) waiting.sent = false;
    this.hooks.onRestart(msg.op || "request", msg.message);
    this.start();
  }

  fail(message) {
    const wasReady = this.state === "ready";
    this.state = "failed";
    this.failure = message;
    for (const [id, job] of this.pending) {
      job.reject(new Error(message));
      this.pending.delete(id);
    }
    this.hooks.onFail(message, wasReady);
  }

  receive(msg) {
    if (!msg || typeof msg !== "object") return;
    switch (msg.type) {
      case "boot":
        this.hooks.onBoot({ stage: msg.stage, fraction: msg.fraction });
        return;
      case "fatal":
        this.restart(msg);
        return;
      case "ready":
        this.state = "ready";
        this.version = msg.version;
        this.hooks.onReady(msg.version, { started: msg.started, log: msg.log || [] });
        for (const job of this.pending.values()) this.post(job);
        return;
      case "snapshot":
        this.hooks.onSnapshot(msg);
        return;
      case "boot-failed":
        this.fail(msg.message || "the engine could not start");
        return;
      default:
        break;
    }
    const job = this.pending.get(msg.id);
    if (!job) return; // cancelled or unknown: a superseded reply
    if (msg.type === "progress") {
      job.onProgress({ fraction: msg.fraction, message: msg.message });
    } else if (msg.type === "result") {
      this.settle(msg.id);
      job.resolve(msg.reply);
    } else if (msg.type === "error") {
      this.settle(msg.id);
      job.reject(new Error(msg.message || "the engine reported an error"));
    }
  }

  settle(id) {
    this.pending.delete(id);
    for (const [channel, live] of this.channels) if (live === id) this.channels.delete(channel);
  }

  post(job) {
    if (job.sent || this.state !== "ready") return;
    job.sent = true;
    this.worker.postMessage(job.message);
  }

  /** Cancel a request: the worker is told, and its reply (if any comes) is dropped. */
  cancel(id) {
    const job = this.pending.get(id);
    if (!job) return;
    this.settle(id);
    if (job.sent) this.worker.postMessage({ id, cancel: true });
    job.reject(new Cancelled());
  }

  /**
   * Send a bridge op; resolves with the bridge reply object.
   * options.channel: a name; a new request on it cancels the previous one.
   * options.onProgress({fraction, message}): progress of a long computation.
   */
  request(op, fields = {}, { channel = null, onProgress = () => {} } = {}) {
    if (this.state === "failed") return Promise.reject(new Error(this.failure));
    if (channel && this.channels.has(channel)) this.cancel(this.channels.get(channel));
    const id = this.nextId++;
    const promise = new Promise((resolve, reject) => {
      const job = { message: { id, op, ...fields }, resolve, reject, onProgress, sent: false };
      this.pending.set(id, job);
      if (channel) this.channels.set(channel, id);
      this.post(job);
    });
    return promise;
  }
}
