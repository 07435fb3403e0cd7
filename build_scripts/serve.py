"""Serve a folder (default dist/site/) on 127.0.0.1 for the browser.

    python build_scripts/serve.py [--port 8765] [FOLDER]

Tries the given port, then the next nine, then any free one, and prints the
address. Used by serve.sh and, as a library (start()), by the benchmarks.
"""

from __future__ import annotations

import argparse
import functools
import http.server
import threading
from pathlib import Path

TOP = Path(__file__).resolve().parent.parent
DEFAULT_PORT = 8765
TRIES = 10


class Handler(http.server.SimpleHTTPRequestHandler):
    # Module scripts and streaming wasm compilation need exact types.
    extensions_map = {**http.server.SimpleHTTPRequestHandler.extensions_map,
                      ".js": "text/javascript", ".mjs": "text/javascript",
                      ".wasm": "application/wasm", ".json": "application/json",
                      ".webmanifest": "application/manifest+json", ".whl": "application/zip"}

    def end_headers(self):
        # Revalidate on every load: a rebuilt site is never hidden by the HTTP cache
        # (the service worker's own cache is what works offline).
        self.send_header("Cache-Control", "no-cache")
        super().end_headers()

    def log_message(self, format, *args):
        if self.server.verbose:
            super().log_message(format, *args)


def bind(folder: Path, port: int = DEFAULT_PORT, verbose: bool = False) -> http.server.ThreadingHTTPServer:
    handler = functools.partial(Handler, directory=str(folder))
    for candidate in [*range(port, port + TRIES), 0]:
        try:
            server = http.server.ThreadingHTTPServer(("127.0.0.1", candidate), handler)
        except OSError:
            continue
        server.verbose = verbose
        return server
    raise SystemExit("no free port on 127.0.0.1")


def start(folder: Path, port: int = 0) -> tuple[http.server.ThreadingHTTPServer, str]:
    """Serve folder in a background thread; returns the server and its base URL."""
    server = bind(folder, port)
    threading.Thread(target=server.serve_forever, daemon=True).start()
    return server, f"http://127.0.0.1:{server.server_address[1]}/"


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("folder", nargs="?", default=str(TOP / "dist" / "site"))
    parser.add_argument("--port", type=int, default=DEFAULT_PORT)
    args = parser.parse_args()
    folder = Path(args.folder)
    if not (folder / "index.html").is_file():
        raise SystemExit(f"{folder} has no index.html: run python build_scripts/build_site.py first")
    server = bind(folder, args.port, verbose=True)
    print(f"Shakestill is served at http://127.0.0.1:{server.server_address[1]}/ (Ctrl+C stops it)",
          flush=True)
    try:
        server.serve_forever()
    except KeyboardInterrupt:
        pass


if __name__ == "__main__":
    main()
