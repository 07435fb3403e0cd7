"""Apply each deliberate fault named in issue 12 to the engine, run the tests that must catch
it, report which tests failed, and restore the file (always, even on error).

    PYTHONPATH=pycore python bench/faults.py

Prints one line per fault: the fault, whether it was killed, and the failing tests. A fault
that survives is a hole in the suite. Not part of CI (it edits the source while it runs).
"""

from __future__ import annotations

import re
import subprocess
import sys
from pathlib import Path

TOP = Path(__file__).resolve().parent.parent
ENGINE = TOP / "pycore" / "shakestill"

# (name, file, original text, faulty text, tests to run)
FAULTS = [
    ("swapped speed margins (down <-> up)", "equilibria/check.py",
     '"speed_down": _percent(op_speed, speed.low),\n            "speed_up": _percent(op_speed, speed.high),',
     '"speed_down": _percent(op_speed, speed.high),\n            "speed_up": _percent(op_speed, speed.low),',
     "tests/test_check_fields.py"),
    ("swapped stroke margins (down <-> up)", "equilibria/check.py",
     '"stroke_down": _percent(op_stroke, stroke.low),\n            "stroke_up": _percent(op_stroke, stroke.high),',
     '"stroke_down": _percent(op_stroke, stroke.high),\n            "stroke_up": _percent(op_stroke, stroke.low),',
     "tests/test_check_fields.py"),
    ("window end label flipped (edge <-> limit)", "equilibria/check.py",
     'return "edge" if is_edge else "limit"', 'return "limit" if is_edge else "edge"',
     "tests/test_check_fields.py"),
    ("report's low end label flipped", "render/report.py",
     'lo_kind = "stability edge" if ends[0] == "edge" else "rig limit"',
     'lo_kind = "rig limit" if ends[0] == "edge" else "stability edge"',
     "tests/test_check_fields.py"),
    ("factor 2 in the Kapitza minimum speed", "equilibria/estimates.py",
     "min_omega = math.sqrt(g * l_eq) / per_rad", "min_omega = math.sqrt(2 * g * l_eq) / per_rad",
     "tests/test_check_fields.py"),
    ("factor 2 in the hanging slow sway", "equilibria/estimates.py",
     "math.sqrt(v2 / l_eq ** 2 + g / l_eq)", "math.sqrt(v2 / l_eq ** 2 + 2 * g / l_eq)",
     "tests/test_check_fields.py"),
    ("factor 2 in the crank's RMS velocity branch", "equilibria/estimates.py",
     "return math.sqrt(total / _RMS_SAMPLES)", "return math.sqrt(2 * total / _RMS_SAMPLES)",
     "tests/test_check_fields.py"),
    ("knock estimate without the 2 of the kinetic energy", "equilibria/estimates.py",
     "math.sqrt(2 * barrier / p.inertia_about_pivot_kg_m2)",
     "math.sqrt(barrier / p.inertia_about_pivot_kg_m2)", "tests/test_check_fields.py"),
    ("peak acceleration in g off by standard gravity", "equilibria/check.py",
     '"peak_accel_g": peak / G0,', '"peak_accel_g": peak / 9.81,', "tests/test_check_fields.py"),
    ("close_to_edge threshold at 1%", "equilibria/check.py",
     "CLOSE_TO_EDGE_PERCENT = 10.0", "CLOSE_TO_EDGE_PERCENT = 1.0", "tests/test_check_fields.py"),
]


def main() -> int:
    survived = 0
    for name, rel, old, new, tests in FAULTS:
        path = ENGINE / rel
        source = path.read_text()
        assert source.count(old) == 1, f"{rel}: the text to break is not there once: {old!r}"
        try:
            path.write_text(source.replace(old, new))
            out = subprocess.run([sys.executable, "-m", "pytest", "-q", "-p", "no:cacheprovider",
                                  tests], cwd=TOP, capture_output=True, text=True)
        finally:
            path.write_text(source)
        failed = sorted(set(re.findall(r"^FAILED (\S+)", out.stdout, re.M)))
        killed = out.returncode != 0 and bool(failed)
        survived += not killed
        print(f"{'KILLED ' if killed else 'SURVIVED'} {name}")
        for test in failed:
            print(f"           by {test}")
    print(f"{len(FAULTS) - survived} of {len(FAULTS)} deliberate faults killed")
    return 1 if survived else 0


if __name__ == "__main__":
    sys.exit(main())
