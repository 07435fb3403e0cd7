"""The pinned quality figures of issue 12 together: mutation score per module (each
module's last run), branch coverage of the engine, and the last measured CI time.

    python bench/pinned.py

Prints what the measuring scripts recorded under bench/figures/ (it measures nothing):
`bench/mutation.py` writes mutation/<module>.json after each run (or with --report),
`build_scripts/coverage.sh` writes coverage.json, `build_scripts/test.sh` writes
ci_time.json when run with SHAKESTILL_RECORD_CI_TIME=1 (never on an ordinary run). A module with no record says so.
"""

from __future__ import annotations

import json
import sys
from pathlib import Path

FIGURES = Path(__file__).resolve().parent / "figures"
sys.path.insert(0, str(Path(__file__).resolve().parent))
from mutation import MODULES  # noqa: E402  (the modules issue 12 names)


def _read(path: Path):
    try:
        return json.loads(path.read_text())
    except (OSError, ValueError):
        return None


def mutation_lines() -> list[str]:
    out = ["Mutation score (mutmut; killed of tested, then without the survivors judged equivalent):"]
    found = {}
    for path in sorted((FIGURES / "mutation").glob("*.json")):
        rec = _read(path)
        if rec:
            found[rec["module"]] = rec
    for module in sorted(set(MODULES) | set(found)):
        rec = found.get(module)
        if not rec or not rec.get("tested"):
            out.append(f"  {module:32s} not measured")
            continue
        k, t, e = rec["killed"], rec["tested"], rec["equivalent"]
        open_ = rec.get("by_status", {}).get("not checked", 0)
        out.append(f"  {module:32s} {k}/{t} = {100 * k / t:5.1f}%   without {e} equivalent "
                   f"{k}/{t - e} = {100 * k / max(t - e, 1):5.1f}%   ({rec['date']}"
                   + (f", {open_} mutants not run" if open_ else "") + ")")
        if rec.get("note"):
            out.append(f"  {'':32s} {rec['note']}")
    return out


def coverage_lines() -> list[str]:
    rec = _read(FIGURES / "coverage.json")
    if not rec:
        return ["Branch coverage of the engine: not measured (bash build_scripts/coverage.sh)"]
    return [f"Branch coverage of the engine: {rec['percent']:.1f}% ({rec['statements']} "
            f"statements, {rec['branches']} branches, {rec['missing_lines']} lines and "
            f"{rec['missing_branches']} branches not reached; {rec['date']}, "
            f"tests exit code {rec['tests_exit']})"] + ([f"  {rec['note']}"] if rec.get("note") else [])


def ci_lines() -> list[str]:
    rec = _read(FIGURES / "ci_time.json")
    if not rec:
        return ["CI time: not measured (SHAKESTILL_RECORD_CI_TIME=1 CI=true bash .ci/run)"]
    s = int(rec["wall_s"])
    load = (f", load average {rec['load_start']} at the start, {rec['load_end']:.2f} at the end"
            if "load_start" in rec and "load_end" in rec else "")
    return ([f"CI time (build_scripts/test.sh): {s // 60} min {s % 60} s wall, "
             f"{rec['workers']} workers, exit code {rec['exit']} ({rec['date']}{load})"]
            + ([f"  {rec['note']}"] if rec.get("note") else []))


def main() -> int:
    print("\n".join(mutation_lines() + coverage_lines() + ci_lines()))
    return 0


if __name__ == "__main__":
    sys.exit(main())
