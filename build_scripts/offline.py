"""dist/shakestill-offline.html: the built site as one file that opens from disk.

From file:// a page may not start a worker from a file or a Blob URL, import
sibling modules or fetch sibling files. So the single file carries
everything inside itself:

- the page's module and style sheets, bundled by esbuild and inlined (images
  they use become data: URLs); the module sits after the page's markup,
  before the archive, and runs as soon as the parser reaches it (async), so
  the first verdict does not wait for the archive to be read;
- the worker bundled with Pyodide's JavaScript, gzipped as base64 text in its
  own element in <head>, ahead of everything else, so that the worker starts
  while the browser is still parsing the rest;
- every other file of the site (Pyodide, the wheels, the lock file,
  build-info.json), packed into one gzip archive held as base64 text at the
  end of the page, but for the few the page reads at once (EARLY_FILES: the
  build-time verdict), held as text in the prelude;
- a prelude (offline_page.js) that starts the worker from its element, unpacks
  the archive with DecompressionStream, answers the page's own fetches of
  embedded files, and makes `new Worker(".../worker.js", {type: "module"})`
  hand over that worker (a module worker from a data: URL); the worker's
  first module (offline_worker.js) receives the files from the page and
  answers its fetches from them.

The page's Content-Security-Policy is kept and widened only by the hashes of
the inlined code, data: workers and the prelude's Trusted Types policy.
"""

from __future__ import annotations

import base64
import gzip
import hashlib
import io
import json
import mimetypes
import os
import re
import subprocess
import tempfile
import zipfile
from html.parser import HTMLParser
from pathlib import Path

TOP = Path(__file__).resolve().parent.parent
HERE = Path(__file__).resolve().parent
ESBUILD = TOP / "node_modules" / ".bin" / "esbuild"
WORKER_SOURCE = "engine/worker.js"  # the worker's module in the site (site/engine/worker-client.js)
DATA_ELEMENT_ID = "shakestill-embedded"
WORKER_ELEMENT_ID = "shakestill-worker"

# Files the page uses through HTML or CSS become data: URLs; these are their kinds.
DATA_URL_LOADERS = ("svg", "png", "jpg", "jpeg", "gif", "webp", "ico", "woff", "woff2", "ttf")
# Chromium refuses URLs longer than 2 MiB (its url::kMaxURLChars); the
# worker's data: URL must stay below, with some room.
MAX_WORKER_URL_CHARS = 2 * 1024 * 1024 - 64 * 1024

# Served files whose bytes reach the single file some other way (bundled or
# inlined), or not at all (a service worker needs a server).
INLINED_SUFFIXES = (".js", ".mjs", ".css", ".html")
# Zips repacked with stored entries before the archive's gzip (no hash of theirs is
# checked; the wheels' are, so they stay as built).
RESTORED_ZIPS = ("pyodide/python_stdlib.zip",)
# Small files the page reads at once (the build-time verdict): held as text in the
# prelude, so the first verdict does not wait for the archive, which the parser reaches last.
EARLY_FILES = ("demo-check.json",)


def mime_type(path: str) -> str:
    if path.endswith(".mjs") or path.endswith(".js"):
        return "text/javascript"
    if path.endswith(".webmanifest"):
        return "application/manifest+json"
    return mimetypes.guess_type(path)[0] or "application/octet-stream"


def esbuild(entry: Path, *options: str) -> str:
    """Bundle entry with the pinned esbuild; returns the output text."""
    if not ESBUILD.exists():
        raise SystemExit("esbuild is missing from node_modules: run `npm ci`")
    loaders = [f"--loader:.{ext}=dataurl" for ext in DATA_URL_LOADERS]
    done = subprocess.run(
        [str(ESBUILD), os.path.relpath(entry, TOP), "--bundle", "--minify",
         "--log-level=error", "--legal-comments=none", *loaders, *options],
        cwd=TOP, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
    )
    if done.returncode != 0:
        raise SystemExit(f"esbuild failed on {entry}:\n{done.stderr}")
    return done.stdout


