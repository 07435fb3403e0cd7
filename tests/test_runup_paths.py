"""Run-up's parts called directly: crossings, the ramp, the minimum-rate search, runup() and
recommended_rate, against the references of tests/test_runup.py (the Mathieu tongue ends by
scipy.special.mathieu_a/b, quad over solve_ivp multipliers, the ramp's transfer matrix by
solve_ivp + numpy.svd). Direct calls, no CLI fixture: quick, and a mutation run (bench/
mutation.py) credits each test with what it calls (a module fixture's work is credited to the
first test that uses it only).
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest

import shakestill as ss
from shakestill.render.report import runup_text
from test_runup import (END, G, LENGTH, LIMITS, NOTE, RATE, REL, RUNDOWN, STROKE, R,
                        frozen_integral, max_multiplier, rig_data, tongue_rpm, transfer_gain)


def test_a_still_pivot_crosses_nothing_and_holds_nothing_upright():
    # stroke 0: no pivot acceleration, the floor is infinite, nothing is crossed: the empty
    # product 1, minimum rate 0 (hand, from the documented rule). One verdict at the end
    # speed each: hanging the undamped pendulum is held (ok); upright it falls, its
    # multiplier exp(sqrt(g / l) T) with T = 60 / END s (hand), so not ok.
    from shakestill.equilibria.runup import runup
    data = R.rig([R.link(LENGTH, 0.0, [(0.1, LENGTH)])], R.sine(0.0, END), limits=LIMITS)
    got = runup(ss.rig_from_dict(data), rate_rpm_s=RATE)
    assert got["low_speed_floor_rpm"] == math.inf and got["evaluations"] == 2
    assert (got["start_rpm"], got["end_rpm"]) == (0.0, END)  # from rest to the operating speed
    assert (got["rate_rpm_s"], got["factor"], got["stroke_m"]) == (RATE, 10.0, 0.0)  # as given
    for eq in ("hanging", "inverted"):
        assert got[eq]["crossings"] == [] and got[eq]["total_amplification"] == 1.0
        assert json.dumps(got[eq]["total_amplification"]) == "1.0"  # the JSON's empty product
        assert got[eq]["min_rate_rpm_s"] == 0.0
    assert got["hanging"]["held_at_end"] is True and got["hanging"]["ok"] is True
    assert "end_max_multiplier" not in got["hanging"]
    assert got["inverted"]["held_at_end"] is False and got["inverted"]["ok"] is False
    assert got["inverted"]["end_max_multiplier"] == pytest.approx(
        math.exp(math.sqrt(G / LENGTH) * 60 / END), rel=1e-9)
    text = runup_text(got)
    assert (f"but not held at {END:,.0f} rpm: a disturbance grows "
            f"x{math.exp(math.sqrt(G / LENGTH) * 60 / END):.3g} every cycle there") in text


@pytest.mark.parametrize("kwargs, words", [
    ({"rate_rpm_s": 0.0}, "rate_rpm_s: 0.0 must be a finite number above 0 rpm/s"),
    ({"rate_rpm_s": 0.5}, None),  # a slow ramp is allowed
    ({"rate_rpm_s": 1.0, "factor": 1.5}, None),  # any factor above 1
    ({"rate_rpm_s": 1.0, "end_rpm": 0.5}, None),  # any end above 0 rpm
    ({"rate_rpm_s": math.inf}, "rate_rpm_s: inf must be a finite number above 0 rpm/s"),
    ({"rate_rpm_s": 1.0, "factor": 1.0}, "factor: 1.0 must be a finite number above 1"),
    ({"rate_rpm_s": 1.0, "factor": math.nan}, "factor: nan must be a finite number above 1"),
    ({"rate_rpm_s": 1.0, "start_rpm": -1.0},
     "start_rpm and end_rpm: speeds must be at least 0 rpm"),
    ({"rate_rpm_s": 1.0, "end_rpm": 0.0}, "start_rpm and end_rpm: speeds must be at least 0 rpm"),
])
def test_bad_run_up_requests_are_named(kwargs, words):
    from shakestill.equilibria.runup import runup
    data = R.rig([R.link(LENGTH, 0.0, [(0.1, LENGTH)])], R.sine(0.0, END), limits=LIMITS)
    rig = ss.rig_from_dict(data)
    if words is None:
        got = runup(rig, **kwargs)
        assert got["rate_rpm_s"] == kwargs["rate_rpm_s"]
        assert got["end_rpm"] == kwargs.get("end_rpm", END)  # default: the operating speed
        assert got["factor"] == kwargs.get("factor", 10.0)
    else:
        with pytest.raises(ValueError) as err:
            runup(rig, **kwargs)
        assert str(err.value) == words


FLOOR = math.sqrt(0.05 * G / (STROKE / 2)) * 60 / (2 * math.pi)  # A w^2 = 0.05 g (above)


@pytest.fixture(scope="module")
def model():
    from shakestill.model.derived import as_model
    return as_model(ss.rig_from_dict(rig_data()))


def counted_stability(monkeypatch):
    """Every stability evaluation made by the scan (lines.py) and the integral (runup.py)."""
    from shakestill.equilibria import lines, runup as ru
    calls = []
    for module in (lines, ru):
        def counted(*args, _real=module.stability, **kwargs):
            calls.append(kwargs.get("speed_rpm"))
            return _real(*args, **kwargs)
        monkeypatch.setattr(module, "stability", counted)
    return calls


@pytest.mark.parametrize("start, end", [(560.0, END), (END, 560.0), (500.0, 600.0),
                                        (547.0, 600.0)])
def test_runs_starting_or_ending_inside_the_principal_tongue(model, monkeypatch, start, end):
    # A run from 560 rpm starts inside the tongue (a_1's speed is 547.14): the interval opens
    # at the run's start; a run-down (start above end) meets the same interval; a run to 600
    # rpm ends inside it: the interval closes at the run's end; from 547 rpm the first step
    # already crosses a_1's speed. Numbers: the Mathieu ends, the
    # frozen growth exp(I / R) by quad over solve_ivp multipliers, the ramp by solve_ivp + svd,
    # seconds (b - a) / R, cycles (b^2 - a^2) / (120 R) (hand), and the evaluations reported
    # = the stability evaluations counted here.
    from shakestill.equilibria import runup as ru
    calls = counted_stability(monkeypatch)
    found, evaluations = ru.crossings(model, "hanging", start, end, RATE)
    lo1, hi1 = tongue_rpm()
    (c,) = found
    a = max(min(start, end), lo1)
    b = min(max(start, end), hi1)
    assert c.equilibrium == "hanging"
    assert c.speed_from_rpm == (560.0 if a == 560.0 else pytest.approx(lo1, rel=REL))
    assert c.speed_to_rpm == (600.0 if b == 600.0 else pytest.approx(hi1, rel=REL))
    assert c.seconds == pytest.approx((b - a) / RATE, rel=1e-7)
    assert c.cycles == pytest.approx((b * b - a * a) / 120 / RATE, rel=1e-7)
    assert RATE * math.log(c.amplification) == pytest.approx(frozen_integral(a, b), rel=1e-8)
    assert c.simulated_amplification == pytest.approx(transfer_gain(a, b, RATE), rel=1e-7)
    # the ramp's rate does not enter the minimum rate (its own search): growth within 2% under
    # the factor 10 by solve_ivp
    assert 10.0 / 1.02 * (1 - REL) <= transfer_gain(a, b, c.min_rate_rpm_s) <= 10.0 * (1 + REL)
    assert evaluations == len(calls) > 20


def test_a_ramp_down_grows_a_disturbance_as_solve_ivp_says(model):
    # From b_1's speed down to a_1's (run-down): the transfer matrix of the ramp with the speed
    # falling (alpha < 0), solve_ivp + numpy.svd, to 1e-9.
    from shakestill.equilibria.runup import ramp_amplification
    lo1, hi1 = tongue_rpm()
    for rate in (RATE, 37.0):
        want = transfer_gain(hi1, lo1, rate)
        assert ramp_amplification(model, "hanging", hi1, lo1, rate) == pytest.approx(want, rel=REL)
    # and upside down through the whole run (unstable from the floor): the same ramp by
    # solve_ivp with gravity reversed, to 1e-8 (growth about e^20)
    rate = 1000.0
    want = transfer_gain(FLOOR, END, rate, "inverted")
    assert want > 1e6
    assert ramp_amplification(model, "inverted", FLOOR, END, rate) == pytest.approx(want, rel=1e-8)


def test_inverted_growth_its_cap_and_when_a_ramp_is_simulated(model):
    # Upside down the whole run above the floor is unstable: I by quad over solve_ivp
    # multipliers; frozen growth exp(I / R); the ramp is simulated only while I / R < 200
    # (e^200, the documented MAX_LOG_GROWTH): at R = I / 199 it is (solve_ivp + svd), at
    # I / 201 not (None); and the frozen figure's exponent is capped at 700 (e^700, below the
    # largest double e^709.8): at R = I / 750 the figure is e^700 (hand).
    from shakestill.equilibria.runup import crossings
    integral = frozen_integral(FLOOR, END, "inverted")
    (c,), _ = crossings(model, "inverted", 0.0, END, RATE)
    assert (c.speed_from_rpm, c.speed_to_rpm) == (pytest.approx(FLOOR, rel=1e-12), END)
    assert RATE * math.log(c.amplification) == pytest.approx(integral, rel=1e-9)
    assert c.simulated_amplification is None
    # the peak is the largest multiplier at the 20 Gauss-Legendre nodes (numpy's leggauss)
    # mapped by s = a + (b - a)(1 - cos(pi (x + 1) / 2)) / 2 (the module's docstring): upside
    # down it grows towards low speed, so the node nearest the floor (solve_ivp)
    x = min(np.polynomial.legendre.leggauss(20)[0])
    s = FLOOR + (END - FLOOR) / 2 * (1 - math.cos(math.pi * (x + 1) / 2))
    assert c.peak_multiplier == pytest.approx(max_multiplier(s, "inverted"), rel=1e-8)
    (c,), _ = crossings(model, "inverted", 0.0, END, integral / 199)
    want = transfer_gain(FLOOR, END, integral / 199, "inverted")
    assert c.simulated_amplification == pytest.approx(want, rel=1e-6)
    (c,), _ = crossings(model, "inverted", 0.0, END, integral / 201)
    assert c.simulated_amplification is None
    (c,), _ = crossings(model, "inverted", 0.0, END, integral / 750)
    assert c.amplification == math.exp(700.0)


def expected_rates(a, b, integral, factor, equilibrium):
    """The ramp rates the documented search tries (runup._min_rate's docstring: secant steps
    on ln(growth) against 1 / R from R = I / ln F, kept inside the bracket of rates found too
    slow and fast enough, bisected in 1 / R when a step leaves it (or doubled in 1 / R when
    nothing is too slow yet); it aims at the middle of the 2% window under F and stops once a
    growth lands in it, after 8 ramps, or when a ramp would take over 20000 cycles or e^200),
    with every growth from solve_ivp + svd (transfer_gain). Returns (rates, answer)."""
    target, tol = math.log(factor), 0.02
    guess, rates, points = integral / target, [], []
    slow, fast = 0.0, math.inf
    for _ in range(8):
        if (b * b - a * a) / 120.0 / guess > 20000 or integral / guess >= 200:
            break
        rates.append(guess)
        growth = math.log(transfer_gain(a, b, guess, equilibrium))
        points.append((1 / guess, growth))
        if growth <= target:
            fast = min(fast, guess)
            if growth >= target - math.log1p(tol):
                break
        else:
            slow = max(slow, guess)
        (x0, y0), (x1, y1) = points[-2:] if len(points) > 1 else ((0.0, 0.0), points[-1])
        x = x1 + (target - math.log1p(tol / 2) - y1) / ((y1 - y0) / (x1 - x0))
        low_x, high_x = (1 / fast if fast < math.inf else 0.0), (1 / slow if slow else math.inf)
        if not low_x < x < high_x:
            x = (low_x + high_x) / 2 if high_x < math.inf else 2 * x1
        guess = 1 / x
    return rates, (fast if fast < math.inf else guess)


@pytest.mark.parametrize("equilibrium, factor", [("hanging", 10.0), ("inverted", 10.0),
                                                 ("hanging", 3.0), ("inverted", 1e3),
                                                 ("hanging", 2.0), ("hanging", 30.0)])
def test_minimum_rate_search_takes_the_documented_steps(model, monkeypatch, equilibrium, factor):
    # Every ramp rate the search simulates, in order, against the documented search run on
    # solve_ivp growths (expected_rates above), to 1e-6; the answer's growth by solve_ivp lies
    # within 2% under the factor. Factors 2 and 30 on the principal tongue send a secant step
    # out of the bracket, so the search bisects it in 1 / R.
    from shakestill.equilibria import runup as ru
    a, b = tongue_rpm() if equilibrium == "hanging" else (FLOOR, END)
    integral = frozen_integral(a, b, equilibrium)
    tried = []
    real = ru.ramp_amplification

    def recorded(m, eq, x, y, rate):
        tried.append(rate)
        return real(m, eq, x, y, rate)
    monkeypatch.setattr(ru, "ramp_amplification", recorded)
    got = ru._min_rate(model, equilibrium, a, b, integral, factor)
    rates, answer = expected_rates(a, b, integral, factor, equilibrium)
    assert tried == pytest.approx(rates, rel=1e-6)
    assert tried[0] == pytest.approx(integral / math.log(factor), rel=1e-12)
    assert got == pytest.approx(answer, rel=1e-6)
    gain = transfer_gain(a, b, got, equilibrium)
    assert factor / 1.02 * (1 - REL) <= gain <= factor * (1 + REL)


def test_minimum_rate_without_a_ramp(model, monkeypatch):
    # Nothing to cross (I <= 0): 0 rpm/s and no ramp simulated; a factor of 1e100 (ln F = 230,
    # over the e^200 simulated at most): no ramp either, the frozen estimate I / ln F (quad).
    from shakestill.equilibria import runup as ru
    monkeypatch.setattr(ru, "ramp_amplification", lambda *args: pytest.fail("simulated"))
    lo1, hi1 = tongue_rpm()
    assert ru._min_rate(model, "hanging", lo1, hi1, 0.0, 10.0) == 0.0
    assert ru._min_rate(model, "hanging", lo1, hi1, -1.0, 10.0) == 0.0
    integral = frozen_integral(lo1, hi1)
    assert ru._min_rate(model, "hanging", lo1, hi1, integral, 1e100) == pytest.approx(
        integral / math.log(1e100), rel=1e-9)


def test_recommended_rate_is_the_binding_crossings_minimum(model):
    # From 500 rpm to the operating speed (900, the default end) the binding crossing is the
    # upside-down one (growth e^124 at 100 rpm/s): the recommended rate keeps its ramp's growth
    # (solve_ivp + svd) within 2% under the factor and a 10% slower ramp breaks it; the
    # hanging tongue alone asks for less, within its own 2% window.
    from shakestill.equilibria.runup import recommended_rate
    got = recommended_rate(model, start_rpm=500.0)
    assert 10.0 / 1.02 * (1 - REL) <= transfer_gain(500.0, END, got, "inverted") <= 10.0 * (1 + REL)
    assert transfer_gain(500.0, END, got / 1.1, "inverted") > 10.0
    hanging = recommended_rate(model, start_rpm=500.0, end_rpm=END, equilibria=("hanging",))
    lo1, hi1 = tongue_rpm()
    assert 10.0 / 1.02 * (1 - REL) <= transfer_gain(lo1, hi1, hanging) <= 10.0 * (1 + REL)
    assert hanging < got
    # factor 1e100: no ramp simulated; the largest frozen estimate I / ln F (quad)
    big = recommended_rate(model, start_rpm=500.0, end_rpm=END, factor=1e100)
    assert big == pytest.approx(frozen_integral(500.0, END, "inverted") / math.log(1e100),
                                rel=1e-8)
    # nothing crossed below the floor: 0; a refused factor is named
    assert recommended_rate(model, start_rpm=0.0, end_rpm=FLOOR * 0.9) == 0.0
    with pytest.raises(ValueError, match=r"^factor: 1\.0 must be a finite number above 1$"):
        recommended_rate(model, factor=1.0)


@pytest.mark.parametrize("factor", [30.0, 50.0])
def test_runup_from_inside_the_range_with_another_factor(model, monkeypatch, factor):
    # From 500 rpm to the operating speed (the default end, 900) at 100 rpm/s with a factor
    # of 30 or 50: the principal tongue's ramp grows by 34.6 (solve_ivp + svd) while its
    # frozen estimate says 21.6, so `ok` follows the simulated ramp: not ok at 30, ok at 50;
    # upside down the frozen growth e^124 (quad) is not ok. Each minimum rate keeps its ramp
    # within 2% under that factor (solve_ivp); the evaluations are the stability evaluations
    # counted here, for both equilibria together.
    from shakestill.equilibria.runup import crossings, runup
    calls = counted_stability(monkeypatch)
    got = runup(model, rate_rpm_s=RATE, start_rpm=500.0, factor=factor)
    assert (got["start_rpm"], got["end_rpm"], got["factor"]) == (500.0, END, factor)
    assert got["evaluations"] == len(calls)
    assert (got["note"], got["hanging"]["rundown"], got["inverted"]["rundown"]) == (
        NOTE, RUNDOWN, RUNDOWN)
    for eq in ("hanging", "inverted"):  # one crossing each: the total is its amplification
        (c,) = got[eq]["crossings"]
        assert got[eq]["total_amplification"] == c["amplification"]
    lo1, hi1 = tongue_rpm()
    simulated = transfer_gain(lo1, hi1, RATE)
    assert 21.0 < math.exp(frozen_integral(lo1, hi1) / RATE) < 30.0 < simulated < 50.0
    (c,) = got["hanging"]["crossings"]
    assert c["simulated_amplification"] == pytest.approx(simulated, rel=1e-7)
    assert got["hanging"]["ok"] is (simulated <= factor)
    assert got["inverted"]["ok"] is False
    for eq, (a, b) in (("hanging", (lo1, hi1)), ("inverted", (500.0, END))):
        rate = got[eq]["min_rate_rpm_s"]
        assert factor / 1.02 * (1 - REL) <= transfer_gain(a, b, rate, eq) <= factor * (1 + REL)
    # an empty span (start = end) crosses nothing and evaluates nothing; a span between the
    # tongues (Mathieu: b_2's speed 299 < 350, 500 < a_1's 547) crosses nothing either
    assert crossings(model, "hanging", 500.0, 500.0, RATE) == ([], 0)
    assert tongue_rpm(2)[1] < 350.0 and 500.0 < lo1
    calls.clear()
    assert crossings(model, "hanging", 350.0, 500.0, RATE) == ([], len(calls))


def law(monkeypatch, ln_growth):
    """Stand in a known growth law ln g(R) for the simulated ramp and record the rates asked:
    the search's rule is then checked in closed form (hand), without solving a ramp."""
    from shakestill.equilibria import runup as ru
    tried = []

    def ramp(model, equilibrium, a, b, rate):
        tried.append(rate)
        return math.exp(ln_growth(rate))
    monkeypatch.setattr(ru, "ramp_amplification", ramp)
    return ru, tried


