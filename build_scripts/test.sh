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
# With SHAKESTILL_RECORD_CI_TIME=1 the wall time of the whole run (set-up, build, tests) and
# the load averages at its start and end go to bench/figures/ci_time.json for bench/pinned.py
# (SHAKESTILL_CI_NOTE adds a note); without it the tracked record is left alone, so a
# developer's run never dirties the tree.
load_start="$(cut -d' ' -f1 /proc/loadavg 2>/dev/null || echo null)"
python -m pytest -n "${SHAKESTILL_TEST_WORKERS:-2}" --dist loadfile "$@" || status=$?
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
