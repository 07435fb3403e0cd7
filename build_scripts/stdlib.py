"""The standard library the site ships: trimmed to what can be imported, as bytecode.

Pyodide's python_stdlib.zip (npm package) holds the whole standard library as sources, so
every start compiled the modules Python's own start-up imports. The site's zip keeps the
modules that Pyodide's start-up, the core, micropip and packaging can import (every import
statement followed, build_scripts/stdlib_imports.py) plus the data files of the packages
kept, compiled to bytecode by Pyodide's own Python (build_scripts/bytecode.py).
tests/test_stdlib_trim.py fails when the core imports a module the zip lacks.
"""

from __future__ import annotations

import json
import shutil
import tempfile
import zipfile
from pathlib import Path

import bytecode

# Imported by name from C or built at run time, so no import statement names them:
# codecs' lookup of the encodings the core and micropip read and write (zip names in
# cp437), time.strptime's module, the traceback printer, pickle's helpers.
HIDDEN_ROOTS = ("encodings.utf_8", "encodings.utf_8_sig", "encodings.latin_1", "encodings.ascii",
                "encodings.idna", "encodings.cp437", "encodings.aliases", "encodings.raw_unicode_escape",
                "encodings.unicode_escape", "encodings.utf_16", "encodings.utf_32", "encodings.punycode",
                "_strptime", "traceback", "copyreg", "_compat_pickle",
                "_sysconfigdata__emscripten_wasm32-emscripten")


def module_files(names: set[str], zip_names: list[str]) -> list[str]:
    """Zip entries of the modules, packages' __init__ and the data files of kept packages."""
    kept = []
    packages = {n.replace(".", "/") for n in names}
    for entry in zip_names:
        if entry.endswith("/"):
            continue
        stem = entry[:-3] if entry.endswith(".py") else None
        folder = entry.rpartition("/")[0]
        if stem is not None:
            module = stem[: -len("/__init__")] if stem.endswith("/__init__") else stem
            if module.replace("/", ".") in names or module in packages:
                kept.append(entry)
        elif folder in packages:  # a package's data (e.g. zoneinfo's, none today)
            kept.append(entry)
    return kept


def trimmed_stdlib(pyodide: Path, scan: list[Path], out: Path) -> dict:
    """Write the trimmed, compiled zip to ``out``; returns what was kept."""
    with tempfile.TemporaryDirectory() as tmp:
        work = Path(tmp)
        (work / "roots.txt").write_text("\n".join(HIDDEN_ROOTS) + "\n")
        for source in scan:  # a package folder, or a wheel to unpack
            if source.suffix == ".whl":
                with zipfile.ZipFile(source) as wheel:
                    wheel.extractall(work / "scan")
            else:
                shutil.copytree(source, work / "scan" / source.name)
        names = set(json.loads(bytecode.in_pyodide(pyodide, work, "stdlib_imports.py")))
        with zipfile.ZipFile(pyodide / "python_stdlib.zip") as src:
            entries = module_files(names, src.namelist())
            tree = work / "tree"
            for entry in entries:
                (tree / entry).parent.mkdir(parents=True, exist_ok=True)
                (tree / entry).write_bytes(src.read(entry))
        bytecode.compile_tree(pyodide, tree, "sourceless")
        files = sorted(p.relative_to(tree).as_posix() for p in tree.rglob("*") if p.is_file())
        bytecode.write_zip(out, tree, files)
    return {"modules": sorted(names), "files": files}
