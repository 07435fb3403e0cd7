"""The sixth-order Magnus trace of Hill's equation (numerics/magnus.py) and the chart's one-link
and modal scan points that use it.

References: scipy.special.mathieu_a (the Mathieu characteristic values), the one-cycle
monodromy by scipy.integrate.solve_ivp (DOP853, rtol 1e-12; refsolvers, built from the rig
file, not from the engine) and numpy.linalg.eigvals of it.
"""
import math

import numpy as np
import pytest
from scipy import special
from scipy.integrate import solve_ivp

import refsolvers as ref
import shakestill as ss
from shakestill.equilibria.chart_rows import row_settings
from shakestill.equilibria.floquet import Settings
from shakestill.model.derived import derive
from shakestill.numerics.magnus import GAUSS_NODES, hill_trace


def mathieu_nodes(a, q, steps):
    """p(t) = a - 2 q cos 2t of Mathieu's equation at the Gauss nodes of ``steps`` steps of pi."""
    h = math.pi / steps
    return [a - 2 * q * math.cos(2 * (s + c) * h) for s in range(steps) for c in GAUSS_NODES]


@pytest.mark.parametrize("order,q", [(1, 0.5), (1, 4.0), (3, 2.0), (5, 9.0)])
def test_trace_is_minus_two_on_an_odd_order_characteristic_value(order, q):
    # At a = a_n(q), n odd, ce_n is pi-antiperiodic, so the monodromy over pi has the double
    # multiplier -1 and trace -2 (McLachlan, Theory and Application of Mathieu Functions,
    # from memory; the values by scipy.special.mathieu_a). 120 steps of pi: to 1e-8.
    a = special.mathieu_a(order, q)
    assert hill_trace(mathieu_nodes(a, q, 120), math.pi, 120) == pytest.approx(-2.0, abs=1e-8)


@pytest.mark.parametrize("a,q", [(0.3, 0.2), (-1.5, 3.0), (30.0, 6.0), (400.0, 40.0)])
def test_trace_against_solve_ivp_and_its_sixth_order(a, q):
    # Reference: scipy.integrate.solve_ivp (DOP853, rtol 1e-13) of the 2 x 2 fundamental matrix
    # of Mathieu's equation over pi. 160 steps hold the trace to 1e-8 relative, and from 40 to
    # 80 steps the error falls by at least 2^5 (sixth order: 2^6, less a margin).
    def f(t, y):
        p = a - 2 * q * math.cos(2 * t)
        return [y[2], y[3], -p * y[0], -p * y[1]]

    sol = solve_ivp(f, (0, math.pi), [1.0, 0.0, 0.0, 1.0], method="DOP853", rtol=1e-13,
                    atol=1e-14)
    want = sol.y[0, -1] + sol.y[3, -1]
    scale = max(1.0, abs(want))
    assert abs(hill_trace(mathieu_nodes(a, q, 160), math.pi, 160) - want) < 1e-8 * scale
    coarse = abs(hill_trace(mathieu_nodes(a, q, 40), math.pi, 40) - want)
    fine = abs(hill_trace(mathieu_nodes(a, q, 80), math.pi, 80) - want)
    assert fine < coarse / 2 ** 5 or fine < 1e-12 * scale


def crank_rig(links, stroke_m=0.036):
    return ref.rig(links, ref.crank(stroke_m, 0.08, 600.0),
                   {"speed_rpm": [120.0, 3600.0], "stroke_m": [0.0, 0.036]})


ONE_LINK = [ref.link(0.25, 0.05, [(0.05, 0.25)], 0.0, 2e-3)]
TWO_LINKS = [ref.link(0.15, 0.03, [], 0.0, 0.0), ref.link(0.12, 0.02, [(0.01, 0.12)], 0.0, 0.0)]


