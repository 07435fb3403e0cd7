#!/usr/bin/env bash
# Branch coverage of the engine (coverage.py) over the quick engine tests, CLI subprocesses
# included; prints the per-module table with the lines and branches not reached, and the
# total. Run with the venv active and PYTHONPATH=pycore (as the tests). Extra arguments go
# to pytest, e.g. `bash build_scripts/coverage.sh tests/test_check_fields.py`.
set -euo pipefail
top="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
cd "$top"
export PYTHONPATH="$top/pycore${PYTHONPATH:+:$PYTHONPATH}"
python -m coverage erase
python -m coverage run -m pytest -q -p no:cacheprovider -m "not browser and not pyodide" "$@" \
  || status=$?
python -m coverage combine -q
python -m coverage report --precision=1 --include="$top/pycore/shakestill/*"  # not the copies tests make
# the totals for bench/pinned.py (bench/figures/coverage.json)
python -m coverage json -q -o build/coverage.json --include="$top/pycore/shakestill/*"
python - "${status:-0}" <<'PY'
import datetime, json, sys
t = json.load(open("build/coverage.json"))["totals"]
rec = {"date": datetime.date.today().isoformat(), "percent": t["percent_covered"],
       "statements": t["num_statements"], "branches": t["num_branches"],
       "missing_lines": t["missing_lines"], "missing_branches": t["missing_branches"],
       "tests_exit": int(sys.argv[1])}
open("bench/figures/coverage.json", "w").write(json.dumps(rec, indent=1) + "\n")
PY
exit "${status:-0}"
