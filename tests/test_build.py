"""The site build: reproducible bytes, honest lock file, complete and self-contained output.

Builds twice, from two copies of the sources at different paths (as a CI clone
is), and checks the results against each other and against independent
computations (hashlib, zipfile, gzip, the wheel RECORD format of PEP 376/427,
CSP3 hash sources). Under build_scripts/test.sh the first build is the dist/ it
has just made from the working tree (tests/fresh_dist.py) and the second the one it
made beside it from a copy elsewhere, so none runs here; without them (or with
only the first) the missing ones are built here.
"""

from __future__ import annotations

import base64
import gzip
import hashlib
import io
import json
import re
import shutil
import subprocess
import sys
import tomllib
import urllib.parse
import zipfile
from html.parser import HTMLParser
from pathlib import Path

import pytest

from fresh_dist import checkout, fresh_dist, second_dist

TOP = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(TOP / "build_scripts"))

import build_site  # noqa: E402
import offline  # noqa: E402
import pins  # noqa: E402

# Files of the built site that are the page's own (Pyodide's JavaScript is third-party).
PAGE_SUFFIXES = (".html", ".js", ".css", ".json", ".webmanifest", ".svg")
# XML namespace names: identifiers in SVG markup, never fetched (W3C, Namespaces in XML 1.0).
NAMESPACES = ("http://www.w3.org/2000/svg", "http://www.w3.org/1999/xlink",
              "http://www.w3.org/1999/xhtml", "http://www.w3.org/XML/1998/namespace")


def _needs_node_modules():
    if not (TOP / "node_modules" / "pyodide" / "package.json").exists():
        pytest.fail("node_modules is missing: `npm ci` (build_scripts/setup_env.sh) installs it")


def _start_build(checkout: Path, out: Path) -> subprocess.Popen:
    return subprocess.Popen([sys.executable, str(checkout / "build_scripts" / "build_site.py"), "--dist", str(out)],
                            stdout=subprocess.DEVNULL)


@pytest.fixture(scope="module")
def builds(tmp_path_factory) -> tuple[Path, Path]:
    """Two builds of one snapshot of the sources, from two different paths."""
    _needs_node_modules()
    built, other = fresh_dist(), second_dist()
    if built is not None and other is not None:
        # test.sh made both, side by side: its build of the working tree at TOP, and one of a
        # copy of the same tree at another path (tests/fresh_dist.py).
        return built, other
    (TOP / "build" / "cache").mkdir(parents=True, exist_ok=True)
    first = checkout(TOP, tmp_path_factory.mktemp("a") / "checkout")
    if built is not None:
        # test.sh's own build of the working tree at TOP is the first; one more from a copy
        # at another path is the second.
        out = tmp_path_factory.mktemp("dist-b")
        run = _start_build(first, out)
        run.wait()
        if run.returncode != 0:
            raise subprocess.CalledProcessError(run.returncode, run.args)
        return built, out
    second = checkout(first, tmp_path_factory.mktemp("b") / "elsewhere" / "deeper")
    outs = tmp_path_factory.mktemp("dist-a"), tmp_path_factory.mktemp("dist-b")
    # Both builds at once: a build runs one process at a time (Python, then Node for
    # Pyodide's bytecode), so on two cores the two overlap instead of queueing.
    runs = [_start_build(first, outs[0]), _start_build(second, outs[1])]
    for run in runs:
        run.wait()
    for run in runs:
        if run.returncode != 0:
            raise subprocess.CalledProcessError(run.returncode, run.args)
    return outs


@pytest.fixture(scope="module")
def dist(builds) -> Path:
    return builds[0]


def _files(root: Path) -> dict[str, bytes]:
    return {p.relative_to(root).as_posix(): p.read_bytes() for p in sorted(root.rglob("*")) if p.is_file()}


def test_same_sources_give_the_same_bytes(builds):
    first, second = (_files(root) for root in builds)
    assert sorted(first) == sorted(second)
    differing = [name for name in first if first[name] != second[name]]
    # Reproducible builds: zero differing files (common practice, no source).
    assert differing == []
    print(f"\n{len(first)} files identical in two builds from two paths")


def test_lock_lists_exactly_the_shipped_wheels_with_their_real_hashes(dist):
    folder = dist / "site" / "pyodide"
    lock = json.loads((folder / "pyodide-lock.json").read_text())
    project = tomllib.loads((TOP / "pyproject.toml").read_text())["project"]
    assert set(lock["packages"]) == {*pins.WHEELS, project["name"]}
    for name, entry in lock["packages"].items():
        path = folder / entry["file_name"]
        assert path.is_file(), f"{name}: {entry['file_name']} is not shipped"
        # sha256 recomputed with hashlib: must equal the lock's exactly.
        assert hashlib.sha256(path.read_bytes()).hexdigest() == entry["sha256"], name
    for name, (version, sha256) in pins.WHEELS.items():
        # The pinned hash is the one PyPI publishes for that file (pip download --require-hashes).
        assert lock["packages"][name]["version"] == version
        assert lock["packages"][name]["sha256"] == sha256
    assert lock["packages"][project["name"]]["version"] == project["version"]
    original = json.loads((TOP / "node_modules" / "pyodide" / "pyodide-lock.json").read_text())
    assert lock["info"] == original["info"]  # same interpreter ABI as the shipped Pyodide