def test_runup_without_a_rate_runs_at_the_hanging_minimum_and_scans_once(model, monkeypatch):
    # No rate: the ramp runs at the slowest rate that keeps the hanging tongue's growth
    # (solve_ivp + svd) within 2% under the factor; every stability evaluation made is
    # counted in `evaluations` (the hanging scan serves both the rate and the crossings: it is
    # not walked twice), and nothing crossed names why there is no rate.
    from shakestill.equilibria import runup as ru
    calls = counted_stability(monkeypatch)
    got = ru.runup(model, rate_rpm_s=None, start_rpm=500.0)
    assert got["rate_recommended"] is True and got["evaluations"] == len(calls)
    lo1, hi1 = tongue_rpm()
    rate = got["rate_rpm_s"]
    assert 10.0 / 1.02 * (1 - REL) <= transfer_gain(lo1, hi1, rate) <= 10.0 * (1 + REL)
    assert rate == got["hanging"]["min_rate_rpm_s"]
    assert ru.runup(model, rate_rpm_s=rate, start_rpm=500.0)["rate_recommended"] is False
    with pytest.raises(ru.NoRateToRecommend, match="no resonance of the hanging pendulum"):
        ru.runup(model, rate_rpm_s=None, start_rpm=350.0, end_rpm=500.0)


