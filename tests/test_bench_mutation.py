"""bench/mutation.py's --sample arithmetic: the draw, the interval and the module's estimate.

- Wilson's score interval (E. B. Wilson, JASA 22, 1927) against scipy.stats.binomtest's
  proportion_ci(method="wilson"), which computes the same interval independently.
- The module's estimate against the stratified count written out by hand below.
"""
from __future__ import annotations

import importlib.util
import random
from pathlib import Path

import pytest
from scipy.stats import binomtest

_SPEC = importlib.util.spec_from_file_location(
    "bench_mutation", Path(__file__).resolve().parent.parent / "bench" / "mutation.py")
mutation = importlib.util.module_from_spec(_SPEC)
_SPEC.loader.exec_module(mutation)

M = "shakestill.fit.fitting.x_fit_steps__mutmut_"


@pytest.mark.parametrize("k, n", [(0, 1), (1, 1), (9, 10), (140, 150), (150, 150), (3, 17)])
def test_wilson_interval_is_scipys(k, n):
    # scipy.stats.binomtest(k, n).proportion_ci(0.95, "wilson"): the same interval, 1e-12.
    ci = binomtest(k, n).proportion_ci(confidence_level=0.95, method="wilson")
    assert mutation.wilson(k, n) == pytest.approx((ci.low, ci.high), abs=1e-12)


def test_no_counted_mutant_says_nothing():
    # 0 of 0: every proportion is possible (common practice, no source).
    assert mutation.wilson(0, 0) == (0.0, 1.0)


def test_the_draw_is_a_seeded_random_subset():
    # random.Random(seed).sample over the sorted names, taken again here: the same names for
    # the same seed whatever order they come in, all of them when fewer than asked.
    names = [f"{M}{i}" for i in range(300)]
    shuffled = names[::-1]
    got = mutation.draw(shuffled, 150, 5)
    assert got == sorted(random.Random(5).sample(sorted(names), 150))
    assert len(set(got)) == 150 and set(got) <= set(names)
    assert mutation.draw(names, 150, 6) != got
    assert mutation.draw(names[:7], 150, 5) == sorted(names[:7])


def test_the_module_estimate_counts_the_stratum_by_the_sample():
    # Outside the stratum: 90 killed, 10 survived of which one judged equivalent (90 of 99
    # non-equivalent). Stratum of 400 untested, 20 drawn: 16 killed, 2 survived,
    # 2 no tests (left out): 18 counted, so the stratum counts as 400 * 18 / 20 = 360 mutants
    # killed in the proportion 16 / 18. Estimate (90 + 360 * 16/18) / (99 + 360) by hand.
    equivalent = next(iter(mutation.EQUIVALENT))
    outside = {f"{M}a{i}": "killed" for i in range(90)}
    outside.update({f"{M}b{i}": "survived" for i in range(9)})
    outside[equivalent] = "survived"
    stratum = [f"{M}s{i}" for i in range(400)]
    drawn = stratum[:20]
    status = dict(outside)
    status.update({k: "not checked" for k in stratum})
    status.update({k: "killed" for k in drawn[:16]})
    status.update({k: "survived" for k in drawn[16:18]})
    status.update({k: "no tests" for k in drawn[18:]})
    r = mutation.sampled(status, {"seed": 1, "names": drawn, "stratum": stratum})
    assert (r["killed"], r["counted"], r["drawn"], r["stratum"]) == (16, 18, 20, 400)
    assert r["score"] == pytest.approx(16 / 18, rel=1e-15)
    assert r["module_estimate"] == pytest.approx((90 + 320) / (99 + 360), rel=1e-15)
    ci = binomtest(16, 18).proportion_ci(confidence_level=0.95, method="wilson")
    assert r["ci95"] == pytest.approx([ci.low, ci.high], abs=1e-12)
    assert r["module_ci95"] == pytest.approx(
        [(90 + 360 * ci.low) / 459, (90 + 360 * ci.high) / 459], abs=1e-12)
    assert r["sampled"] is True


def test_function_of_names_the_mutated_function():
    # mutmut's names (its trampoline: x_<function>__mutmut_<i>, xǁ<Class>ǁ<method>__mutmut_<i>),
    # as they appear in build/mutation/status.json; the function read off by hand.
    assert mutation.function_of("shakestill.equilibria.lines.x__end_point__mutmut_3") == \
        "_end_point"
    assert mutation.function_of("shakestill.numerics.hill.x_multipliers_from_trace__mutmut_12") \
        == "multipliers_from_trace"
    assert mutation.function_of("shakestill.equilibria.lines.xǁProbeǁ__call____mutmut_19") == \
        "Probe.__call__"
    assert mutation.function_of("shakestill.equilibria.lines.x_split__mutmut_1") != "_split"
