"""Mutation score of the engine's analysis modules with mutmut (PyPI), and the survivors.

    python bench/mutation.py                 # every listed module, the fast engine tests
    python bench/mutation.py --modules equilibria/estimates.py equilibria/check.py
    python bench/mutation.py --report        # print the last run's score and survivors again
    python bench/mutation.py --survivors     # the last run's survivors again, on today's tests
    python bench/mutation.py --resume        # carry on a stopped run, on today's tests
    python bench/mutation.py --survivors --resume --modules fit/fitting.py   # both, one module
    python bench/mutation.py --sample 150 --seed 1 --modules fit/fitting.py  # a random 150 of
                                             # its untested mutants, the score with its 95% interval
    python bench/mutation.py --sample 40 --seed 21 --modules equilibria/lines.py \
        --functions _end_point _split      # a draw from those functions' mutants only
    python bench/pinned.py                   # every module's last score, coverage, CI time

mutmut expects the package under ./ or src/; the engine lives in pycore/. So this script
stages a copy of the working tree's engine as build/mutation/src/shakestill with the tests
and a pyproject.toml that configures mutmut, runs `mutmut run` there (it prints progress),
and prints the score: killed / (killed + survived + timeout-free others), with every survivor
by name. Survivors judged equivalent are listed, with why, in DEVELOPERS.md ("Mutation score
and coverage"); the score printed here counts them as survivors (the raw score) and again
without the ones listed in EQUIVALENT below.

Slow on two cores (hours for every module): not part of CI. Pass --jobs to use more cores.
"""

from __future__ import annotations

import argparse
import json
import math
import os
import random
import re
import shutil
import subprocess
import sys
import tomllib
from datetime import date
from pathlib import Path

TOP = Path(__file__).resolve().parent.parent
STAGE = TOP / "build" / "mutation"
# Each run's figures per module (committed, so `bench/pinned.py` prints the last runs).
SCORES = TOP / "bench" / "figures" / "mutation"
STATUS = STAGE / "status.json"  # every mutant's last result over the stage's passes
SAMPLE = STAGE / "sample.json"  # the last --sample draw per module: its stratum and its names
Z95 = 1.959963984540054  # the standard normal's 97.5% quantile (two-sided 95%)

# The analysis modules issue 12 names (stability/floquet, estimates, check, windows, lines,
# chart, runup, hill, loads, fit), and the numerics the stability rests on.
MODULES = [
    "equilibria/floquet.py", "equilibria/lines.py", "equilibria/windows.py",
    "equilibria/estimates.py", "equilibria/check.py", "equilibria/chart.py",
    "equilibria/chart_rows.py", "equilibria/chart_modes.py", "equilibria/chart_columns.py",
    "equilibria/confirm.py", "equilibria/runup.py", "equilibria/ramp.py", "numerics/hill.py",
    "motion/loads.py",
    "fit/fitting.py",
    # the chain's stability engine since 2026-12-05 (the Taylor cycle, its eigenvalues) and
    # the scans' 2 x 2 traces
    "equilibria/cycle.py", "numerics/taylor.py", "numerics/real_qr.py", "numerics/magnus.py",
]
# The fast engine tests that exercise those modules (the slow long-run cases and the
# Pyodide/browser passes are left out: each mutant re-runs the tests that reach it).
TESTS = [
    "tests/test_chart_fast.py",
    "tests/test_check_fields.py", "tests/test_estimates_modes.py", "tests/test_windows.py",
    "tests/test_ref_kapitza.py",
    "tests/test_ref_mathieu.py", "tests/test_hill.py", "tests/test_ref_crank.py",
    "tests/test_ref_monodromy.py", "tests/test_loads.py", "tests/test_fit.py",
    "tests/test_stability_chart.py", "tests/test_runup.py", "tests/test_runup_paths.py",
    "tests/test_modal_charts.py",
    "tests/test_modes.py", "tests/test_cli_paths.py", "tests/test_confirm_path.py",
]
# Survivors judged equivalent (the mutant computes the same numbers), by mutmut's name, with
# the reason; DEVELOPERS.md carries the same list.
_C, _E = "shakestill.equilibria.check.", "shakestill.equilibria.estimates."
_W = "shakestill.equilibria.windows.x_window__mutmut_"
_L = "shakestill.equilibria.lines.x_"
_TWO_N = ("a chain of N links has 2N multipliers, never 3: len < 3, <= 3 and < 4 split the "
          "counts 2, 4, 6 alike")
