"""`shakestill runup --json` on CPython against an independent integration, to 1e-9.

A short undamped hanging pendulum (l = 10 mm, point mass) on a 2 mm sine stroke crosses its
principal parametric tongue while running up to 900 rpm. The references:
- the tongue's ends from the Mathieu chart: a = 4 g / (l w^2) meets a_1(q) and b_1(q),
  q = stroke / l (scipy.special.mathieu_a / mathieu_b, solved with scipy.optimize.brentq);
- the frozen-speed amplification exp(I / R), I = integral of ln|rho(s)| s / 60 ds, by
  scipy.integrate.quad over multipliers of solve_ivp monodromies (tests/refsolvers.py);
- the simulated amplification: the linearised equation with the speed ramping,
  q'' + (g + y_p''(t)) q / l = 0, y_p(t) = (stroke / 2) cos(phi(t)), phi = w_a t + alpha t^2 / 2,
  integrated by scipy.integrate.solve_ivp (DOP853, rtol 1e-12), and the largest singular
  value (numpy.linalg.svd) of its transfer matrix in the norm the result names, worst over 8
  instants in the ramp's first cycle and 8 in its last (tests/refsolvers.py's ramp_growths):
  |q|^2 + |q' / W|^2 with W^2 = g / l + (r w)^2 / (2 l^2), r = stroke / 2, w the drive's
  angular speed at the instant (the pendulum's own frequency with Kapitza's averaged drive,
  Landau & Lifshitz sec. 30; a sine's mean square pivot speed is (r w)^2 / 2).
"""

from __future__ import annotations

import contextlib
import io
import json
import math
from functools import lru_cache

import numpy as np
import pytest
from scipy import special
from scipy.integrate import quad
from scipy.optimize import brentq

import refsolvers as R
import shakestill as ss
from shakestill import cli

G = R.G_STANDARD
LENGTH, STROKE, RATE, END = 0.01, 0.002, 100.0, 900.0
LIMITS = {"speed_rpm": [300.0, 3600.0], "stroke_m": [0.0, 0.01]}
REL = 1e-9  # what the issue asks of run-up numbers; the references are good to ~1e-11


def rig_data():
    return R.rig([R.link(LENGTH, 0.0, [(0.1, LENGTH)])], R.sine(STROKE, END), limits=LIMITS)


@pytest.fixture(scope="module")
def result(tmp_path_factory):
    # The CLI's own entry (argparse, the command, its JSON) run in this process, so that a
    # mutation run (bench/mutation.py), which swaps the engine in this process only, sees
    # the run-up code; a subprocess would import the installed engine instead.
    path = tmp_path_factory.mktemp("runup") / "rig.json"
    path.write_text(json.dumps(rig_data()))
    out = io.StringIO()
    with contextlib.redirect_stdout(out):
        code = cli.main(["runup", str(path), "--rate", f"{RATE}rpm/s", "--to", f"{END}rpm",
                         "--json"])
    assert code in (0, None)
    return json.loads(out.getvalue())


def tongue_rpm(order=1):
    """(low, high) speeds of the hanging tongue between b_n(q) and a_n(q) (a = 4 g / (l w^2)
    falls as the speed rises, so a_n gives the low end)."""
    q = STROKE / LENGTH

    def rpm(a_value):  # a = 4 g / (l w^2)  ->  w
        return math.sqrt(4 * G / (LENGTH * a_value)) * 60 / (2 * math.pi)
    return rpm(special.mathieu_a(order, q)), rpm(special.mathieu_b(order, q))


def principal(result):
    """The crossing of the principal tongue (the second, narrow one lies near 299 rpm)."""
    return result["hanging"]["crossings"][1]


def max_multiplier(speed_rpm, equilibrium="hanging"):
    return float(max(abs(R.multipliers(R.monodromy(rig_data(), equilibrium,
                                                   speed_rpm=speed_rpm)))))


