// A return visit starts from a Pyodide memory snapshot (DEVELOPERS.md "Start-up"): the
// first visit, once idle after its first result, imports every module of the core, takes
// the snapshot and keeps it gzipped in a store under a key of the exact Pyodide, standard
// library and core the build shipped (build-info.json "snapshot"). Never shipped with the
// page. The served site's worker keeps it in its own Cache Storage; the single file's worker
// (a data: worker, which has no storage) in the page's, through the host's store
// (build_scripts/offline_worker.js).
//
// Pyodide 314 offers snapshots only as private API (_makeSnapshot, makeMemorySnapshot,
// _loadSnapshot), so every use is feature-detected and any failure means a plain boot.

// Not "shakestill-...": the service worker deletes other caches of that prefix on update.
const CACHE = "snapshot-of-shakestill-v1";

// A snapshot holds wasm memory, not Pyodide's file system: the core's files are gone after
// a restore (the standard library's zip is mounted again), so import every module first.
const IMPORT_ALL = `
import importlib, os, shakestill
_top = os.path.dirname(shakestill.__path__[0])
for _dir, _, _files in os.walk(shakestill.__path__[0]):
    for _file in sorted(_files):
        _stem, _ext = os.path.splitext(_file)
        if _ext in (".py", ".pyc") and "__pycache__" not in _dir and _stem != "__main__":
            _name = os.path.relpath(os.path.join(_dir, _stem), _top).replace(os.sep, ".")
            importlib.import_module(_name.removesuffix(".__init__"))
del importlib, os, _top, _dir, _files, _file, _stem, _ext
`;

/**
 * Where this host keeps snapshots, or null where it cannot: a store is {entries() -> promise
 * of [{key, read() -> promise of the gzipped Blob, remove()}], put(key, gzipped Blob)}.
 */
export function snapshotStore(host, base) {
  if (typeof CompressionStream !== "function" || typeof DecompressionStream !== "function") return null;
  if (host.prepare) return host.snapshotStore || null;
  return typeof caches === "undefined" ? null : cacheStore(base);
}

// The served site's store: Cache Storage under the site's own address.
function cacheStore(base) {
  const open = () => caches.open(CACHE);
  return {
    async entries() {
      const cache = await open();
      return (await cache.keys()).map((request) => ({
        key: decodeURIComponent(request.url.split("/").pop()),
        read: async () => (await cache.match(request)).blob(),
        remove: () => cache.delete(request),
      }));
    },
    async put(key, blob) {
      const url = new URL(`snapshot/${encodeURIComponent(key)}`, base).href;
      await (await open()).put(url, new Response(blob, { headers: { "content-type": "application/gzip" } }));
    },
  };
}

/**
 * The stored snapshot for this build as {bytes, drop()}, or null when there is none; `bytes`
 * is a promise, so loadPyodide unpacks it while it loads its own JavaScript. Entries
 * of other builds are deleted (`note` says so). `infoPromise` is awaited only when the store
 * holds something, so a first visit's plain boot never waits for build-info.json here.
 */
export async function findSnapshot(store, infoPromise, note) {
  const entries = await store.entries();
  if (!entries.length) return null;
  const want = (await infoPromise).snapshot;
  let found = null;
  for (const entry of entries) {
    if (entry.key === want) {
      found = entry;
    } else {
      await entry.remove();
      note("Deleted a snapshot of another build; plain start.");
    }
  }
  if (!found) return null;
  const plain = (await found.read()).stream().pipeThrough(new DecompressionStream("gzip"));
  return { bytes: new Response(plain).arrayBuffer().then((buffer) => new Uint8Array(buffer)),
    drop: () => found.remove() };
}

/** Imports the whole core and returns the snapshot's bytes (Python must be idle). */
export function takeSnapshot(pyodide) {
  pyodide.runPython(IMPORT_ALL);
  // Pyodide checks that its package table is as a bare start left it (empty); the packages
  // are loaded all the same, and nothing loads packages after a restore.
  const loaded = { ...pyodide.loadedPackages };
  for (const name of Object.keys(loaded)) delete pyodide.loadedPackages[name];
  try {
    // JavaScript objects held by Python (micropip's links to Pyodide's loader) cannot be
    // kept; they come back as null, and the engine never calls micropip after a restore.
    return pyodide.makeMemorySnapshot({ serializer: () => null });
  } finally {
    Object.assign(pyodide.loadedPackages, loaded);
  }
}

/** Options for loadPyodide that restore `bytes` (or a promise of them) instead of starting afresh. */
export const restoreOptions = (bytes) => ({ _loadSnapshot: bytes, _snapshotDeserializer: () => null });

/** Gzips `bytes` and keeps them under this build's key; resolves to the gzipped size. */
export async function storeSnapshot(store, key, bytes) {
  const packed = new Response(new Blob([bytes]).stream().pipeThrough(new CompressionStream("gzip")));
  const blob = await packed.blob();
  await store.put(key, blob);
  return blob.size;
}
