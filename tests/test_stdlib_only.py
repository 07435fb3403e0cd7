"""The engine runs on the standard library alone (rules.md; architecture.md: Pyodide
without numpy/scipy). Checked twice: statically (every import in pycore/shakestill
is stdlib or the package itself) and at run time (a subprocess in which numpy and
scipy, and every other non-stdlib top-level module, are unimportable)."""
import ast
import json
import os
import pathlib
import subprocess
import sys

import refsolvers as ref
import shakestill as ss

PKG = pathlib.Path(ss.__file__).resolve().parent

TWO_LINK = ref.rig([ref.link(0.20, 0.04, [(0.01, 0.20)], 0.0, 2e-4),
                    ref.link(0.10, 0.02, [(0.008, 0.10)], 1e-6, 1e-4)],
                   ref.crank(0.02, 0.06, 2400.0),
                   limits={"speed_rpm": [300.0, 3600.0], "stroke_m": [0.0, 0.04]},
                   title="Two-link stdlib run")

BLOCKER = r"""
import importlib.abc, json, sys

BLOCKED = {"numpy", "scipy"}
ALLOWED = set(sys.stdlib_module_names) | {"shakestill"}

class Block(importlib.abc.MetaPathFinder):
    def find_spec(self, name, path=None, target=None):
        top = name.split(".")[0]
        if top in BLOCKED or top not in ALLOWED:
            raise ImportError(f"blocked for the stdlib-only test: {name}")
        return None

before = set(sys.modules)
sys.meta_path.insert(0, Block())
for name in list(sys.modules):               # forget anything site already imported
    if name.split(".")[0] in BLOCKED:
        del sys.modules[name]
"""

CHILD = BLOCKER + r"""
import shakestill as ss
out = {"demo": ss.check(ss.demo_rig()), "two": ss.check(ss.rig_from_dict(json.loads(sys.argv[1])))}
new = sorted({m.split(".")[0] for m in set(sys.modules) - before} - ALLOWED)
print(json.dumps({"result": out, "foreign": new}))
"""


CLI_CHILD = BLOCKER + r"""
import runpy
sys.argv = ["shakestill"] + sys.argv[1:]
try:
    runpy.run_module("shakestill", run_name="__main__")
except SystemExit:
    pass
new = sorted({m.split(".")[0] for m in set(sys.modules) - before} - ALLOWED)
print(json.dumps({"foreign": new}))
"""


def child_env():
    env = dict(os.environ)
    env["PYTHONPATH"] = os.pathsep.join([str(PKG.parent), env.get("PYTHONPATH", "")])
    return env


def test_imports_in_source_are_stdlib():
    # Static: every absolute import in pycore/shakestill names a stdlib module
    # (sys.stdlib_module_names) or the package itself; relative imports are in-package.
    foreign = []
    for path in sorted(PKG.rglob("*.py")):
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            names = []
            if isinstance(node, ast.Import):
                names = [a.name for a in node.names]
            elif isinstance(node, ast.ImportFrom) and node.level == 0:
                names = [node.module]
            for name in names:
                top = name.split(".")[0]
                if top not in sys.stdlib_module_names and top != "shakestill":
                    foreign.append(f"{path.name}: {name}")
    assert not foreign, foreign
    assert len(list(PKG.rglob("*.py"))) > 3   # the scan saw the engine


def test_check_runs_with_numpy_and_scipy_unimportable():
    # Run time: the demo check and a 2-link check in a child where any non-stdlib
    # import raises ImportError give the same JSON as this process (exact equality).
    proc = subprocess.run([sys.executable, "-c", CHILD, json.dumps(TWO_LINK)],
                          capture_output=True, text=True, env=child_env(), timeout=600)
    assert proc.returncode == 0, proc.stderr[-3000:]
    child = json.loads(proc.stdout.strip().splitlines()[-1])
    assert child["foreign"] == []
    here = {"demo": ss.check(ss.demo_rig()), "two": ss.check(ss.rig_from_dict(TWO_LINK))}
    assert child["result"] == json.loads(json.dumps(here))


def test_cli_json_is_check_with_overrides(tmp_path):
    # `shakestill check RIG --json --speed 1800rpm --stroke 25mm` in the blocked child
    # prints exactly ss.check of the same rig at 1800 rpm and 0.025 m (DEVELOPERS.md:
    # check() is "exactly the JSON of shakestill check --json"; 1 mm = 1e-3 m).
    path = tmp_path / "two.json"
    path.write_text(json.dumps(TWO_LINK), encoding="utf-8")
    proc = subprocess.run([sys.executable, "-c", CLI_CHILD, "check", str(path), "--json",
                           "--speed", "1800rpm", "--stroke", "25mm"],
                          capture_output=True, text=True, env=child_env(), timeout=600)
    lines = proc.stdout.strip().splitlines()
    assert json.loads(lines[-1])["foreign"] == [], proc.stderr[-3000:]
    printed = json.loads("\n".join(lines[:-1]))
    moved = json.loads(json.dumps(TWO_LINK))
    moved["drive"].update(speed_rpm=1800.0, stroke_m=0.025)
    assert printed == json.loads(json.dumps(ss.check(ss.rig_from_dict(moved))))


def test_blocker_really_blocks():
    # The child's finder must make numpy unimportable, or the test above proves nothing.
    probe = BLOCKER + (
        "\ntry:\n    import numpy\n    print('imported')\nexcept ImportError:\n    print('blocked')\n")
    proc = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True, timeout=120)
    assert proc.stdout.strip() == "blocked", proc.stdout + proc.stderr