_UNIT = "direction is 1.0 or -1.0 exactly"
_S0 = ("window() sets s0 = probe(here) before it reads it (equilibria/windows.py): the "
       "argument passed, dropped or None, is never read")
_UNSTABLE = ("window() returns no interval and no ends when its probe finds the operating "
             "point unstable, and its probe evaluates the same model, equilibrium and point "
             "as stability(): the stable test only repeats that")
EQUIVALENT: dict[str, str] = {
    _C + "x__equilibrium__mutmut_11": _S0,
    _C + "x__equilibrium__mutmut_15": _S0,
    _C + "x__equilibrium__mutmut_22": _S0,
    _C + "x__equilibrium__mutmut_26": _S0,
    _C + "x__equilibrium__mutmut_48": _UNSTABLE,
    _C + "x__equilibrium__mutmut_52": _UNSTABLE,
    _C + "x_check__mutmut_82": _UNSTABLE + " (an unstable point has no margins to take the "
                                           "minimum of)",
    _E + "x_estimates__mutmut_60": "fast >= weight / 2 for >: at equality 2 * fast == weight "
                                   "exactly, acos(1.0) == 0.0, the other branch's value",
    _E + "x_estimates__mutmut_99": "min_speed_mode=1 dropped: the dataclass default is 1",
    _E + "x_rms_velocity_per_rad_s__mutmut_2": "the sine shortcut skipped: the 256-phase mean "
        "of sin^2 is exactly 1/2, so the sampled path gives the same RMS to rounding (1e-16)",
    _E + "x_rms_velocity_per_rad_s__mutmut_3": "as mutmut_2 (the sine shortcut skipped)",
    _W + "11": "the notes start as None instead of '': a note is only listed when its end was "
               "clipped, and the join skips empty notes (if n), so None and '' give the same "
               "message",
    _L + "_closeness__mutmut_2": _TWO_N,
    _L + "_closeness__mutmut_3": _TWO_N,
    _L + "stroke_points__mutmut_8": "stop >= start for >: at stop == start the loop's "
                                    "condition (stop - v) * direction > 0 is false for either "
                                    "direction: no points either way",
    _L + "stroke_points__mutmut_13": "(stop - v) / direction for * direction: " + _UNIT +
                                     ", so dividing by it is multiplying by it",
    _L + "stroke_points__mutmut_32": "direction >= 0 for > 0: " + _UNIT + ", never 0",
    _L + "edge_between__mutmut_68": "b[0] >= a[0] for >: the two ends of a bracket are two "
                                    "different points of the walk, never equal",
    _W + "98": "probe(None) for probe(here): the probe's point(None) passes speed_rpm=None "
               "(or stroke_m=None) to stability(), which means the model's own operating "
               "point, i.e. here: the same numbers and the same count",
}

# motion/loads.py, fit/fitting.py, floquet.py, hill.py (issue 12, second pass)
_L = "shakestill.motion.loads."
EQUIVALENT.update({
    _L + "x_cycle_forces__mutmut_1": "the default of axis_tilt_rad changed: its one caller, "
                                     "loads(), always passes the rig's tilt",
    _L + "x_cycle_forces__mutmut_40": "drag_forces() called with no drag (`or True`): it loops "
                                      "over m.drag, so with none it returns [], the else value",
    _L + "x_cycle_forces__mutmut_194": "the row's pivot_accel_m_s2 key renamed: loads() never "
                                       "reads that key of a row (the reply's peak comes from "
                                       "drive.peak_accel_m_s2)",
    _L + "x_cycle_forces__mutmut_195": "as mutmut_194 (the unread row key renamed)",
})

# numerics/hill.py and equilibria/floquet.py (issue 12, third pass)
_H = "shakestill.numerics.hill.x_"
_FIRST = ("the first row of the recurrence sets f_prev, f and prev_scale before any is read "
          "(the `first` branch), so their starting values are never read")