def bundle_worker(site: Path, work: Path) -> bytes:
    """offline_worker.js, site/engine/worker.js and Pyodide's JavaScript as one ES module."""
    entry = work / "worker-entry.js"
    # offline_worker.js first: its message listener must see the files before worker.js does.
    entry.write_text("".join(f'import "{os.path.relpath(path, work)}";\n'
                             for path in (HERE / "offline_worker.js", site / WORKER_SOURCE)))
    asm = os.path.relpath(site / "pyodide" / "pyodide.asm.mjs", TOP)
    code = esbuild(entry, "--format=esm", "--platform=browser", "--external:node:*", "--external:ws",
                   "--charset=ascii", f"--alias:shakestill-pyodide-asm=./{asm}")
    # offline_page.js escapes %, # and white space when it makes the data: URL.
    url_chars = len("data:text/javascript,") + len(code) + 2 * len(re.findall(r"[%#\s]", code))
    if url_chars > MAX_WORKER_URL_CHARS:
        raise SystemExit(f"the worker bundle makes a {url_chars}-character data: URL, "
                         f"over the {MAX_WORKER_URL_CHARS} that Chromium accepts")
    return code.encode()


def stored_zip(data: bytes) -> bytes:
    """The same zip with every entry stored, not deflated (same names, times and modes).

    The archive is gzipped whole, which finds the redundancy across files that
    per-entry deflate cannot: the standard library's zip packs 0.3 MB smaller so.
    """
    src = zipfile.ZipFile(io.BytesIO(data))
    out = io.BytesIO()
    with zipfile.ZipFile(out, "w", zipfile.ZIP_STORED) as dst:
        for info in src.infolist():
            entry = zipfile.ZipInfo(info.filename, date_time=info.date_time)
            entry.external_attr = info.external_attr
            dst.writestr(entry, src.read(info), compress_type=zipfile.ZIP_STORED)
    return out.getvalue()


def archive(site: Path) -> tuple[list[dict], bytes]:
    """Index and gzip bytes of every file the single file needs at run time."""
    entries = []
    for path in sorted(p for p in site.rglob("*") if p.is_file()):
        name = path.relative_to(site).as_posix()
        if not name.endswith(INLINED_SUFFIXES) and name not in EARLY_FILES:
            data = path.read_bytes()
            entries.append((name, stored_zip(data) if name in RESTORED_ZIPS else data))
    index = [{"path": name, "type": mime_type(name), "size": len(data)} for name, data in entries]
    packed = gzip.compress(b"".join(data for _, data in entries), compresslevel=9, mtime=0)
    return index, packed


class _Tags(HTMLParser):
    """Start tags of an HTML text with their character spans."""

    def __init__(self, text: str):
        super().__init__(convert_charrefs=True)
        self.tags: list[tuple[str, dict, int, int]] = []
        self._lines = [0]
        for line in text.splitlines(keepends=True):
            self._lines.append(self._lines[-1] + len(line))
        self.feed(text)
        self.close()

    def _offset(self) -> int:
        line, col = self.getpos()
        return self._lines[line - 1] + col

    def handle_starttag(self, tag, attrs):
        start = self._offset()
        end = start + len(self.get_starttag_text())
        self.tags.append((tag, dict(attrs), start, end))

    handle_startendtag = handle_starttag


def _is_local(url: str | None) -> bool:
    return bool(url) and ":" not in url.split("/")[0] and not url.startswith(("#", "//"))


def _data_url(path: Path) -> str:
    return f"data:{mime_type(path.name)};base64,{base64.b64encode(path.read_bytes()).decode()}"


def _script(code: str, kind: str = "", run_early: bool = False) -> str:
    attr = (f' type="{kind}"' if kind else "") + (" async" if run_early else "")
    safe = code.replace("</script", "<\\/script")  # the HTML parser must not end the script early
    return f"<script{attr}>{safe}</script>"


def _data_element(element_id: str, data: bytes) -> str:
    """A non-running script element holding gzipped bytes as base64 text."""
    packed = base64.b64encode(gzip.compress(data, compresslevel=9, mtime=0)).decode()
    return f'<script type="application/octet-stream" id="{element_id}">{packed}</script>'


def _prelude(index: list[dict], worker: bytes, early: dict[str, dict]) -> str:
    """The worker's element, then the prelude that starts it at once."""
    text = (HERE / "offline_page.js").read_text()
    for marker, value in (("[/* @INDEX@ */]", json.dumps(index)), ("{/* @EARLY@ */}", json.dumps(early)),
                          ("@ELEMENT@", DATA_ELEMENT_ID), ("@WORKER@", WORKER_ELEMENT_ID)):
        if text.count(marker) != 1:
            raise SystemExit(f"offline_page.js must hold the marker {marker} exactly once")
        text = text.replace(marker, value)
    return _data_element(WORKER_ELEMENT_ID, worker) + "\n" + _script(text)


