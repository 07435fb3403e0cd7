#!/usr/bin/env bash
# Sets up a fresh machine and runs every test. Exit code is pytest's.
set -euo pipefail
top="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
cd "$top"
. build_scripts/setup_env.sh
if [ -f build_scripts/build_site.py ]; then
  python build_scripts/build_site.py
  # dist/ is now a build of this very tree: tests that only read a build use it
  # (tests/fresh_dist.py) instead of building again.
  export SHAKESTILL_DIST_FRESH=1
fi
# pytest-xdist: whole test files per worker (module fixtures built once). Two workers by
# default, one per core of a CI machine; SHAKESTILL_TEST_WORKERS=0 runs serially.
python -m pytest -n "${SHAKESTILL_TEST_WORKERS:-2}" --dist loadfile "$@"
