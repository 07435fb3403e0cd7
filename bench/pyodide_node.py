"""Run Python code on the core inside Pyodide under Node.js, for the benchmarks.

Uses the pinned Pyodide of node_modules/pyodide (``npm ci``) and copies the
core's source into its file system, so a bench measures the working tree
without a site build. The code's prints come back as standard output.
"""
import pathlib
import shutil
import subprocess
import sys
import tempfile

TOP = pathlib.Path(__file__).resolve().parents[1]

NODE_SCRIPT = r"""
import { loadPyodide } from "PYODIDE/pyodide.mjs";
import { readFileSync, readdirSync } from "node:fs";
const t0 = performance.now();
const py = await loadPyodide({ indexURL: "PYODIDE/" });
// the core and its subpackages (one level: numerics/, model/, equilibria/, ...)
for (const dir of ["", ...readdirSync("CORE", { withFileTypes: true })
    .filter((e) => e.isDirectory() && e.name !== "__pycache__").map((e) => e.name + "/")]) {
  py.FS.mkdirTree(`/bench/shakestill/${dir}`);
  for (const name of readdirSync(`CORE/${dir}`)) {
    if (name.endsWith(".py")) py.FS.writeFile(`/bench/shakestill/${dir}${name}`, readFileSync(`CORE/${dir}${name}`));
  }
}
py.setStdout({ batched: (line) => console.log(line) });
py.globals.set("boot_s", (performance.now() - t0) / 1000);
py.runPython(`import sys; sys.path.insert(0, "/bench")`);
py.runPython(readFileSync("CODE", "utf8"));
"""


def run_in_pyodide(code: str, *, timeout_s: float = 1800) -> bool:
    """Run ``code`` (``boot_s`` holds Pyodide's start-up seconds); print what it prints.

    Returns False, saying why, when Node.js or the Pyodide package is missing or the run fails.
    """
    node = shutil.which("node")
    pyodide = TOP / "node_modules" / "pyodide"
    if node is None or not (pyodide / "pyodide.mjs").exists():
        print("  skipped: needs node on PATH and node_modules/pyodide (npm ci)")
        return False
    with tempfile.TemporaryDirectory() as tmp:
        code_path = pathlib.Path(tmp) / "bench_code.py"
        code_path.write_text(code)
        script = (NODE_SCRIPT.replace("PYODIDE", str(pyodide))
                  .replace("CORE", str(TOP / "pycore" / "shakestill"))
                  .replace("CODE", str(code_path)))
        path = pathlib.Path(tmp) / "bench.mjs"
        path.write_text(script)
        done = subprocess.run([node, "--no-warnings", str(path)], capture_output=True, text=True,
                              timeout=timeout_s)
    sys.stdout.write(done.stdout)
    if done.returncode:
        print(f"  failed ({done.returncode}): {done.stderr[-800:]}")
        return False
    return True
