#!/usr/bin/env bash
# The main job: set up a fresh machine, build the offline site, and serve
# dist/site/ on 127.0.0.1 (port 8765, or the next free one; SHAKESTILL_PORT
# picks another). The page opens on the built-in demo rig.
set -euo pipefail
top="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
cd "$top"
# shellcheck disable=SC1091
. build_scripts/setup_env.sh
python build_scripts/build_site.py
exec python build_scripts/serve.py --port "${SHAKESTILL_PORT:-8765}" dist/site