EQUIVALENT.update({
    _H + "_continuant__mutmut_3": "|c|^2 as (c * conj c).real for a real c too: float.conjugate() "
                                  "is the float itself and float.real is itself, so c * c exactly",
    _H + "_continuant__mutmut_7": _FIRST,
    _H + "_continuant__mutmut_8": _FIRST,
    _H + "_continuant__mutmut_9": _FIRST,
    _H + "_continuant__mutmut_33": "first = None for False: both are false for the `if first`",
    _H + "_sinhc__mutmut_9": "abs(x) <= 1e-4 for <: at x = 1e-4 exactly the series 1 + x^2/6 and "
                             "sinh(x)/x differ by x^4/120 ~ 1e-18, below one rounding of 1.0",
    _H + "_sinc__mutmut_9": "abs(x) <= 1e-4 for <: as _sinhc's (1 - x^2/6 and sin(x)/x)",
})


# equilibria/floquet.py (issue 12, 2026-12-05)
_Q = "shakestill.equilibria.floquet.x_"
EQUIVALENT.update({
    _Q + "_hill_form_of__mutmut_31": "the sine coefficients' imaginary part with its sign turned: "
        "every theta_n conjugated is the real equation run backwards, p(-z), whose monodromy is "
        "similar to the inverse of p(z)'s; a 2 x 2 of determinant 1 and its inverse have one trace",
    _Q + "_hill_form_of__mutmut_38": "imag == 1.0 for == 0.0 keeps a real drive's coefficients "
        "complex: hill_trace's complex path gives the same real trace (tests/test_hill_parts.py)",
    _Q + "_hill_stability__mutmut_4": "one link through mode_forms: its one sway mode is the link "
        "itself (X = 1 / sqrt(J)), the same Hill form, and the method named by `modal` still",
    _Q + "_hill_stability__mutmut_18": "rows starts at 1 for 0: it is max'ed with R, and R >= 8 "
        "(default_truncation's least) or a given truncation >= 1",
    _Q + "_hill_stability__mutmut_44": ">= MAX_HILL_WORK for >: (2R + 1)(2H + 1)^2 is odd and the "
        "limit 4,000,000 even, so they are never equal",
})


# equilibria/runup.py (issue 12, mutrun)
_R = "shakestill.equilibria.runup.x_"
EQUIVALENT.update({
    _R + "_log_integral__mutmut_5": "peak starts at 1.0 for 0.0: every Gauss node lies inside an "
                                    "unstable interval, where the largest multiplier exceeds 1, "
                                    "so the maximum over the nodes is the same",
    _R + "_log_integral__mutmut_23": "s = a + half (1 + cos theta) for (1 - cos theta): the "
                                     "Gauss-Legendre nodes and weights are symmetric (x -> -x maps "
                                     "theta to pi - theta), so the same terms are summed in the "
                                     "reverse order (equal to rounding, 1e-16)",
    _R + "_log_integral__mutmut_37": "verify=None for False: stability() reads it only as a "
                                     "truth value (`if verify`, `not verify`), None and False "
                                     "alike",
    _R + "crossings__mutmut_22": "stroke = None: the probe passes stroke_m=None to stability(), "
                                 "which means the model's own stroke, rig.drive.stroke_m",
    _R + "_min_rate__mutmut_84": "low_x = 1 / fast also when fast is inf: 1 / math.inf is "
                                 "0.0, the else value",
    _R + "_min_rate__mutmut_87": "fast <= math.inf for <: true for inf too, and then 1 / inf "
                                 "is 0.0, the else value (as mutmut_84)",
})


# equilibria/lines.py, second pass (issue 12)
_L = "shakestill.equilibria.lines."
_ONE_HARMONIC = ("with every form of one harmonic, steps is never read: _affordable_harmonics "
                 "then returns 1, which is len(theta), and needed_harmonics with most = "
                 "len(theta) never answers None, so Settings never takes steps")