@pytest.mark.parametrize("prefactor", [math.log(2.0), -5.0])
def test_minimum_rate_search_on_a_growth_law_linear_in_one_over_r(model, monkeypatch,
                                                                  prefactor):
    # ln g = I / R + c, a line in 1 / R (the docstring's model): from R = I / ln F the first
    # secant runs through the origin; the second, through two points of the line, lands on
    # the middle of the 2% window, ln F - ln(1.01) (hand): R = I / (ln F - ln 1.01 - c).
    # With c = ln 2 the first ramp is too slow and the step stays in the bracket; with c = -5
    # the first is fast enough but below the window and the secant through the origin points
    # back past it: the rule doubles 1 / R (R / 2) instead.
    integral, factor = 0.5 if prefactor > 0 else 50.0, 10.0
    ru, tried = law(monkeypatch, lambda r: integral / r + prefactor)
    got = ru._min_rate(model, "hanging", 500.0, 600.0, integral, factor)
    want = integral / (math.log(factor) - math.log1p(0.01) - prefactor)
    assert got == pytest.approx(want, rel=1e-12)
    assert len(tried) == 3 and tried[0] == pytest.approx(integral / math.log(factor), rel=1e-15)
    if prefactor < 0:
        assert tried[1] == pytest.approx(tried[0] / 2, rel=1e-15)


