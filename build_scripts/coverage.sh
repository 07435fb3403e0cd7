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
exit "${status:-0}"