def _pyc_header(data: bytes) -> tuple[bytes, int]:
    """The magic number and the flags word of a .pyc (PEP 552: 16-byte header)."""
    return data[:4], int.from_bytes(data[4:8], "little")


# PEP 552: flags 0b01 = hash-based and not checked against a source at import.
UNCHECKED_HASH = 0b01


def test_shipped_pyodide_is_the_pinned_npm_package(dist):
    # The standard library's zip is the npm package's, trimmed and compiled: every module
    # it holds is one of the package's, as bytecode of one interpreter, never checked
    # against a source (there is none).
    shipped_zip = zipfile.ZipFile(dist / "site" / "pyodide" / "python_stdlib.zip")
    npm_zip = zipfile.ZipFile(TOP / "node_modules" / "pyodide" / "python_stdlib.zip")
    original = set(npm_zip.namelist())
    magics = set()
    for name in shipped_zip.namelist():
        if not name.endswith(".pyc"):  # a kept package's data file, as the package has it
            assert shipped_zip.read(name) == npm_zip.read(name), name
            continue
        assert name[:-1] in original, name
        magic, flags = _pyc_header(shipped_zip.read(name))
        assert flags == UNCHECKED_HASH, name
        magics.add(magic)
    assert len(magics) == 1 and magics.pop()[2:] == b"\r\n"  # importlib's magic ends in CR LF
    for name in (n for n in pins.PYODIDE_FILES if n != "python_stdlib.zip"):
        shipped = (dist / "site" / "pyodide" / name).read_bytes()
        assert shipped == (TOP / "node_modules" / "pyodide" / name).read_bytes(), name
    lock = json.loads((TOP / "package-lock.json").read_text())
    assert lock["packages"]["node_modules/pyodide"]["version"] == pins.PYODIDE_VERSION
    assert json.loads((TOP / "package.json").read_text())["dependencies"]["pyodide"] == pins.PYODIDE_VERSION


def test_core_wheel_holds_every_module_and_a_valid_record(dist):
    info = json.loads((dist / "site" / "build-info.json").read_text())
    wheel = dist / "site" / "pyodide" / info["wheel"]
    assert hashlib.sha256(wheel.read_bytes()).hexdigest() == info["hash"]
    # every module as bytecode in place of its source (build_scripts/bytecode.py), compiled
    # by the same interpreter as the standard library's zip
    modules = {p.relative_to(TOP / "pycore").with_suffix(".pyc").as_posix()
               for p in (TOP / "pycore" / "shakestill").rglob("*.py") if "__pycache__" not in p.parts}
    stdlib_magic = _pyc_header(zipfile.ZipFile(dist / "site" / "pyodide" / "python_stdlib.zip")
                               .read("json/__init__.pyc"))[0]
    with zipfile.ZipFile(wheel) as archive:
        names = set(archive.namelist())
        assert modules <= names, f"missing from the wheel: {sorted(modules - names)}"
        assert not [n for n in names if n.endswith(".py")]
        for name in modules:
            assert _pyc_header(archive.read(name)) == (stdlib_magic, UNCHECKED_HASH), name
        record = archive.read(f"shakestill-{info['version']}.dist-info/RECORD").decode()
        checked = 0
        for line in record.splitlines():
            path, digest, size = line.rsplit(",", 2)
            if not digest:
                continue  # RECORD lists itself without a hash (PEP 376)
            data = archive.read(path)
            # PEP 427: sha256, urlsafe base64 without padding, and the size in bytes.
            expected = base64.urlsafe_b64encode(hashlib.sha256(data).digest()).rstrip(b"=").decode()
            assert digest == f"sha256={expected}", path
            assert int(size) == len(data), path
            checked += 1
        assert checked == len(names) - 1


def test_service_worker_precaches_every_file_under_a_content_hash(dist):
    site = dist / "site"
    text = (site / "sw.js").read_text()
    files = json.loads(re.search(r"const FILES = (\[.*?\]);", text, re.S).group(1))
    expected = sorted(name for name in (p.relative_to(site).as_posix() for p in site.rglob("*") if p.is_file())
                      if name != "sw.js")
    assert files == expected
    digest = hashlib.sha256()
    for name in files:
        digest.update(f"{name}\0{hashlib.sha256((site / name).read_bytes()).hexdigest()}\n".encode())
    assert f'"shakestill-" + "{digest.hexdigest()[:16]}"' in text


