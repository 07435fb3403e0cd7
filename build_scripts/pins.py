"""Everything the site build takes from outside the repository, pinned.

The Pyodide core comes from the npm package "pyodide" (exact version in
package.json and package-lock.json; checked here against node_modules). The
wheels come from PyPI by version and sha256; the build refuses any other
bytes. The versions match the ones Pyodide's own lock file names, so they are
the ones this Pyodide was released and tested with.
"""

PYODIDE_VERSION = "314.0.7"

# Files of the npm package that the site ships (the rest is typings,
# source maps and consoles). pyodide.asm.mjs is the Emscripten module.
PYODIDE_FILES = (
    "pyodide.mjs",
    "pyodide.asm.mjs",
    "pyodide.asm.wasm",
    "python_stdlib.zip",
)

# name -> (version, sha256 of the PyPI wheel); both py3-none-any.
WHEELS = {
    "micropip": ("0.11.1", "768de165adb8e66906039d8fec4127a57f522dfdf8e6fbff877a4616941ecfd3"),
    "packaging": ("26.1", "5d9c0669c6285e491e0ced2eee587eaf67b670d94a19e94e3984a481aba6802f"),
}

# The PEP 517 backend that builds the core's wheel, pinned so that the same
# sources give the same wheel bytes on every machine.
BUILD_BACKEND = ("setuptools", "84.2.1", "ca140b45d5325a9478f880e351484f62fef15f336462e449ca0c03c873d589c2")

# Timestamp written into every archive the build makes (1980-01-01, the
# earliest a zip entry can carry): build time never leaks into the bytes.
SOURCE_DATE_EPOCH = 315532800


def wheel_file_name(name: str, version: str) -> str:
    return f"{name}-{version}-py3-none-any.whl"
