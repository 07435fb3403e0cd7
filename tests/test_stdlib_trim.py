"""The site's trimmed standard library holds every module the site can need.

The build keeps the modules that Pyodide's start-up, the core, micropip and packaging
can import (build_scripts/stdlib.py). This runs, inside Pyodide under Node.js on that
trimmed zip, an import of every module of the core, micropip and packaging, every
bridge op and every CLI command (tests/stdlib_trim_exercise.py), and fails on any
ImportError or internal error. To show the check can fail, the same run on the zip
with one module the core needs (csv: the fit's log and the simulate CSV) taken out must
report it.
"""

from __future__ import annotations

import json
import shutil
import sys
import zipfile
from pathlib import Path

import pytest

from fresh_dist import fresh_dist
from prereq import missing

TOP = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(TOP / "build_scripts"))

pytestmark = pytest.mark.pyodide


@pytest.fixture(scope="module")
def work(tmp_path_factory):
    if shutil.which("node") is None:
        missing("node is not on PATH: the trimmed standard library is checked inside Pyodide under Node.js")
    import build_site
    import pins
    import stdlib
    import wheels
    work = tmp_path_factory.mktemp("trim")
    shipped = [wheels.pinned_wheel(name, version, sha) for name, (version, sha) in sorted(pins.WHEELS.items())]
    zip_path = work / "python_stdlib.zip"
    built = fresh_dist()
    if built is not None:  # test.sh's build of this tree: the very zip the site ships
        shutil.copyfile(built / "site" / "pyodide" / "python_stdlib.zip", zip_path)
    else:  # the same call as build_site.build_site makes
        stdlib.trimmed_stdlib(build_site.NODE_PYODIDE, [TOP / "pycore" / "shakestill", *shipped], zip_path)
    shutil.copytree(TOP / "pycore" / "shakestill", work / "core" / "shakestill",
                    ignore=shutil.ignore_patterns("__pycache__"))
    for wheel in shipped:
        shutil.copyfile(wheel, work / wheel.name)
    (work / "wheels.json").write_text(json.dumps([f"/work/{w.name}" for w in shipped]))
    shutil.copyfile(TOP / "site" / "sample-decay.csv", work / "log.csv")
    return work, zip_path


def _exercise(work: Path, stdlib_zip: Path) -> list[str]:
    import build_site
    import bytecode
    out = bytecode.in_pyodide(build_site.NODE_PYODIDE, work, TOP / "tests" / "stdlib_trim_exercise.py", stdlib_zip)
    return json.loads(out)


def test_every_module_op_and_command_runs_on_the_trimmed_stdlib(work):
    folder, zip_path = work
    assert _exercise(folder, zip_path) == []


def test_a_missing_module_is_reported(work):
    folder, zip_path = work
    damaged = folder / "without_csv.zip"
    with zipfile.ZipFile(zip_path) as src, zipfile.ZipFile(damaged, "w") as dst:
        assert "csv.pyc" in src.namelist()
        for info in src.infolist():
            if info.filename != "csv.pyc":
                dst.writestr(info, src.read(info))
    failures = _exercise(folder, damaged)
    assert any("csv" in failure for failure in failures), failures