@pytest.mark.parametrize("integral, b", [(10.0, 600.0), (0.01, 500.5)])
def test_minimum_rate_search_gives_up_after_eight_ramps(model, monkeypatch, integral, b):
    # A growth that jumps over the window at R0 (ln F + 1 below it, ln F - 1 from it on): no
    # ramp lands in the window, so the search stops after its 8 ramps (RATE_STEPS, the
    # docstring) and answers the slowest rate it found fast enough (hand: the smallest tried
    # rate at or above R0). I = 0.01 puts every rate under 1 rpm/s (a narrow tongue's, here
    # 500 to 500.5 rpm: some 800 cycles, under the 20000 simulated at most).
    factor = 10.0
    r0 = 1.3 * integral / math.log(factor)
    ru, tried = law(monkeypatch, lambda r: math.log(factor) + (1.0 if r < r0 else -1.0))
    got = ru._min_rate(model, "hanging", 500.0, b, integral, factor)
    assert len(tried) == 8
    assert got == min(r for r in tried if r >= r0)
    assert got < 1.5 * r0  # the bracket closed in on R0 by the bisections
    # each rate tried lies inside the bracket of the rates tried before it: faster than every
    # one found too slow, slower than every one found fast enough (the docstring's rule)
    for k, rate in enumerate(tried):
        slow = [r for r in tried[:k] if r < r0]
        fast = [r for r in tried[:k] if r >= r0]
        assert max(slow, default=0.0) < rate < min(fast, default=math.inf)