EQUIVALENT.update({
    _L + "xǁ_Foundǁ__init____mutmut_1": "the exception's args set to None: _hidden_point "
                                              "reads found.x and found.s, never its args",
    _L + "x__affordable_harmonics__mutmut_24": "cost >= for >: HILL_BAND_US (2 R + 1)(2 k + 3)^2 "
        "is 0.25 times an odd number, never equal to RK_STEP_US x steps = 12 x an integer",
    _L + "x_scan_settings__mutmut_25": "steps = '' for None: " + _ONE_HARMONIC,
    _L + "x_scan_settings__mutmut_27": "len(theta) >= 1 for > 1 (steps sized for one harmonic "
                                       "too): " + _ONE_HARMONIC,
    _L + "x_scan_settings__mutmut_40": "rows start at 1 for 0: every form sets rows = "
                                       "max(rows, default_truncation(...)) >= 8 before it is read",
    _L + "x_scan_settings__mutmut_16": "one link taken by its one sway mode (mode_forms for "
        "hill_form): for one link the mode is the link, J = 1 with c/J and 1/L = K/J, the same "
        "Hill form to rounding",
    _L + "x_speed_points__mutmut_6": "stop >= start for >: at stop == start the loop's condition "
                                     "(stop - v) * direction > 0 is false either way",
    _L + "x_speed_points__mutmut_19": "(stop - v) / direction for * direction: " + _UNIT,
    _L + "x_speed_points__mutmut_52": "direction >= 0 for > 0: " + _UNIT + ", never 0",
    _L + "xǁProbeǁ__call____mutmut_19": "verify=None for False: stability() only tests "
                                               "verify for truth (if verify / not verify)",
})


# fit/fitting.py (issue 12)
_F = "shakestill.fit.fitting.x_"
_WORK = ("the default of res.work.get('simulations', ...) changed: the one FitResult ever made "
         "(fit_steps') always carries work['simulations'], so the default is never read")
_FEW = ("the m <= p guard never fires: a log has at least 10 rows, so m >= 10 n residuals, "
        "while p = k + 2 n <= 3 n + 2 n (each number once, three per link at most)")
EQUIVALENT.update({
    _F + "fit_dict__mutmut_40": _WORK,
    _F + "fit_dict__mutmut_42": _WORK,
    _F + "fit_dict__mutmut_45": _WORK,
    _F + "_std_errors__mutmut_2": "m < p for m <= p: " + _FEW,
    _F + "_std_errors__mutmut_3": "the guard's return changed: " + _FEW,
    _F + "fit_steps__mutmut_87": "iteration starts at 1 for 0: the loop runs at least once "
                                 "(max_iterations >= 1) and sets it before it is read",
    _F + "fit_steps__mutmut_88": "jac starts as '' for None: the loop runs at least once and "
                                 "sets jac = [] before `if jac` reads it",
    _F + "_std_errors__mutmut_24": "cov_ii > 0 for >= 0: the diagonal of the inverse of a "
                                   "positive definite J^T J is strictly positive, never 0.0",
    _F + "_std_errors__mutmut_13": "the m <= p guard's return as [nan] / p: " + _FEW,
    _F + "fit_steps__mutmut_253": "gain -2.0 for -1.0 when the predicted decrease is not "
                                  "positive: gain is read only as gain > 0 and, past that "
                                  "test, in the damping update; both values fail the test",
    _F + "_profile__mutmut_13": "table_profile's where=None: it reads `where` only to name a "
                                "problem, and the log reader has already refused what it "
                                "checks (times that do not increase, speeds not finite or "
                                "below 0); the rows are thinned to at most MAX_KNOTS",
    _F + "_profile__mutmut_16": "where= dropped (its default label): as mutmut_13",
    "shakestill.fit.fitting.xǁ_Modelǁangles__mutmut_32": "the run's reference dropped (the "
        "Scenario default): it places only the event bands, stop_at_fall is off, and the fit "
        "reads the frames' absolute angles and success, never the events",
})

# motion/loads.py, second pass: chain_model=m dropped or None in either run
_SAME_MODEL = ("simulate() builds `chain_model or model(rig)`: the same model of the same rig "
               "that loads() passes (a saving, not a number)")
EQUIVALENT.update({f"shakestill.motion.loads.x_loads__mutmut_{i}": _SAME_MODEL
                   for i in (91, 94, 114, 117)})

# equilibria/chart_columns.py (issue 12, mutchart3)
EQUIVALENT.update({
    "shakestill.equilibria.chart_columns.x__trace__mutmut_30": "the exact probe's modal=None "
        "for False: lines.scan_settings resolves None to `several and modes_decouple(model)`, "
        "which is False on the coupled chain this branch serves (and None stays None)",
    "shakestill.equilibria.chart_columns.x__trace__mutmut_79": "the modal probe made for an "
        "uncoupled rig too: scan_settings gives it the exact probe's settings (one link: "
        "`modal` is read only with several links; several decoupled links: None resolves to "
        "True), and only that probe is asked and counted",
})

