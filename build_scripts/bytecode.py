"""Bytecode compiled by the pinned Pyodide's own Python, for the core's wheel and the
standard library's zip.

Pyodide imported the core and its standard library from source, compiling every module
at each start (the core alone took about 0.9 s to import on a loaded 2-core machine);
shipping bytecode skips that. A .pyc is tied to one Python version, and Pyodide's is
3.14 whatever Python runs the build, so build_scripts/compile_tree.py runs inside Pyodide
under Node.js (build_scripts/in_pyodide.mjs). Archives are rewritten with sorted names,
the fixed SOURCE_DATE_EPOCH time and fixed modes, so the same sources give the same bytes.
"""

from __future__ import annotations

import base64
import csv
import hashlib
import io
import shutil
import subprocess
import tempfile
import time
import zipfile
from pathlib import Path

import pins

HERE = Path(__file__).resolve().parent
# "sourceless": x.pyc in place of x.py (smaller, and what the measurements in
# DEVELOPERS.md, "Start-up", were taken with; tracebacks name file, line and function
# but cannot quote the line); "cached": sources kept, bytecode in __pycache__.
CORE_LAYOUT = "sourceless"


def in_pyodide(pyodide: Path, work: Path, script: str | Path, stdlib: Path | None = None) -> str:
    """Run ``script`` (a path, or a name in build_scripts/) inside Pyodide with ``work``
    mounted at /work, on ``stdlib`` if given; returns its last value."""
    node = shutil.which("node")
    if node is None:
        raise SystemExit("the build runs Pyodide's Python under Node.js: node is not on PATH")
    extra = [str(stdlib)] if stdlib else []
    done = subprocess.run([node, "--no-warnings", str(HERE / "in_pyodide.mjs"), str(pyodide),
                           str(work), str(HERE / script), *extra],
                          stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    if done.returncode != 0:
        raise SystemExit(f"{script} failed inside Pyodide:\n{done.stderr[-3000:]}")
    return done.stdout.strip().splitlines()[-1]


def compile_tree(pyodide: Path, tree: Path, layout: str) -> str:
    """Compile every .py under ``tree`` in place; returns the magic number (hex)."""
    work = tree.parent
    if tree.name != "tree":
        raise ValueError("compile_tree expects a folder named tree (mounted as /work/tree)")
    (work / "layout.txt").write_text(layout)
    return in_pyodide(pyodide, work, "compile_tree.py")


def write_zip(path: Path, tree: Path, names: list[str]) -> None:
    """A deflated zip of ``names`` under ``tree``, in that order, with fixed times and modes."""
    stamp = time.gmtime(pins.SOURCE_DATE_EPOCH)[:6]
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED, compresslevel=9) as out:
        for name in names:
            info = zipfile.ZipInfo(name, date_time=stamp)
            info.external_attr = 0o644 << 16
            info.compress_type = zipfile.ZIP_DEFLATED
            out.writestr(info, (tree / name).read_bytes())


def _record_line(name: str, data: bytes) -> list[str]:
    digest = base64.urlsafe_b64encode(hashlib.sha256(data).digest()).rstrip(b"=").decode()
    return [name, f"sha256={digest}", str(len(data))]


def compile_wheel(wheel: Path, pyodide: Path, layout: str = CORE_LAYOUT) -> str:
    """Rewrite ``wheel`` in place with bytecode and a matching RECORD; returns the magic."""
    with tempfile.TemporaryDirectory() as tmp:
        tree = Path(tmp) / "tree"
        with zipfile.ZipFile(wheel) as src:
            src.extractall(tree)
        magic = compile_tree(pyodide, tree, layout)
        names = [p.relative_to(tree).as_posix() for p in tree.rglob("*") if p.is_file()]
        record = next(n for n in names if n.endswith(".dist-info/RECORD"))
        # the package first, then its metadata, RECORD last (as wheel tools write them)
        names.sort(key=lambda n: (".dist-info/" in n, n == record, n))
        rows = [_record_line(n, (tree / n).read_bytes()) for n in names if n != record]
        text = io.StringIO()
        csv.writer(text, lineterminator="\n").writerows([*rows, [record, "", ""]])
        (tree / record).write_text(text.getvalue())
        write_zip(wheel, tree, names)
    return magic