def test_cache_name_changes_with_any_file(tmp_path):
    (tmp_path / "a.txt").write_text("one")
    (tmp_path / "b.txt").write_text("two")
    before = build_site.content_hash(tmp_path, ["a.txt", "b.txt"])
    (tmp_path / "b.txt").write_text("two!")
    assert build_site.content_hash(tmp_path, ["a.txt", "b.txt"]) != before


class _Refs(HTMLParser):
    def __init__(self):
        super().__init__()
        self.refs = []

    def handle_starttag(self, tag, attrs):
        self.refs += [value for name, value in attrs if name in ("src", "href") and value]


def _local(ref: str) -> bool:
    return not re.match(r"^([a-z][a-z0-9+.-]*:|#|//)", ref)


JS_REFS = re.compile(r"""(?:\bfrom\s*|\bimport\s*\(\s*|\bimport\s+|new URL\(\s*)["'](\.{1,2}/[^"']+|[\w./-]+\.(?:js|mjs|json|css|svg|png|webmanifest))["']""")


def test_every_file_the_page_refers_to_is_shipped(dist):
    site = dist / "site"
    parser = _Refs()
    parser.feed((site / "index.html").read_text())
    missing = [ref for ref in parser.refs if _local(ref) and not (site / ref.split("#")[0]).is_file()]
    checked = len(parser.refs)
    for script in [p for p in site.rglob("*.js") if "pyodide" not in p.parts]:
        for ref in JS_REFS.findall(script.read_text()):
            checked += 1
            # "./x.js" is relative to the module; a bare name ("sw.js", "build-info.json")
            # is resolved against the page or the site's base URL
            base = script.parent if ref.startswith(".") else site
            if not (base / ref).resolve().is_file():
                missing.append(f"{script.relative_to(site)}: {ref}")
    for sheet in site.glob("*.css"):
        for ref in re.findall(r"url\(\s*['\"]?([^'\")]+)", sheet.read_text()):
            if _local(ref):
                checked += 1
                if not (sheet.parent / ref).is_file():
                    missing.append(f"{sheet.name}: {ref}")
    manifest = site / "manifest.webmanifest"
    if manifest.exists():
        for icon in json.loads(manifest.read_text()).get("icons", []):
            checked += 1
            if not (site / icon["src"]).is_file():
                missing.append(f"manifest: {icon['src']}")
    assert missing == []
    assert checked > 3  # the page, its module and its worker at the least


def _absolute_urls(text: str) -> list[str]:
    found = []
    for line in text.splitlines():
        for match in re.finditer(r"https?://[^\s\"'`)<>]+", line):
            url = match.group(0)
            before = line[:match.start()]
            in_comment = before.lstrip().startswith(("//", "*", "/*", "<!--")) or "// " in before
            host = urllib.parse.urlsplit(url).hostname or ""
            # A name under .invalid never resolves (RFC 6761 section 6.4): the single file's
            # snapshot cache keys (build_scripts/offline_page.js) name no place to reach.
            never_resolves = host == "invalid" or host.endswith(".invalid")
            if not in_comment and not url.startswith(NAMESPACES) and not never_resolves:
                found.append(url)
    return found


def test_page_files_name_no_outside_address(dist):
    site = dist / "site"
    offenders = {}
    for path in site.rglob("*"):
        if path.is_file() and path.suffix in PAGE_SUFFIXES and "pyodide" not in path.parts:
            urls = _absolute_urls(path.read_text())
            if urls:
                offenders[path.relative_to(site).as_posix()] = urls
    single = (dist / build_site.OFFLINE.name).read_text()
    page_part = re.sub(r'(<script type="application/octet-stream"[^>]*>).*?(</script>)', r"\1\2", single, flags=re.S)
    urls = _absolute_urls(page_part)
    if urls:
        offenders["shakestill-offline.html"] = urls
    assert offenders == {}


def _embedded(single: str) -> tuple[list[dict], bytes]:
    index = json.loads(re.search(r"const INDEX = (\[.*?\]);", single).group(1))
    payload = re.search(rf'<script type="application/octet-stream" id="{offline.DATA_ELEMENT_ID}">(.*?)</script>',
                        single, re.S).group(1)
    return index, gzip.decompress(base64.b64decode(payload))


