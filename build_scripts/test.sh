#!/usr/bin/env bash
# Sets up a fresh machine and runs every test. Exit code is pytest's.
set -euo pipefail
top="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
cd "$top"
. build_scripts/setup_env.sh
echo "test.sh: set-up done at ${SECONDS} s"
if [ -f build_scripts/build_site.py ]; then
  # Two builds side by side (a build runs one process at a time, so on two cores they overlap):
  # dist/ from this tree, and a second one from a copy of it at another path, which
  # tests/test_build.py compares byte for byte. The pinned wheels are fetched first, once.
  python -c 'import sys; sys.path.insert(0, "build_scripts"); import wheels; wheels.fetch_pinned()'
  second="$(mktemp -d)"
  trap 'rm -rf "$second"' EXIT
  copy="$(python tests/fresh_dist.py "$second")"
  python "$copy/build_scripts/build_site.py" --dist "$second/dist" >/dev/null &
  second_pid=$!
  python build_scripts/build_site.py
  # A failed second build is removed: test_build.py then builds its own (and fails
  # there with the build's words), so its outcome is not checked here.
  wait "$second_pid" || rm -rf "$second/dist"
  # dist/ is now a build of this very tree: tests that only read a build use it
  # (tests/fresh_dist.py) instead of building again.
  export SHAKESTILL_DIST_FRESH=1 SHAKESTILL_DIST_SECOND="$second/dist"
  echo "test.sh: builds done at ${SECONDS} s"
fi
# pytest-xdist: whole test files per worker (module fixtures built once), handed out in the
# order tests/conftest.py gives them (the longest files first). Two workers by default, one
# per core of a CI machine; SHAKESTILL_TEST_WORKERS=0 runs serially.
# With SHAKESTILL_RECORD_CI_TIME=1 the wall time of the whole run (set-up, build, tests) and
# the load averages at its start and end go to bench/figures/ci_time.json for bench/pinned.py
# (SHAKESTILL_CI_NOTE adds a note); without it the tracked record is left alone, so a
# developer's run never dirties the tree.
load_start="$(cut -d' ' -f1 /proc/loadavg 2>/dev/null || echo null)"
python -m pytest -n "${SHAKESTILL_TEST_WORKERS:-2}" --dist loadfile --no-loadscope-reorder "$@" || status=$?
echo "test.sh: tests done at ${SECONDS} s (load average $(cut -d' ' -f1-3 /proc/loadavg 2>/dev/null))"
if [ "${SHAKESTILL_RECORD_CI_TIME:-}" = "1" ]; then
  python - "$SECONDS" "${SHAKESTILL_TEST_WORKERS:-2}" "${status:-0}" "$load_start" <<'PY'
import json, os, sys, time
wall, workers, code, load_start = sys.argv[1:]
rec = {"date": time.strftime("%Y-%m-%d", time.gmtime()), "wall_s": int(wall), "workers": workers,
       "exit": int(code), "load_start": float(load_start), "load_end": os.getloadavg()[0]}
if os.environ.get("SHAKESTILL_CI_NOTE"):
    rec["note"] = os.environ["SHAKESTILL_CI_NOTE"]
with open("bench/figures/ci_time.json", "w") as f:
    f.write(json.dumps(rec) + "\n")
PY
fi
exit "${status:-0}"
