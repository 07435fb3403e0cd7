"""The engine's rooms: no module imports from a layer above its own, and no import circle.

Layers from the bottom up (DEVELOPERS.md draws the tree); a module may import
from its own layer and any below. ``cli`` and ``bridge`` are both front ends
on top and never import each other. The package's own ``__init__`` (the
public API) and ``__main__`` stand outside the layers. Common practice, no
source: a layered architecture read off the import graph with ``ast``.
"""

from __future__ import annotations

import ast
import re
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1] / "pycore" / "shakestill"
LAYERS = {"numerics": 0, "model": 1, "equilibria": 2, "motion": 3, "fit": 4, "render": 5,
          "commands": 6, "cli": 7, "bridge": 7}
MAX_LINES = 420  # "modules stay under about 400 lines": split along a seam with a name


def _modules() -> dict[str, Path]:
    out = {}
    for path in ROOT.rglob("*.py"):
        parts = path.relative_to(ROOT.parent).with_suffix("").parts
        name = ".".join(parts[:-1] if parts[-1] == "__init__" else parts)
        out[name] = path
    return out


def _imports(name: str, path: Path, modules) -> set[str]:
    """Engine modules that ``name`` imports (relative or absolute), resolved to module names."""
    package = name if path.name == "__init__.py" else name.rsplit(".", 1)[0]
    found = set()
    for node in ast.walk(ast.parse(path.read_text(), str(path))):
        if isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.split(".")
                base = base[: len(base) - (node.level - 1)]
                target = ".".join(base + ([node.module] if node.module else []))
            else:
                target = node.module or ""
            candidates = [target] + [f"{target}.{a.name}" for a in node.names]
        elif isinstance(node, ast.Import):
            candidates = [a.name for a in node.names]
        else:
            continue
        found.update(c for c in candidates if c in modules and c != name)
    return found


def _layer(name: str):
    parts = name.split(".")
    return LAYERS.get(parts[1]) if len(parts) > 1 else None


def test_every_engine_module_sits_in_a_known_layer():
    loose = sorted(n for n, p in _modules().items()
                   if _layer(n) is None and n not in ("shakestill", "shakestill.__main__"))
    assert loose == []


def test_no_module_imports_from_a_layer_above_its_own():
    modules = _modules()
    upward = []
    for name, path in modules.items():
        mine = _layer(name)
        if mine is None:
            continue
        for target in _imports(name, path, modules):
            theirs = _layer(target)
            if theirs is None or theirs > mine:
                upward.append(f"{name} -> {target}")
    assert upward == []


def test_the_two_front_ends_do_not_import_each_other():
    modules = _modules()
    crossing = [f"{n} -> {t}" for n, p in modules.items() if n.split(".")[1:2] in (["cli"], ["bridge"])
                for t in _imports(n, p, modules)
                if t.split(".")[1:2] in (["cli"], ["bridge"]) and t.split(".")[1] != n.split(".")[1]]
    assert crossing == []


def test_no_import_circle():
    modules = _modules()
    edges = {n: _imports(n, p, modules) for n, p in modules.items()}
    # a package's __init__ importing its own submodules is how it says what it offers
    edges = {n: {t for t in ts if not t.startswith(n + ".")} for n, ts in edges.items()}
    on_circle = []
    for start in edges:
        seen, todo = set(), list(edges[start])
        while todo:
            node = todo.pop()
            if node == start:
                on_circle.append(start)
                break
            if node not in seen:
                seen.add(node)
                todo.extend(edges.get(node, ()))
    assert on_circle == []


def test_every_package_says_what_it_offers():
    silent = [str(p.relative_to(ROOT)) for p in ROOT.rglob("__init__.py")
              if not ast.get_docstring(ast.parse(p.read_text()))]
    assert silent == []


def test_modules_stay_small():
    long = {str(p.relative_to(ROOT)): n for p in ROOT.rglob("*.py")
            if (n := len(p.read_text().splitlines())) > MAX_LINES}
    assert long == {}


def test_the_layer_test_sees_an_upward_import(tmp_path):
    """The walk itself: a model module importing from the motion layer is caught."""
    fake = {"shakestill.model.x": tmp_path / "x.py", "shakestill.motion.y": tmp_path / "y.py"}
    fake["shakestill.model.x"].write_text("from ..motion.y import z\n")
    fake["shakestill.motion.y"].write_text("z = 1\n")
    got = _imports("shakestill.model.x", fake["shakestill.model.x"], fake)
    assert got == {"shakestill.motion.y"}
    assert _layer("shakestill.motion.y") > _layer("shakestill.model.x")


def test_the_engine_and_its_package_carry_one_version():
    import tomllib

    import shakestill as ss
    project = tomllib.loads((ROOT.parents[1] / "pyproject.toml").read_text())["project"]
    assert ss.__version__ == project["version"]


SITE = ROOT.parents[1] / "site"
SITE_ROOMS = {"lib": 0, "state": 1, "engine": 1, "panels": 2, "": 3}  # "": app.js at the top
IMPORT = re.compile(r'\bfrom\s+"(\.{1,2}/[^"]+)"')


def test_the_page_modules_import_only_from_rooms_below_or_their_own():
    """site/: app.js -> panels -> engine, state -> lib; state and engine never import each
    other, so the page's plumbing and its memory stay apart."""
    wrong = []
    for path in SITE.rglob("*.js"):
        if path.name == "sw-template.js":
            continue
        room = path.parent.relative_to(SITE).as_posix().replace(".", "")
        for ref in IMPORT.findall(path.read_text()):
            target = (path.parent / ref).resolve().relative_to(SITE.resolve())
            if target.parts[0] == "pyodide":
                continue
            theirs = target.parent.as_posix().replace(".", "")
            if SITE_ROOMS[theirs] > SITE_ROOMS[room] or (
                    theirs != room and SITE_ROOMS[theirs] == SITE_ROOMS[room]):
                wrong.append(f"{path.relative_to(SITE)} -> {target}")
    assert wrong == []