@pytest.mark.parametrize("cycles", [20080.0, 19900.0])
def test_minimum_rate_search_never_simulates_over_20000_cycles(model, monkeypatch, cycles):
    # From 500 to 600 rpm a ramp at R takes (600^2 - 500^2) / (120 R) cycles (hand). With the
    # first guess R = I / ln F set to take 20080 cycles, nothing is simulated (MAX_SIMULATED_
    # CYCLES is 20000) and that guess is the answer; at 19900 cycles the ramp is simulated.
    factor = 10.0
    guess = (600.0 ** 2 - 500.0 ** 2) / 120.0 / cycles
    integral = guess * math.log(factor)
    ru, tried = law(monkeypatch, lambda r: integral / r)
    got = ru._min_rate(model, "hanging", 500.0, 600.0, integral, factor)
    if cycles > 20000:
        assert tried == [] and got == pytest.approx(guess, rel=1e-15)
    else:
        assert tried[0] == pytest.approx(guess, rel=1e-15)


def test_largest_singular_value_against_numpy_svd():
    # The ramp's growth is the 2-norm of its scaled transfer matrix: numpy.linalg.svd (LAPACK)
    # on 300 random 2 x 2 .. 6 x 6 matrices, half of them nearly of rank one with a growth up
    # to 1e80 (a steep crossing), to 1e-12 relative; an overflowed ramp (inf or NaN entries)
    # is an infinite growth and a zero matrix has none (hand).
    from shakestill.equilibria.ramp import largest_singular_value
    rng = np.random.default_rng(5)
    for k in range(300):
        n = int(rng.integers(2, 7))
        a = rng.normal(size=(n, n)) * 10.0 ** rng.uniform(-3, 3)
        if k % 2:
            a = a + np.outer(rng.normal(size=n), rng.normal(size=n)) * 10.0 ** rng.uniform(0, 80)
        want = np.linalg.svd(a, compute_uv=False)[0]
        assert largest_singular_value(a.tolist()) == pytest.approx(want, rel=1e-12)
    assert largest_singular_value([[1.0, math.nan], [0.0, 1.0]]) == math.inf
    assert largest_singular_value([[math.inf, 0.0], [0.0, 1.0]]) == math.inf
    assert largest_singular_value([[0.0, 0.0], [0.0, 0.0]]) == 0.0