def test_single_file_carries_the_sites_files_byte_for_byte(dist):
    single = (dist / build_site.OFFLINE.name).read_text()
    index, data = _embedded(single)
    assert sum(entry["size"] for entry in index) == len(data)
    offset, by_path = 0, {}
    for entry in index:
        by_path[entry["path"]] = data[offset:offset + entry["size"]]
        offset += entry["size"]
    site = dist / "site"
    for name in ["build-info.json", "pyodide/pyodide-lock.json", "pyodide/pyodide.asm.wasm",
                 *(f"pyodide/{p.name}" for p in (site / "pyodide").glob("*.whl"))]:
        assert by_path[name] == (site / name).read_bytes(), name
    # the standard library's zip is repacked with stored entries: the same files, byte for byte
    packed = zipfile.ZipFile(io.BytesIO(by_path["pyodide/python_stdlib.zip"]))
    served = zipfile.ZipFile(site / "pyodide/python_stdlib.zip")
    assert [i.filename for i in packed.infolist()] == [i.filename for i in served.infolist()]
    assert all(i.compress_type == zipfile.ZIP_STORED for i in packed.infolist())
    for info in served.infolist():
        assert packed.read(info.filename) == served.read(info), info.filename
    assert by_path["pyodide/pyodide.asm.wasm"][:4] == b"\0asm"  # WebAssembly binary magic (WebAssembly Core spec 5.5.16)


def test_single_file_runs_its_page_and_verdict_ahead_of_the_archive(dist):
    # The first verdict does not wait for the parser to read the archive: the page's module
    # comes after its markup and before the archive, async (HTML Living Standard 4.12.1: an
    # async module script runs as soon as it is fetched, a deferred one after parsing), and
    # the build-time verdict rides in the prelude byte for byte, not in the archive.
    single = (dist / build_site.OFFLINE.name).read_text()
    module = single.index('<script type="module" async>')
    archive = single.index(f'<script type="application/octet-stream" id="{offline.DATA_ELEMENT_ID}">')
    assert single.index('id="check-report"') < module < archive
    assert single.count('<script type="module"') == 1
    early = json.loads(re.search(r"const EARLY = (\{.*?\}); //", single).group(1))
    assert sorted(early) == sorted(offline.EARLY_FILES) == ["demo-check.json"]
    for name, file in early.items():
        assert file["text"] == (dist / "site" / name).read_text(), name
    index, _ = _embedded(single)
    assert not {entry["path"] for entry in index} & set(offline.EARLY_FILES)


def test_single_file_carries_the_worker_ahead_of_the_archive(dist):
    # The worker starts while the browser still parses the big archive: its own element
    # comes first in the page, before the prelude that starts it.
    single = (dist / build_site.OFFLINE.name).read_text()
    element = re.search(rf'<script type="application/octet-stream" id="{offline.WORKER_ELEMENT_ID}">(.*?)</script>',
                        single, re.S)
    bundle = gzip.decompress(base64.b64decode(element.group(1))).decode("ascii")
    assert "shakestill.bridge" in bundle  # site/engine/worker.js is in the bundle
    assert "shakestill-embedded" in bundle  # and offline_worker.js, which receives the files
    archive_at = single.index(f'id="{offline.DATA_ELEMENT_ID}"')
    assert element.start() < single.index("const INDEX = ") < archive_at
    assert element.start() < single.lower().index("<script type=\"module\"")


def test_single_file_csp_allows_exactly_its_inline_code(dist):
    single = (dist / build_site.OFFLINE.name).read_text()
    policy = re.search(r'http-equiv="Content-Security-Policy" content="([^"]*)"', single)
    if policy is None:
        pytest.skip("the page sets no Content-Security-Policy")
    directives = {d.split()[0]: d.split()[1:] for d in policy.group(1).split(";") if d.strip()}
    scripts = [m.group(2) for m in re.finditer(r"<script(\s[^>]*)?>(.*?)</script>", single, re.S)
               if "application/octet-stream" not in (m.group(1) or "")]
    styles = re.findall(r"<style(?:\s[^>]*)?>(.*?)</style>", single, re.S)
    # CSP Level 3, hash-source: 'sha256-' + base64 of the SHA-256 of the element's text.
    for code, directive in [*((s, "script-src") for s in scripts), *((s, "style-src") for s in styles)]:
        digest = base64.b64encode(hashlib.sha256(code.encode()).digest()).decode()
        assert f"'sha256-{digest}'" in directives[directive]
    assert "'unsafe-inline'" not in directives["script-src"]
    assert "'unsafe-eval'" not in directives["script-src"]


def test_sizes_are_within_the_targets(dist):
    site_bytes = build_site.tree_size(dist / "site")
    single_bytes = (dist / build_site.OFFLINE.name).stat().st_size
    print(f"\ndist/site {site_bytes / 1e6:.2f} MB, single file {single_bytes / 1e6:.2f} MB")
    # Targets of the build issue: single file at most 9 MB, the site under 15 MB.
    assert single_bytes <= build_site.MAX_OFFLINE_BYTES == 9_000_000
    assert site_bytes < build_site.MAX_SITE_BYTES == 15_000_000