def test_hanging_crossings_are_the_mathieu_tongues(result):
    # Above the floor (211 rpm) the ramp to 900 rpm crosses the second tongue (w = w_0, near
    # 299 rpm, 0.7 rpm wide) and the principal one (w = 2 w_0), in that order.
    crossings = result["hanging"]["crossings"]
    assert len(crossings) == 2
    for c, order in zip(crossings, (2, 1)):
        lo, hi = tongue_rpm(order)
        assert c["speed_from_rpm"] == pytest.approx(lo, rel=REL)
        assert c["speed_to_rpm"] == pytest.approx(hi, rel=REL)
        # seconds and cycles in the ramp: (b - a) / R and the integral of s / 60 ds / R
        # The ends are pinned to REL relative; the narrow tongue's width inherits it absolutely.
        assert c["seconds"] == pytest.approx((hi - lo) / RATE, abs=2 * REL * hi / RATE)
        assert c["cycles"] == pytest.approx((hi * hi - lo * lo) / 120 / RATE,
                                            abs=2 * REL * hi * hi / 60 / RATE)


@lru_cache(maxsize=None)
def frozen_integral(a, b, equilibrium="hanging"):
    """I = integral of ln max|rho(s)| s / 60 ds over [a, b]: scipy.integrate.quad over
    solve_ivp multipliers (quad's own error ~1e-10 relative)."""
    return quad(lambda s: math.log(max_multiplier(s, equilibrium)) * s / 60, a, b, epsabs=0,
                epsrel=1e-10, limit=200)[0]


def test_frozen_amplification_against_quad_of_solve_ivp_multipliers(result):
    c = principal(result)
    lo, hi = tongue_rpm()
    integral = frozen_integral(lo, hi)
    assert c["amplification"] == pytest.approx(math.exp(integral / RATE), rel=REL)
    # The amplification is near 1 at this rate, so pin the exponent itself as well:
    # I = R ln(amplification) to 1e-8 relative (quad's own error is ~1e-10).
    assert RATE * math.log(c["amplification"]) == pytest.approx(integral, rel=1e-8)
    # peak multiplier: the tongue's middle maximum, scipy.optimize over solve_ivp monodromies
    from scipy.optimize import minimize_scalar
    best = minimize_scalar(lambda s: -max_multiplier(s), bounds=(lo, hi), method="bounded",
                           options={"xatol": 1e-6})
    # the engine takes the largest of its 20 Gauss nodes: below the peak, within 1e-4
    assert c["peak_multiplier"] <= -best.fun * (1 + 1e-10)
    assert c["peak_multiplier"] == pytest.approx(-best.fun, rel=1e-4)


def transfer_gain(a_rpm, b_rpm, rate, equilibrium="hanging"):
    """The ramp's growth in the norm |q|^2 + |q' / W|^2 (W above), worst over 8 instants of
    its first and of its last cycle: solve_ivp + numpy.svd (refsolvers.ramp_growths; inverted:
    q'' - (g + y_p'') q / l = 0, the same pendulum upside down)."""
    return float(R.ramp_growths(rig_data(), equilibrium, a_rpm, b_rpm, [rate])[0])


def test_simulated_amplification_against_solve_ivp(result):
    gains = []
    for c in result["hanging"]["crossings"]:
        want = transfer_gain(c["speed_from_rpm"], c["speed_to_rpm"], RATE)
        assert c["simulated_amplification"] == pytest.approx(want, rel=REL)
        gains.append(want)
    assert result["hanging"]["ok"] is all(g <= 10.0 for g in gains)  # default factor 10


# The promise's slack: the growth is sampled at 8 drive phases at each end, and between
# neighbouring rates 0.15% apart it rose by at most 0.46% on this rig's tongues (measured
# 2026-12-06 with the reference below, while falling by 35% from 1x to 1.3x); twice that,
# rounded up. No crossing measured went over the factor at all (largest 0.995 of it).
PROMISE_TOL = 0.01
FASTER = np.concatenate([np.linspace(1.0, 1.3, 200), [1.5, 2.0, 3.0, 5.0, 10.0]])


def test_minimum_rate_keeps_the_growth_at_the_factor(result):
    # What a user reads in min_rate_rpm_s: ramp at least this fast and the growth stays under
    # the factor (10). Checked at the rate and at 200 faster ones up to 1.3x (0.15% apart,
    # finer than the ~0.3% period in rate at which a single ramp's growth wobbled through the
    # narrow n = 2 tongue, 314 cycles) and five far above, within PROMISE_TOL over the factor;
    # and at the rate itself within the search's own 2% under it (the documented window), so
    # a ramp 10% slower breaks the factor through either tongue. Reference: solve_ivp +
    # numpy.svd, every rate at once (refsolvers.ramp_growths, the norm of transfer_gain).
    for c in result["hanging"]["crossings"]:
        a, b, rate = c["speed_from_rpm"], c["speed_to_rpm"], c["min_rate_rpm_s"]
        growth = R.ramp_growths(rig_data(), "hanging", a, b, rate * FASTER)
        assert growth[0] == pytest.approx(transfer_gain(a, b, rate), rel=1e-9)
        assert 10.0 / 1.02 * (1 - REL) <= growth[0]
        assert growth.max() <= 10.0 * (1 + PROMISE_TOL), FASTER[growth.argmax()]
        assert transfer_gain(a, b, rate / 1.1) > 10.0
    assert result["hanging"]["min_rate_rpm_s"] == max(x["min_rate_rpm_s"]
                                                      for x in result["hanging"]["crossings"])