def test_a_crossing_running_to_the_end_speed_is_never_ok():
    # Upside down the ramp from 500 rpm ends inside its unstable interval (Kapitza, Landau &
    # Lifshitz sec. 30: 443 rad/s needed, far above 900 rpm). With a factor of 1e300 its
    # growth, e^(I / R) with I by quad over solve_ivp multipliers (about e^124), is within
    # the factor, yet the end speed does not hold the pendulum: not held, not ok, and no
    # verdict beyond the crossing is asked for (the crossing says it). Hanging, the ramp
    # ends between tongues: held, one verdict at the end speed.
    from shakestill.equilibria.runup import runup
    rig = ss.rig_from_dict(rig_data())
    got = runup(rig, rate_rpm_s=RATE, start_rpm=500.0, factor=1e300)
    (c,) = got["inverted"]["crossings"]
    assert c["speed_to_rpm"] == END
    assert math.log(c["amplification"]) == pytest.approx(
        frozen_integral(500.0, END, "inverted") / RATE, rel=1e-8)
    assert c["amplification"] < 1e300
    inv = got["inverted"]
    assert inv["held_at_end"] is False and inv["ok"] is False
    assert "end_max_multiplier" not in inv
    assert got["hanging"]["held_at_end"] is True and got["hanging"]["ok"] is True
    assert max_multiplier(END) < 1  # the hanging verdict at the end speed (solve_ivp)


