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
# The wall time of the whole run (set-up, build, tests) goes to bench/figures/ci_time.json
# for bench/pinned.py.
python -m pytest -n "${SHAKESTILL_TEST_WORKERS:-2}" --dist loadfile "$@" || status=$?
printf '{"date": "%s", "wall_s": %d, "workers": "%s", "exit": %d}\n' "$(date -u +%F)" \
  "$SECONDS" "${SHAKESTILL_TEST_WORKERS:-2}" "${status:-0}" > bench/figures/ci_time.json
exit "${status:-0}"
