# Runs inside Pyodide (build_scripts/in_pyodide.mjs): compiles every .py under
# /work/tree to bytecode of this Python, hash-based and unchecked (PEP 552), so an
# import never compares it with a source file's time. /work/layout.txt says where:
# "sourceless" writes x.pyc in place of x.py (the .py is removed), "cached" keeps
# x.py and writes __pycache__/x.<tag>.pyc. Ends with this Python's magic number.
import importlib.util
import os
import pathlib
import py_compile

layout = pathlib.Path("/work/layout.txt").read_text().strip()
for source in sorted(pathlib.Path("/work/tree").rglob("*.py")):
    relative = source.relative_to("/work/tree").as_posix()
    target = (source.with_suffix(".pyc") if layout == "sourceless"
              else importlib.util.cache_from_source(str(source)))
    py_compile.compile(str(source), cfile=str(target), dfile=relative, doraise=True,
                       invalidation_mode=py_compile.PycInvalidationMode.UNCHECKED_HASH)
    if layout == "sourceless":
        os.remove(source)
importlib.util.MAGIC_NUMBER.hex()