def test_an_end_speed_past_reach_or_past_a_double_is_said_so():
    # At 5 rpm the drive is all but still (peak pivot acceleration 3e-4 m/s^2), so the
    # upright pendulum's multiplier is exp(sqrt(g / l) T) = 1.6e163 (T = 12 s, hand), to
    # 1e-6: a trace past 1e154 gave an infinite multiplier before (its square overflowed).
    # A three-link rig asked to end at 0.2 rpm (far under the speed its scans resolve) gets
    # no upright verdict there: held_at_end null, said in words.
    from shakestill.equilibria.runup import runup
    got = runup(ss.rig_from_dict(rig_data()), rate_rpm_s=1.0, end_rpm=5.0)
    assert got["inverted"]["held_at_end"] is False and got["inverted"]["ok"] is False
    assert "but not held at 5 rpm: a disturbance grows " in runup_text(got)
    m = got["inverted"]["end_max_multiplier"]
    assert m == pytest.approx(math.exp(math.sqrt(G / LENGTH) * 12), rel=1e-6)
    assert f"grows x{m:.3g} every cycle" in runup_text(got)
    triple = R.rig([R.link(0.12, 0.034, [(0.019, 0.12)]),
                    R.link(0.11, 0.026, [(0.026, 0.11)], damping=1.7e-4),
                    R.link(0.055, 0.027, [(0.023, 0.055)], damping=1.5e-3)],
                   R.crank(0.005, 0.165, 420.0), limits=LIMITS)
    far = runup(ss.rig_from_dict(triple), rate_rpm_s=100.0, end_rpm=0.2)
    assert far["inverted"]["held_at_end"] is None and far["inverted"]["crossings"] == []
    assert "whether 0.2 rpm holds it is not known" in runup_text(far)


def _chain(count, damped, waveform):
    """Links of the bench's three-link rig (test_an_end_speed_past_reach...), the first
    `count`, with or without its joint dampers, on a 5 mm stroke."""
    links = [R.link(0.12, 0.034, [(0.019, 0.12)]),
             R.link(0.11, 0.026, [(0.026, 0.11)], damping=1.7e-4 if damped else 0.0),
             R.link(0.055, 0.027, [(0.023, 0.055)], damping=1.5e-3 if damped else 0.0)][:count]
    drive = R.crank(0.005, 0.165, 420.0) if waveform == "crank" else R.sine(0.005, 420.0)
    return R.rig(links, drive, limits={"speed_rpm": [10.0, 6000.0], "stroke_m": [0.0, 0.05]})


@pytest.mark.parametrize("data, equilibrium, start, end", [
    (rig_data(), "inverted", 0.0, END),  # tests/test_runup.py's rig, from the floor
    (_chain(2, True, "sine"), "hanging", 0.0, 1000.0),
    (_chain(3, True, "crank"), "hanging", 0.0, 1500.0),  # 365-451 rpm, 14 cycles at its rate
    (_chain(3, False, "sine"), "hanging", 250.0, 300.0),  # 259.1-261.4 rpm, 82 cycles
    (_chain(3, True, "crank"), "inverted", 0.0, 3000.0),  # from the floor, 3 cycles
], ids=["one-inverted", "two-damped-sine", "three-damped-crank", "three-sine-narrow",
        "three-damped-crank-inverted"])
def test_minimum_rate_keeps_the_growth_at_the_factor_on_chains(data, equilibrium, start, end):
    # The promise of min_rate_rpm_s (tests/test_runup.py's test of the same name, whose
    # PROMISE_TOL and rates this takes) for one to three links, hanging and upright, with and
    # without joint dampers, on sine and crank drives: every crossing's growth at its minimum
    # rate is within the search's 2% under the factor 10, at the 205 rates from 1x to 10x
    # within 1% over it, and a ramp 10% slower breaks it. Reference: solve_ivp + numpy.svd
    # of the chain's Lagrangian equations in its sway modes (refsolvers.ramp_growths).
    from test_runup import FASTER, PROMISE_TOL
    from shakestill.equilibria.runup import crossings
    found, _ = crossings(ss.rig_from_dict(data), equilibrium, start, end, RATE)
    assert found
    for c in found:
        a, b, rate = c.speed_from_rpm, c.speed_to_rpm, c.min_rate_rpm_s
        growth = R.ramp_growths(data, equilibrium, a, b, rate * FASTER)
        assert 10.0 / 1.02 * (1 - REL) <= growth[0] <= 10.0 * (1 + REL)
        assert growth.max() <= 10.0 * (1 + PROMISE_TOL), FASTER[growth.argmax()]
        assert R.ramp_growths(data, equilibrium, a, b, [rate / 1.1])[0] > 10.0


