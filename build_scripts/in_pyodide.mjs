// Runs one Python file inside the pinned Pyodide under Node.js, with a host folder
// mounted at /work, and prints what its last line evaluates to. The build uses it
// for what must be done by Pyodide's own Python (3.14, whatever Python runs the
// build): compiling bytecode, reading the standard library's imports.
//
//   node build_scripts/in_pyodide.mjs PYODIDE_DIR WORK_DIR SCRIPT.py [STDLIB_ZIP]
//
// STDLIB_ZIP: a standard library to start with instead of PYODIDE_DIR's own
// (tests/test_stdlib_trim.py runs the site's trimmed one).
import { readFileSync } from "node:fs";
import { resolve } from "node:path";
import { pathToFileURL } from "node:url";

const [pyodideDir, work, script, stdlib] = process.argv.slice(2, 6).map((arg) => resolve(arg));
const { loadPyodide } = await import(pathToFileURL(`${pyodideDir}/pyodide.mjs`).href);
const pyodide = await loadPyodide({ indexURL: `${pyodideDir}/`, ...(stdlib ? { stdLibURL: stdlib } : {}) });
pyodide.FS.mkdirTree("/work");
pyodide.FS.mount(pyodide.FS.filesystems.NODEFS, { root: work }, "/work");
try {
  console.log(String(pyodide.runPython(readFileSync(script, "utf8"))));
} catch (error) {
  // A Python error's message is its traceback: that, not the minified JavaScript around it.
  console.error(error.message);
  process.exit(1);
}