def test_inverted_is_unstable_from_the_low_speed_floor(result):
    # Kapitza (Landau & Lifshitz, sec. 30): up needs w > sqrt(2 g l) / A = 443 rad/s, far above
    # 900 rpm, so the whole ramp above the floor is one unstable interval. The floor is where
    # the peak pivot acceleration (A w^2, sine) is 0.05 g (the documented floor fraction).
    floor = math.sqrt(0.05 * G / (STROKE / 2)) * 60 / (2 * math.pi)
    assert result["low_speed_floor_rpm"] == pytest.approx(floor, rel=1e-12)
    (c,) = result["inverted"]["crossings"]
    assert c["speed_from_rpm"] == pytest.approx(floor, rel=1e-12)
    assert c["speed_to_rpm"] == pytest.approx(END, rel=1e-12)
    assert result["inverted"]["ok"] is False


NOTE = ("frozen-speed (adiabatic) estimate: the product of the largest Floquet multiplier over "
        "the cycles spent in each unstable interval; below the low-speed floor the pivot's "
        "peak acceleration is under 0.05 g and nothing is taken to grow; the simulated growth is "
        "the ramp's own, the worst over the drive's phase as it enters and leaves, with a "
        "disturbance sized by each sway mode's angle and rate over the mode's own frequency")
RUNDOWN = ("the run-down passes the same intervals in reverse: at the same rate the same "
           "amplification")


def test_the_json_echoes_its_inputs_and_multiplies_the_crossings(result):
    # the inputs as given (SI and rpm), the floor by its rule (above), and the totals by hand:
    # the product of the crossings' amplifications, the largest minimum rate
    assert (result["rate_rpm_s"], result["factor"], result["start_rpm"], result["end_rpm"],
            result["stroke_m"]) == (RATE, 10.0, 0.0, END, STROKE)
    assert result["note"] == NOTE
    hanging = result["hanging"]
    assert hanging["total_amplification"] == pytest.approx(
        math.prod(c["amplification"] for c in hanging["crossings"]), rel=1e-15)
    assert hanging["rundown"] == RUNDOWN
    # each crossing costs the scan's probes and 20 Gauss nodes: more than 20 per crossing
    assert result["evaluations"] > 20 * 3


def test_words_round_rates_and_cycles_as_people_read_them(result, tmp_path):
    # The CLI's words for the same run: rates to three significant digits with thousands
    # written out (8,100, never 8.1e+03), and a crossing shorter than half a cycle said as
    # such; cycles in a crossing = (b^2 - a^2) / (120 R) (the ramp's phase, by hand).
    path = tmp_path / "rig.json"
    path.write_text(json.dumps(rig_data()))
    out = io.StringIO()
    with contextlib.redirect_stdout(out):
        cli.main(["runup", str(path), "--rate", f"{RATE}rpm/s", "--to", f"{END}rpm"])
    words = out.getvalue()
    fast = result["inverted"]["min_rate_rpm_s"]
    assert fast >= 1000 and f"ramp at least {float(f'{fast:.3g}'):,.0f} rpm/s" in words
    assert "e+" not in words.split("ramp at least")[1].split("rpm/s")[0]
    narrow = result["hanging"]["crossings"][0]
    a, b = narrow["speed_from_rpm"], narrow["speed_to_rpm"]
    assert (b * b - a * a) / (120 * RATE) < 0.5 and "under 1 cycle" in words
    wide = principal(result)
    n = (wide["speed_to_rpm"] ** 2 - wide["speed_from_rpm"] ** 2) / (120 * RATE)
    assert f"{n:,.0f} cycles, a disturbance grows" in words