# equilibria/chart_modes.py and chart_rows.py (issue 12, mutchart4)
EQUIVALENT.update({
    "shakestill.equilibria.chart_modes.x_chain_row__mutmut_2": "first = rows[1] for rows[0]: "
        "chain_row reads only y, speed_min and speed_max of it, and every mode's row j has the "
        "same three (the same ys; mode_models starts each mode at the chain's first speed, at "
        "or above each mode's own scan floor; an accel row's first speed comes from the same "
        "drive and stroke limit)",
    "shakestill.equilibria.chart_rows.x_row_settings__mutmut_4": "modal passed as None: its "
        "callers pass None (scan_row) or False on a chain whose dampers couple the modes "
        "(chain_row), and scan_settings resolves None to `several and modes_decouple(model)`, "
        "False there",
    "shakestill.equilibria.chart_modes.x_modal_row_steps__mutmut_30": "the row index read "
        "from the second mode's step: every mode's walker is _row_steps over the same ys and "
        "the same _row_order, so all yield the same index at each step",
    "shakestill.equilibria.chart_rows.x__follow__mutmut_77": "the spot check's span searched "
        "over range(len(cuts) + 1): next() stops at the first match, and one exists before "
        "the last index (x is clamped to [lo, hi], and cuts runs from lo through the edges, "
        "each found inside its bracket past the one before, to hi)",
})


# Today's new code (mutramp, 2026-12-05): ramp.py, runup.py's end-speed verdict, chart_modes'
# _unpredicted/_merged/damper_mixing/modes_predict/damped_hanging_frequencies_hz, lines'
# _end_point/_split, real_qr's _balance (hill's multipliers_from_trace past 1e150 was
# simplified after the run to trace and 1/trace: its equivalents, mutants of a factor that
# was exactly 1.0 there, are gone with the factor)
EQUIVALENT.update({
    "shakestill.equilibria.chart_modes.x_damped_hanging_frequencies_hz__mutmut_12": "the "
        "companion's first n rows padded to 3n columns with zeros: real_eigvals copies the "
        "rows and reads h[i][j] only for j < len(h) = 2n (balance, Hessenberg, QR), so the "
        "padding is never read",
    "shakestill.numerics.real_qr.x__balance__mutmut_2": "done = None for False: read only "
        "by `while not done`, where None and False are alike",
})


def stage(modules: list[str], tests: list[str]) -> None:
    if STAGE.exists():
        shutil.rmtree(STAGE)
    (STAGE / "src").mkdir(parents=True)
    shutil.copytree(TOP / "pycore" / "shakestill", STAGE / "src" / "shakestill",
                    ignore=shutil.ignore_patterns("__pycache__"))
    shutil.copytree(TOP / "tests", STAGE / "tests",
                    ignore=shutil.ignore_patterns("__pycache__", "browser"))
    present = [t for t in tests if (TOP / t).is_file()]
    only = ", ".join(f'"src/shakestill/{m}"' for m in modules)
    args = ", ".join(f'"{t}"' for t in present)
    (STAGE / "pyproject.toml").write_text(f"""\
[tool.mutmut]
source_paths = ["src"]
only_mutate = [{only}]
pytest_add_cli_args_test_selection = [{args}]
pytest_add_cli_args = ["-p", "no:cacheprovider", "-m", "not pyodide and not browser and not slow"]
use_git_change_detection = false

[tool.pytest.ini_options]
markers = ["pyodide: -", "browser: -", "slow: -"]
""")


def staged_tests() -> list[str] | None:
    conf = STAGE / "pyproject.toml"
    if not conf.is_file():
        return None
    return tomllib.loads(conf.read_text())["tool"]["mutmut"]["pytest_add_cli_args_test_selection"]


