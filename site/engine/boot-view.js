// What the page shows while the engine starts, and when it cannot: progress, a stalled
// start, a failure with plain advice. Returns the EngineClient callbacks.

// No start-up news for this long means the start has stalled (e.g. a blocked download).
const STALLED_BOOT_MS = 60_000;

/** Plain advice for a failed start, from what the browser can and cannot do. */
export function adviceFor(message) {
  if (typeof WebAssembly !== "object") {
    return "This browser has WebAssembly switched off or missing (some managed laptops do this). "
      + "Ask your IT department to allow WebAssembly for this page, or use another browser.";
  }
  if (typeof Worker !== "function") return "This browser cannot run background workers, which the engine needs.";
  if (location.protocol === "file:") {
    return "Opened from disk: use the file shakestill-offline.html, which is built to run from a file, "
      + "or open the site's web address.";
  }
  if (/fetch|network|HTTP|load/i.test(message)) {
    return "Part of the engine could not be downloaded. Check the connection and reload; "
      + "after one complete visit the page also works offline.";
  }
  return "Reload the page. If it keeps failing, the browser's settings may block WebAssembly or workers.";
}

/**
 * {onBoot, onReady, onFail} for the EngineClient; ``isStarting()`` tells whether the engine
 * is still starting, ``ready(version)`` and ``failed()`` are the page's own next steps.
 */
export function bootView($, chip, { isStarting, ready, failed }) {
  let stallTimer = 0;
  const watch = (stage) => {
    clearTimeout(stallTimer);
    stallTimer = setTimeout(() => {
      if (!isStarting()) return;
      $("boot-failed").hidden = false;
      $("boot-failed-reason").textContent = `The engine has made no progress for a minute, at the step "${stage}".`;
      $("boot-failed-advice").textContent = "Part of it may be blocked or very slow to download (a proxy or "
        + "filter on managed networks can do this). Wait a little longer, or reload; after one complete "
        + "visit the page works offline.";
      chip("chip-engine", "Engine: stalled", "failed");
    }, STALLED_BOOT_MS);
  };
  watch("opening");
  return {
    onBoot: ({ stage, fraction }) => {
      watch(stage || "starting");
      $("boot-stage").textContent = stage || "starting";
      if (Number.isFinite(fraction)) $("boot-progress").value = fraction;
      chip("chip-engine", `Engine: starting ${Math.round((fraction || 0) * 100)}%`, "starting");
    },
    onReady: (version, { started = "plain", log = [] } = {}) => {
      clearTimeout(stallTimer);
      // How Python started, for tests and the curious (site/engine/snapshot.js).
      $("chip-engine").dataset.started = started;
      $("chip-engine").dataset.bootLog = JSON.stringify(log);
      $("boot").hidden = true;
      $("boot-failed").hidden = true;
      $("version").textContent = `engine ${version}`;
      chip("chip-engine", `Engine: ready (${version})`, "ready");
      ready(version);
    },
    onSnapshot: ({ state }) => { $("chip-engine").dataset.snapshot = state; },
    onFail: (message, wasReady) => {
      clearTimeout(stallTimer);
      $("boot").hidden = true;
      $("boot-failed").hidden = false;
      $("boot-failed-reason").textContent = wasReady ? `The engine stopped: ${message}` : message;
      $("boot-failed-advice").textContent = adviceFor(message);
      chip("chip-engine", "Engine: not running", "failed");
      failed();
    },
  };
}