@pytest.mark.parametrize("eq", ["inverted", "hanging"])
@pytest.mark.parametrize("speed", [125.0, 700.0, 3500.0])
def test_chart_points_of_a_crank_at_the_charts_own_steps(eq, speed):
    # The chart's own settings for a crank row (the fewest steps it uses: row_settings), one
    # damped link and an undamped two-link chain by its modes. Reference: numpy.linalg.eigvals
    # of the solve_ivp monodromy (DOP853, rtol 1e-12); every multiplier to 1e-7 relative (as
    # in test_floquet_paths; near a collision at -1 a multiplier moves by the square root of
    # the trace's error), and one link's margin |tr u| - 2 cosh(gamma T), with the trace of
    # u = exp(gamma t) q = exp(gamma T) tr(monodromy), to 1e-8 (the chart's edges: 1e-4).
    for links in (ONE_LINK, TWO_LINKS):
        data = crank_rig(links)
        model = derive(ss.rig_from_dict(data))
        settings = row_settings(model, lambda x: (x, 0.036), 120.0, 3600.0, eq)
        assert settings.method in ("monodromy", "modal") and settings.steps
        got = ss.stability(model, eq, speed_rpm=speed, stroke_m=0.036, settings=settings,
                           verify=False)
        want = ref.multipliers(ref.monodromy(data, eq, speed_rpm=speed, stroke_m=0.036))
        assert ref.same_multipliers(got.multipliers, want, 1.0) <= 1e-7 * max(1.0, max(abs(want)))
        if links is ONE_LINK:
            gamma_T = 2e-3 / (2 * ref.properties(data)["inertia_about_pivot_kg_m2"]) * 60 / speed
            trace_u = math.exp(gamma_T) * np.trace(ref.monodromy(data, eq, speed, 0.036))
            margin = abs(trace_u) - 2 * math.cosh(gamma_T)
            assert got.margin == pytest.approx(margin, abs=1e-8 * max(1.0, abs(trace_u)))
        assert got.stable == (max(abs(want)) < 1.0 + (0.0 if links is ONE_LINK else 1e-9))


DAMPED_TWO = [ref.link(0.15, 0.03, [], 0.0, 2e-4), ref.link(0.12, 0.02, [(0.01, 0.12)], 0.0, 1e-4)]


@pytest.mark.parametrize("eq", ["inverted", "hanging"])
@pytest.mark.parametrize("speed", [125.0, 700.0, 3500.0])
def test_chain_points_of_a_crank_at_the_charts_own_steps(eq, speed):
    # The damped chain's exact probe as the chart confirms edges with it (the chain's DOP853
    # monodromy at the chart's steps: one per drive harmonic, not two). Reference:
    # numpy.linalg.eigvals of the solve_ivp monodromy (DOP853, rtol 1e-12); every multiplier
    # to 1e-8 relative, and the verdict.
    data = crank_rig(DAMPED_TWO)
    model = derive(ss.rig_from_dict(data))
    settings = row_settings(model, lambda x: (x, 0.036), 120.0, 3600.0, eq, modal=False)
    got = ss.stability(model, eq, speed_rpm=speed, stroke_m=0.036, settings=settings,
                       verify=False)
    harmonics = model.at(speed, 0.036).harmonics.count
    assert got.method == "monodromy" and got.work["steps"] < 2 * harmonics
    want = ref.multipliers(ref.monodromy(data, eq, speed_rpm=speed, stroke_m=0.036))
    assert ref.same_multipliers(got.multipliers, want, 1.0) <= 1e-8 * max(1.0, max(abs(want)))
    assert got.stable == (max(abs(want)) < 1.0)


def test_fixed_steps_path_keeps_its_steps():
    # Settings(steps=n) is the step count of the scan in RK steps (recorded in work, counted
    # against the scan's RK budget) whatever the trace's own steps. Reference: solve_ivp's
    # multipliers, 1e-7.
    data = crank_rig(ONE_LINK)
    res = ss.stability(ss.rig_from_dict(data), "inverted",
                       settings=Settings(method="monodromy", steps=24), verify=False)
    assert res.work == {"steps": 24}
    want = ref.multipliers(ref.monodromy(data, "inverted"))
    assert ref.same_multipliers(res.multipliers, want, 1.0) <= 1e-7 * max(1.0, max(abs(want)))
    assert np.isclose(res.max_multiplier, max(abs(want)), rtol=1e-7)


@pytest.mark.parametrize("c", [5e-7, -5e-7, 0.0])
def test_steps_of_a_nearly_free_pendulum_take_the_series(c):
    # p = c, so small that every step's exponent has |s^2| = |c| h^2 <= 1e-8 and the closed
    # exponential is taken by its series: u'' + c u = 0 over T = 1 has trace 2 cos(sqrt(c)),
    # 2 cosh(sqrt(-c)) for c < 0, 2 for c = 0 (a free mass: [[1, T], [0, 1]]); 1e-13. The
    # second-order terms of the series (s^2 / 2, s^2 / 6) move the trace by ~c: checked; the
    # fourth-order ones (~c^2 h^4 / 24) lie below rounding, as the module says.
    steps = 10
    nodes = [0.0] * (3 * steps)
    got = hill_trace(nodes, 1.0, steps, offset=c)
    want = 2 * math.cos(math.sqrt(c)) if c >= 0 else 2 * math.cosh(math.sqrt(-c))
    assert abs(got - want) <= 1e-13
    assert c == 0.0 or abs(got - 2.0) >= 0.9 * abs(c)  # the term under test is visible
