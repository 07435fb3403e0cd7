#!/usr/bin/env bash
# Sets up a fresh machine and runs every test. Exit code is pytest's.
set -euo pipefail
top="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
cd "$top"
. build_scripts/setup_env.sh
if [ -f build_scripts/build_site.py ]; then
  python build_scripts/build_site.py
fi
# pytest-xdist: SHAKESTILL_TEST_WORKERS=4 runs whole test files per worker (module fixtures
# built once). Serial (0) by default until a parallel run is shown green: a 4-worker run
# showed one failure near 70% that was not identified (see DEVELOPERS.md).
python -m pytest -n "${SHAKESTILL_TEST_WORKERS:-0}" --dist loadfile "$@"
