#!/usr/bin/env bash
# Sets up everything the project needs on a fresh machine, idempotently:
# a virtual environment with the core and its test extras, Node packages
# (the pinned Pyodide), and Debian's Chromium for the page tests.
# Source it: `. build_scripts/setup_env.sh`; it leaves the venv active.
set -euo pipefail
top="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
cd "$top"

# Node.js runs the Pyodide pass of the tests and the site's bundler; a fresh machine of this
# project's kind has it, another one gets Debian's. Chromium is Debian's too (the page tests).
# Whatever is missing comes in one apt-get run (one package-list update, not one per package).
apt_wanted=()
if ! command -v node >/dev/null 2>&1; then apt_wanted+=(nodejs npm); fi
if [ "${SHAKESTILL_NO_BROWSER:-}" != "1" ] && ! command -v chromium >/dev/null 2>&1; then
  apt_wanted+=(chromium)
fi
npm_wanted=""
if [ -f package.json ] && { [ ! -d node_modules ] || [ package-lock.json -nt node_modules ]; }; then
  npm_wanted=1
fi
# apt-get, then npm ci (it needs apt's node when there was none), in the background while pip
# fills the venv: all three mostly wait on downloads and unpacking, not on each other.
(
  if [ "${#apt_wanted[@]}" -gt 0 ] && command -v apt-get >/dev/null 2>&1; then
    apt-get update -qq
    DEBIAN_FRONTEND=noninteractive apt-get install -y -qq "${apt_wanted[@]}" >/dev/null
  fi
  if [ -n "$npm_wanted" ]; then
    npm ci --no-audit --no-fund --loglevel=error
  fi
) &
side_pid=$!

if [ ! -x .venv/bin/python ]; then
  python3 -m venv .venv
fi
# shellcheck disable=SC1091
. .venv/bin/activate
python -m pip install --quiet --upgrade pip
python -m pip install --quiet -e ".[test]"

wait "$side_pid"  # a failed apt-get or npm ci stops the set-up here (set -e)
