// The offline copy: registers the service worker (sw.js precaches the whole site) and
// offers a reload when a newer version is waiting. From disk the page needs none.

export async function registerServiceWorker({ chip, notice, policy }) {
  if (location.protocol === "file:") {
    chip("chip-offline", "Offline: this file works without a network", "on");
    return;
  }
  if (!("serviceWorker" in navigator)) {
    chip("chip-offline", "Offline copy: not available in this browser", "off");
    return;
  }
  try {
    const registration = await navigator.serviceWorker.register(policy.createScriptURL(
      new URL("sw.js", document.baseURI).href));
    await navigator.serviceWorker.ready;
    chip("chip-offline", "Offline copy: ready", "on");
    document.documentElement.dataset.offline = "ready";
    const offerUpdate = () => {
      if (!registration.waiting || !navigator.serviceWorker.controller) return;
      notice("A newer version of Shakestill is ready.", [{
        label: "Reload to use it",
        run: () => {
          document.documentElement.dataset.updating = "yes";
          registration.waiting.postMessage({ type: "skip-waiting" });
        },
      }]);
    };
    offerUpdate();
    registration.addEventListener("updatefound", () => {
      registration.installing?.addEventListener("statechange", offerUpdate);
    });
    let reloaded = false;
    navigator.serviceWorker.addEventListener("controllerchange", () => {
      if (reloaded || !document.documentElement.dataset.updating) return;
      reloaded = true;
      location.reload();
    });
  } catch (err) {
    chip("chip-offline", "Offline copy: not available here", "off");
    console.warn("service worker:", err);
  }
}
