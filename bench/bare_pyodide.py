"""The peer of the page-load benchmark: a bare Pyodide boot (loadPyodide, then ``1+1``).

A folder with a page that starts a module worker, which loads the same Pyodide files the
site ships and runs ``1+1``; the page writes the seconds into ``html[data-bare]``. Served
from the same kind of server as the site, in a fresh browser profile, so its figure and
the site's are measured alike in the same run.
"""

from __future__ import annotations

import shutil
import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent / "build_scripts"))
import pins  # noqa: E402

PAGE = """<!doctype html><meta charset="utf-8"><title>bare Pyodide</title>
<script type="module">
const worker = new Worker("bare-worker.js", {type: "module"});
worker.onmessage = (event) => { document.documentElement.dataset.bare = event.data; };
</script>
"""
WORKER = """import { loadPyodide } from "./pyodide/pyodide.mjs";
const pyodide = await loadPyodide({ indexURL: new URL("./pyodide/", import.meta.url).href });
self.postMessage(String(pyodide.runPython("1+1")));
"""
DONE = "html[data-bare]"


def make_folder(pyodide: Path, dest: Path) -> Path:
    """dest/ with the bare page, its worker and the pinned Pyodide's own files as the npm
    package has them (the site's standard library is trimmed and compiled: not bare)."""
    (dest / "pyodide").mkdir(parents=True)
    for name in (*pins.PYODIDE_FILES, "pyodide-lock.json"):
        shutil.copyfile(pyodide / name, dest / "pyodide" / name)
    (dest / "index.html").write_text(PAGE)
    (dest / "bare-worker.js").write_text(WORKER)
    return dest
