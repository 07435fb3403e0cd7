// A return visit starts from a Pyodide memory snapshot (DEVELOPERS.md "Start-up"): the
// first visit, once idle after its first result, imports every module of the core, takes
// the snapshot and keeps it gzipped in Cache Storage under a key of the exact Pyodide,
// standard library and core the build shipped (build-info.json "snapshot"). Never shipped
// in the site; the single file (file:// may lack Cache Storage) always boots plainly.
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

/** Whether this host can keep a snapshot at all (a served page in a browser worker). */
export function snapshotsPossible(host) {
  return !host.prepare && typeof caches !== "undefined" && typeof CompressionStream === "function"
    && typeof DecompressionStream === "function";
}

const entryURL = (base, key) => new URL(`snapshot/${encodeURIComponent(key)}`, base).href;

/**
 * The stored snapshot for this build as {bytes, drop()}, or null when there is none; `bytes`
 * is a promise, so loadPyodide unpacks it while it loads its own JavaScript. Entries
 * of other builds are deleted (`note` says so). `infoPromise` is awaited only when the cache
 * holds something, so a first visit's plain boot never waits for build-info.json here.
 */
export async function findSnapshot(base, infoPromise, note) {
  const cache = await caches.open(CACHE);
  const keys = await cache.keys();
  if (!keys.length) return null;
  const want = entryURL(base, (await infoPromise).snapshot);
  let found = null;
  for (const request of keys) {
    if (request.url === want) {
      found = request;
    } else {
      await cache.delete(request);
      note("Deleted a snapshot of another build; plain start.");
    }
  }
  if (!found) return null;
  const response = await cache.match(found);
  const plain = response.body.pipeThrough(new DecompressionStream("gzip"));
  return { bytes: new Response(plain).arrayBuffer().then((buffer) => new Uint8Array(buffer)),
    drop: () => cache.delete(found) };
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
export async function storeSnapshot(base, key, bytes) {
  const packed = new Response(new Blob([bytes]).stream().pipeThrough(new CompressionStream("gzip")));
  const blob = await packed.blob();
  const cache = await caches.open(CACHE);
  await cache.put(entryURL(base, key), new Response(blob, { headers: { "content-type": "application/gzip" } }));
  return blob.size;
}