def add_tests(staged: list[str], more: list[str]) -> list[str]:
    """The staged run's test files and ``more`` (mutmut finds the new tests and maps them)."""
    tests = staged + [t for t in more if t not in staged and (TOP / t).is_file()]
    if tests != staged:
        conf = STAGE / "pyproject.toml"
        args = ", ".join(f'"{t}"' for t in tests)
        conf.write_text(re.sub(r"(?m)^pytest_add_cli_args_test_selection = \[.*\]$",
                               f"pytest_add_cli_args_test_selection = [{args}]",
                               conf.read_text()))
    return tests


def results() -> dict[str, str]:
    """Each mutant's status: mutmut's listing over the stage's earlier passes.

    mutmut forgets every result when the test files change (a --survivors or --resume pass
    with new tests), then lists only the mutants that pass re-ran; the statuses kept in
    STATUS carry the earlier passes, so the score counts every mutant once, at its last
    result."""
    out = subprocess.run([sys.executable, "-m", "mutmut", "results", "--all", "true"],
                         cwd=STAGE, capture_output=True, text=True)
    status = json.loads(STATUS.read_text()) if STATUS.is_file() else {}
    for line in out.stdout.splitlines():
        m = re.match(r"\s*(\S+): (.+)$", line)
        if m and (m.group(2).strip() != "not checked" or m.group(1) not in status):
            status[m.group(1)] = m.group(2).strip()
    STATUS.write_text(json.dumps(status, indent=0, sort_keys=True) + "\n")
    return status


def module_of(name: str) -> str:
    """'shakestill.motion.loads.x_cycle_forces__mutmut_3' -> 'motion/loads.py'."""
    dotted = re.match(r"(.*?)\.x[_ǁ]", name).group(1)
    return "/".join(dotted.split(".")[1:]) + ".py"


def score(status: dict[str, str]) -> dict:
    killed = sum(1 for s in status.values() if s in ("killed", "timeout"))
    survivors = sorted(k for k, s in status.items() if s == "survived")
    judged = [k for k in survivors if k in EQUIVALENT]
    counts: dict[str, int] = {}
    for s in status.values():
        counts[s] = counts.get(s, 0) + 1
    return {"mutants": len(status), "by_status": counts, "killed": killed, "survived": len(survivors),
            "equivalent": len(judged), "tested": killed + len(survivors),
            "survivors": [k for k in survivors if k not in EQUIVALENT]}


def function_of(name: str) -> str:
    """mutmut's mutant name -> the function mutated: '..lines.x__end_point__mutmut_3' ->
    '_end_point', '..lines.xǁProbeǁ__call____mutmut_19' -> 'Probe.__call__'."""
    inner = re.match(r".*?\.x(?:_|ǁ)(.*)__mutmut_\d+$", name).group(1)
    return inner.replace("ǁ", ".")


def draw(untested: list[str], n: int, seed: int) -> list[str]:
    """A random n of the untested mutants (all of them when fewer), the same for the same seed."""
    return sorted(random.Random(seed).sample(sorted(untested), min(n, len(untested))))


def wilson(k: int, n: int, z: float = Z95) -> tuple[float, float]:
    """Wilson's score interval for a binomial proportion k / n (E. B. Wilson, JASA 22, 1927):
    unlike p +- z sqrt(p (1 - p) / n) it stays inside [0, 1] and is not empty at k = n."""
    if n == 0:
        return 0.0, 1.0
    p, zz = k / n, z * z
    mid = (p + zz / (2 * n)) / (1 + zz / n)
    half = z / (1 + zz / n) * math.sqrt(p * (1 - p) / n + zz / (4 * n * n))
    return max(0.0, mid - half), min(1.0, mid + half)


