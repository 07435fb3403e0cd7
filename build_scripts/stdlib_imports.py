# Runs inside Pyodide (build_scripts/in_pyodide.mjs): which modules of the standard
# library the site can need. Roots: every module loaded by Pyodide's own start-up (this
# process has done nothing else yet), the modules named in /work/roots.txt, those that
# importing the scanned packages loads, and every
# import in the sources under /work/scan (the core, micropip, packaging), wherever it
# sits (inside a function, a try, an if). From those it follows the import statements
# that run when a standard-library module is imported (its top level, classes, tries
# and ifs included), not those inside its functions (except in Pyodide's own pyodide
# and _pyodide packages, whose functions load the packages): those load optional features
# (pdb, doctest, unittest, xml, ...) that the site's paths do not reach; a path that
# does is caught by tests/test_stdlib_trim.py, which runs every op and command in
# Pyodide on the trimmed zip. Ends with the JSON list of module names reached.
import ast
import importlib.util
import json
import pathlib
import sys

ZIP = next(p for p in sys.path if p.endswith(".zip"))
# Packages in the zip whose functions the site calls (loadPackage, micropip's installs):
# their imports inside functions are followed too.
CALLED = ("pyodide", "_pyodide")


def is_main_block(node):
    """`if __name__ == "__main__":`, which runs only when the module is run as a script."""
    test = node.test if isinstance(node, ast.If) else None
    return (isinstance(test, ast.Compare) and isinstance(test.left, ast.Name)
            and test.left.id == "__name__" and len(test.comparators) == 1
            and isinstance(test.comparators[0], ast.Constant) and test.comparators[0].value == "__main__")


def walk(tree, functions):
    """Every node of the tree; with ``functions`` False, not inside function bodies or
    the `if __name__ == "__main__":` block."""
    nodes = [tree]
    while nodes:
        node = nodes.pop()
        yield node
        lazy = isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef, ast.Lambda)) or is_main_block(node)
        if functions or not lazy:
            nodes.extend(ast.iter_child_nodes(node))


def imports_of(tree, package, functions=True):
    """Absolute names a module's source imports (for `from a import b`, also a.b)."""
    for node in walk(tree, functions):
        if isinstance(node, ast.Import):
            yield from (alias.name for alias in node.names)
        elif isinstance(node, ast.ImportFrom):
            base = node.module or ""
            if node.level:
                parts = package.split(".")[: len(package.split(".")) - node.level + 1]
                base = ".".join([*parts, base] if base else parts)
            if base:
                yield base
                yield from (f"{base}.{alias.name}" for alias in node.names if alias.name != "*")


def with_parents(name):
    parts = name.split(".")
    return [".".join(parts[: i + 1]) for i in range(len(parts))]


def stdlib_spec(name):
    try:
        spec = importlib.util.find_spec(name)
    except Exception:  # a package that cannot be imported here: its modules are not reached
        return None
    return spec if spec and spec.origin and spec.origin.startswith(ZIP + "/") else None


todo = list(sys.modules)
todo += pathlib.Path("/work/roots.txt").read_text().split()
for source in sorted(pathlib.Path("/work/scan").rglob("*.py")):
    package = ".".join(source.relative_to("/work/scan").with_suffix("").parts)
    if source.name != "__init__.py":
        package = package.rpartition(".")[0]
    todo += imports_of(ast.parse(source.read_bytes()), package)

# Importing the scanned packages here adds what C modules import by name when loaded
# (_decimal needs numbers, for one), which no import statement shows.
sys.path.insert(0, "/work/scan")
for source in sorted(pathlib.Path("/work/scan").rglob("*.py")):
    module = ".".join(source.relative_to("/work/scan").with_suffix("").parts).removesuffix(".__init__")
    if not module.endswith("__main__"):
        try:
            importlib.import_module(module)
        except Exception:  # noqa: BLE001 - an optional part (packaging's Windows helpers)
            pass
todo += list(sys.modules)

seen, kept = set(), set()
while todo:
    for name in with_parents(todo.pop()):
        if name in seen:
            continue
        seen.add(name)
        spec = stdlib_spec(name)
        if spec is None:
            continue
        kept.add(name)
        package = name if spec.submodule_search_locations is not None else name.rpartition(".")[0]
        source = spec.loader.get_source(name)
        if source:
            todo += imports_of(ast.parse(source), package, functions=name.split(".")[0] in CALLED)
json.dumps(sorted(kept))