def test_a_slow_ramp_past_the_cap_is_said_in_words_not_digits():
    # 1e-5 rpm/s from 0.05 rpm: the upright crossing from the floor (211 rpm) to 900 rpm takes
    # (900 - 211) / 1e-5 = 6.9e7 s (hand), 6.4e8 cycles ((b^2 - a^2) / 120 / R, hand), and
    # the still-pivot growth rate sqrt(g / l) = 31 / s over it is far past e^700: the frozen
    # estimate stops at e^700 (the documented cap), and the words say "past", give the
    # seconds and cycles to 3 digits, and the start speed as typed, not rounded to 0.
    from shakestill.equilibria.runup import runup
    got = runup(ss.rig_from_dict(rig_data()), rate_rpm_s=1e-5, start_rpm=0.05)
    (up,) = got["inverted"]["crossings"]
    assert up["amplification"] == math.exp(700.0) and up["simulated_amplification"] is None
    seconds = (END - up["speed_from_rpm"]) / 1e-5
    cycles = (END ** 2 - up["speed_from_rpm"] ** 2) / 120 / 1e-5
    assert up["seconds"] == pytest.approx(seconds, rel=1e-12)
    text = runup_text(got)
    assert f"{seconds:.3g} s, {cycles:.3g} cycles, a disturbance grows past x1e+304" in text
    assert "from 0.05 to 900 rpm" in text


def test_a_recommended_rate_under_one_rpm_s():
    # A 250 mm pendulum on a 10 mm sine stroke (q = 0.04) crosses its principal tongue near
    # 120 rpm; the slowest safe rate is a quarter of an rpm/s (the growth exponent falls as
    # q^2 f^2: tests/test_runup.py's 10 mm pendulum at this q needs 6.3 rpm/s). It is
    # recommended, not refused: the growth at it, by solve_ivp + numpy.svd
    # (refsolvers.ramp_growths), lands within the search's 2% under the factor 10 (REL over
    # it: the references are good to ~1e-11). Hand: hanging and held at the end speed, no
    # end multiplier is given; with no equilibrium asked about nothing is crossed: 0.
    from shakestill.equilibria.runup import recommended_rate, runup
    data = R.rig([R.link(0.25, 0.0, [(0.1, 0.25)])], R.sine(0.01, 200.0),
                 limits={"speed_rpm": [10.0, 600.0], "stroke_m": [0.0, 0.05]})
    rig = ss.rig_from_dict(data)
    got = runup(rig, rate_rpm_s=None, end_rpm=200.0, equilibria=("hanging",))
    rate = got["rate_rpm_s"]
    assert got["rate_recommended"] is True and 0.1 < rate < 1.0
    (c,) = got["hanging"]["crossings"]
    assert c["min_rate_rpm_s"] == rate
    growth = R.ramp_growths(data, "hanging", c["speed_from_rpm"], c["speed_to_rpm"], [rate])[0]
    assert 10.0 / 1.02 * (1 - REL) <= growth <= 10.0 * (1 + REL)
    assert c["simulated_amplification"] == pytest.approx(growth, rel=REL)
    assert got["hanging"]["held_at_end"] is True and "end_max_multiplier" not in got["hanging"]
    assert recommended_rate(rig, end_rpm=200.0, equilibria=()) == 0.0


@pytest.mark.parametrize("rate", [5000.0, 50000.0])
def test_a_ramp_shorter_than_two_drive_cycles(rate):
    # Through the principal tongue (Mathieu a_1/b_1 ends, 547-671 rpm) in 25 ms and 2.5 ms,
    # a quarter and a fortieth of a drive cycle: the instants at entry and exit then spread
    # over the first and last half of the ramp, not a cycle (ramp.py's docstring). Up and
    # down, against solve_ivp + numpy.svd on the same instants (refsolvers.ramp_growths),
    # to REL (the references agree to ~1e-14 here).
    from shakestill.equilibria.ramp import ramp_amplification
    lo, hi = tongue_rpm(1)
    model = ss.rig_from_dict(rig_data())
    for a, b in ((lo, hi), (hi, lo)):
        want = R.ramp_growths(rig_data(), "hanging", a, b, [rate])[0]
        assert ramp_amplification(model, "hanging", a, b, rate) == pytest.approx(want, rel=REL)