def sampled(status: dict[str, str], drawn: dict) -> dict:
    """A --sample draw's score with its 95% interval, and the module's score estimated from it.

    The sample counts its killed against its killed and survivors not judged equivalent
    (mutants no test reached are left out, as in score()). The module's estimate counts the
    mutants outside the stratum drawn from (the untested at the draw) as they are, and the
    stratum by the sample's proportion, its size scaled by the share of the sample counted."""
    names, stratum = drawn["names"], set(drawn["stratum"])
    got = [status.get(k, "not checked") for k in names]
    killed = sum(s in ("killed", "timeout") for s in got)
    judged = sum(s == "survived" and k in EQUIVALENT for k, s in zip(names, got))
    counted = killed + sum(s == "survived" for s in got) - judged
    rest = {k: s for k, s in status.items() if k not in stratum}
    k_out = sum(s in ("killed", "timeout") for s in rest.values())
    t_out = k_out + sum(s == "survived" and k not in EQUIVALENT for k, s in rest.items())
    size = len(stratum) * counted / max(len(names), 1)
    lo, hi = wilson(killed, counted)

    def module(p: float) -> float:
        return (k_out + p * size) / max(t_out + size, 1e-300)

    p = killed / max(counted, 1)
    return {"sampled": True, "seed": drawn["seed"], "drawn": len(names),
            "stratum": len(stratum), "killed": killed, "counted": counted,
            "equivalent": judged, "score": p, "ci95": [lo, hi],
            "module_estimate": module(p), "module_ci95": [module(lo), module(hi)]}


def save(status: dict[str, str], tests: list[str]) -> None:
    """One JSON record per module mutated in this run: bench/figures/mutation/<module>.json."""
    by_module: dict[str, dict[str, str]] = {}
    for name, s in status.items():
        by_module.setdefault(module_of(name), {})[name] = s
    SCORES.mkdir(parents=True, exist_ok=True)
    for module, st in by_module.items():
        if not any(s in ("killed", "timeout", "survived") for s in st.values()):
            continue  # not run (yet)
        rec = {"module": module, "date": date.today().isoformat(), "tests": tests, **score(st)}
        if module in draws():
            rec["sample"] = sampled(st, draws()[module])
        path = SCORES / (module.replace("/", "__") + ".json")
        path.write_text(json.dumps(rec, indent=1) + "\n")


def report(tests: list[str] | None = None) -> int:
    status = results()
    if tests is not None:
        save(status, tests)
    counts: dict[str, int] = {}
    for s in status.values():
        counts[s] = counts.get(s, 0) + 1
    killed = counts.get("killed", 0) + counts.get("timeout", 0)
    survivors = sorted(k for k, s in status.items() if s == "survived")
    judged = [k for k in survivors if k in EQUIVALENT]
    tested = killed + len(survivors)
    print("mutants by status:", json.dumps(counts, sort_keys=True))
    if tested:
        print(f"mutation score: {killed} killed of {tested} tested = {100 * killed / tested:.1f}%")
        live = tested - len(judged)
        print(f"without {len(judged)} judged equivalent: {killed} of {live} = "
              f"{100 * killed / max(live, 1):.1f}%")
    for k in survivors:
        print("survived:", k, "(equivalent: " + EQUIVALENT[k] + ")" if k in EQUIVALENT else "")
    for module, drawn in sorted(draws().items()):
        mine = {k: s for k, s in status.items() if module_of(k) == module}
        r = sampled(mine, drawn)
        only = drawn.get("functions")
        print(f"SAMPLED {module}{' ' + '/'.join(only) if only else ''} (seed {r['seed']}, "
              f"{r['drawn']} of {r['stratum']} untested drawn): {r['killed']} killed of {r['counted']} non-equivalent tested = "
              f"{100 * r['score']:.1f}%, 95% interval {100 * r['ci95'][0]:.1f}-"
              f"{100 * r['ci95'][1]:.1f}% (Wilson); module estimate "
              f"{100 * r['module_estimate']:.1f}% ({100 * r['module_ci95'][0]:.1f}-"
              f"{100 * r['module_ci95'][1]:.1f}%)")
    return 0


def draws() -> dict[str, dict]:
    """The last --sample draw of each module in the stage (none before the first)."""
    return json.loads(SAMPLE.read_text()) if SAMPLE.is_file() else {}