def _csp_hash(text: str) -> str:
    return "'sha256-" + base64.b64encode(hashlib.sha256(text.encode()).digest()).decode() + "'"


def allow_inline(html: str) -> str:
    """The page's CSP, widened just enough for the single file.

    Its inline scripts and styles by hash, workers from data: URLs, and the
    prelude's Trusted Types policy. No 'unsafe-inline', no 'unsafe-eval'.
    """
    match = re.search(r'<meta http-equiv="Content-Security-Policy" content="([^"]*)"', html, re.I)
    if not match:
        return html
    scripts = [m.group(1) for m in re.finditer(r"<script(?:\s[^>]*)?>(.*?)</script>", html, re.S)
               if "application/octet-stream" not in m.group(0)[:80]]
    styles = re.findall(r"<style(?:\s[^>]*)?>(.*?)</style>", html, re.S)
    extra = {
        "script-src": [_csp_hash(code) for code in scripts],
        "style-src": [_csp_hash(css) for css in styles],
        "worker-src": ["data:"],
        "trusted-types": ["shakestill-offline"],
    }
    directives = [d.split() for d in match.group(1).split(";") if d.strip()]
    for name, values in extra.items():
        found = next((d for d in directives if d[0] == name), None)
        if found is None:
            continue  # not restricted by the page: nothing to widen
        found.extend(v for v in values if v not in found)
    policy = "; ".join(" ".join(d) for d in directives)
    return html[:match.start(1)] + policy + html[match.end(1):]


def inline_page(site: Path, html: str, prelude: str, payload: str) -> str:
    """index.html with its scripts, styles and images inlined and the archive added."""
    edits = []  # (start, end, replacement)
    modules = []  # the page's module, run as soon as the parser reaches it (below)
    for tag, attrs, start, end in _Tags(html).tags:
        src, href, rel = attrs.get("src"), attrs.get("href"), (attrs.get("rel") or "").lower()
        for ref in (src, href):
            if _is_local(ref) and not (site / ref).is_file():
                raise SystemExit(f"index.html refers to {ref}, which the site does not have")
        if tag == "script" and _is_local(src):
            close = html.index("</script>", end) + len("</script>")
            if attrs.get("type") == "module":
                modules.append(esbuild(site / src, "--format=esm", "--platform=browser"))
                edits.append((start, close, ""))
            else:
                edits.append((start, close, _script(esbuild(site / src, "--format=iife", "--platform=browser"))))
        elif tag == "link" and "stylesheet" in rel.split() and _is_local(href):
            media = f' media="{attrs["media"]}"' if attrs.get("media") else ""
            edits.append((start, end, f"<style{media}>{esbuild(site / href)}</style>"))
        elif tag == "link" and "manifest" in rel.split():
            edits.append((start, end, ""))  # an installable app needs a server
        elif tag == "link" and _is_local(href):
            edits.append((start, end, html[start:end].replace(href, _data_url(site / href), 1)))
        elif tag in ("img", "source") and _is_local(src):
            edits.append((start, end, html[start:end].replace(src, _data_url(site / src), 1)))
    for start, end, text in sorted(edits, reverse=True):
        html = html[:start] + text + html[end:]
    # The prelude goes before the first script, after the CSP and charset metas.
    lower = html.lower()
    at = lower.find("<script")
    at = lower.index("</head>") if at < 0 else at
    html = html[:at] + prelude + "\n" + html[at:]
    # The page's module goes after its markup and before the archive, marked async: a deferred
    # module would wait for the parser to read the whole 8 MB archive before the first verdict.
    if len(modules) > 1:
        raise SystemExit("index.html must load one module script (the single file runs it early)")
    body = html.lower().rindex("</body>")
    data = f'<script type="application/octet-stream" id="{DATA_ELEMENT_ID}">{payload}</script>\n'
    module = "".join(_script(code, "module", run_early=True) + "\n" for code in modules)
    return allow_inline(html[:body] + module + data + html[body:])


def build_offline(site: Path, out: Path) -> None:
    (TOP / "build").mkdir(exist_ok=True)
    with tempfile.TemporaryDirectory(dir=TOP / "build") as tmp:
        worker = bundle_worker(site, Path(tmp))
    index, packed = archive(site)
    payload = base64.b64encode(packed).decode()
    early = {name: {"type": mime_type(name), "text": (site / name).read_text()}
             for name in EARLY_FILES if (site / name).is_file()}
    html = inline_page(site, (site / "index.html").read_text(), _prelude(index, worker, early), payload)
    out.write_text(html)