def staged_modules() -> list[str]:
    conf = STAGE / "pyproject.toml"
    if not conf.is_file():
        return []
    only = tomllib.loads(conf.read_text())["tool"]["mutmut"]["only_mutate"]
    return [m.removeprefix("src/shakestill/") for m in only]


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--modules", nargs="+", default=MODULES,
                    help="paths under pycore/shakestill (with --survivors: only theirs)")
    ap.add_argument("--tests", nargs="+", default=None,
                    help="test files (default: TESTS); with --survivors/--resume they join "
                         "the staged run's files")
    ap.add_argument("--jobs", type=int, default=2, help="mutmut --max-children (default 2)")
    ap.add_argument("--report", action="store_true", help="only print the last run's results")
    ap.add_argument("--survivors", action="store_true",
                    help="re-test the last run's survivors (not those judged equivalent) "
                         "with the working tree's tests")
    ap.add_argument("--resume", action="store_true",
                    help="carry on the staged run (mutants not yet tested) with today's tests")
    ap.add_argument("--sample", type=int, metavar="N",
                    help="run a random N of each module's untested mutants (with --seed; the "
                         "module is staged first when the stage lacks it) and print the score "
                         "with its binomial 95%% interval, marked SAMPLED")
    ap.add_argument("--seed", type=int, help="the --sample draw's seed (required with it)")
    ap.add_argument("--functions", nargs="+", metavar="NAME",
                    help="with --sample: in each module that has some of these functions "
                         "(a method as Class.name), draw only from their mutants (the stratum, "
                         "and so the estimate, is theirs); a module with none is drawn whole")
    a = ap.parse_args()
    if a.report:  # records the staged run's figures too (a run stopped part way included)
        return report(staged_tests())
    env = {k: v for k, v in os.environ.items() if k != "PYTHONPATH"}  # mutmut's src/ only
    env["PYTHONPATH"] = str(STAGE / "tests")  # the tests' own helpers (refsolvers)
    if a.sample is not None:
        if a.seed is None or a.resume or a.sample < 1:
            ap.error(f"--sample: {a.sample} needs N >= 1 and --seed, and not --resume (a "
                     "sample is drawn from the mutants --resume would run all of)")
        if not set(a.modules) <= set(staged_modules()):
            a.tests = a.tests or TESTS
            stage(a.modules, a.tests)
            # mutmut names the mutants only when it makes them: a run of a name that matches
            # none makes them (and maps the tests) and tests nothing
            subprocess.run([sys.executable, "-m", "mutmut", "run", "--max-children",
                            str(a.jobs), "shakestill.none_yet"], cwd=STAGE, env=env)
    names: list[str] = []
    if a.survivors or a.resume or a.sample:  # new tests: copy them in; re-test the survivors,
        # or carry on the survivors and the mutants no test reached (a new test file may
        # reach them now) named, not left to mutmut: new test files make it forget every
        # result, and it would re-run them all (the earlier results stay in STATUS)
        wanted = (("survived", "no tests") if a.survivors else ()) + \
            (("not checked",) if a.resume else ())
        status = results()
        names = sorted(k for k, s in status.items()  # not the survivors judged equivalent:
                       if s in wanted and module_of(k) in a.modules  # no test can kill them
                       and not (s == "survived" and k in EQUIVALENT))
        if a.sample:
            drawn = draws()
            for module in a.modules:
                mine = [k for k in status if module_of(k) == module]
                only = sorted({function_of(k) for k in mine} & set(a.functions or []))
                untested = [k for k in mine if status[k] == "not checked"
                            and (not only or function_of(k) in only)]
                picked = draw(untested, a.sample, a.seed)
                drawn[module] = {"seed": a.seed, "names": picked, "stratum": sorted(untested),
                                 "functions": only}
                names = sorted(set(names) | set(picked))
            SAMPLE.write_text(json.dumps(drawn, indent=0) + "\n")
        a.tests = add_tests(staged_tests() or TESTS, a.tests or [])
        for where in (STAGE / "tests", STAGE / "mutants" / "tests"):
            shutil.copytree(TOP / "tests", where, dirs_exist_ok=True,
                            ignore=shutil.ignore_patterns("__pycache__", "browser"))
        # mutmut maps a new test name to what it calls but keeps its old map of a changed
        # test: drop the map so that it traces every test again (one pass of the tests)
        (STAGE / "mutants" / "mutmut-stats.json").unlink(missing_ok=True)
        if not names:
            return report(a.tests)
    else:
        a.tests = a.tests or TESTS
        stage(a.modules, a.tests)
    run = subprocess.run([sys.executable, "-m", "mutmut", "run", "--max-children", str(a.jobs),
                          *names], cwd=STAGE, env=env)
    if run.returncode not in (0, 1):
        print(f"mutmut run ended with {run.returncode}", file=sys.stderr)
    return report(a.tests)


if __name__ == "__main__":
    sys.exit(main())
