"""The Floquet module's limits and verdict rules at their exact edges: Hill's work limit one row
either side of MAX_HILL_WORK, the chain's margin at its guards (no finite multiplier, all zero,
the largest exactly on the unit circle), and the verdict rule at margin 0 and at the unit
circle's allowance.

References: the one-cycle monodromy by scipy.integrate.solve_ivp (DOP853, 1e-12) on the rig's
Lagrangian (refsolvers), its multipliers by numpy.linalg.eigvals; the contract's rules
(architecture.md: margin < 0 stable; undamped, max |rho| <= 1 + 1e-9 on the circle; the chain's
margin log max |rho|; nu = |arg rho| / (2 pi)). Each test calls the engine in its own body (mutmut
maps a test to the functions its body reaches).
"""
import math

import numpy as np

import pytest

import refsolvers as ref
import shakestill as ss
from shakestill.equilibria import floquet
from shakestill.equilibria.floquet import Settings
from shakestill.model.derived import as_model
from shakestill.model.rig import OutOfReach

F_HZ = 40.0  # 2400 rpm
# A crank of rod 0.06 m and stroke 0.02 m: its first eleven harmonics kept (Settings.harmonics),
# the twelfth is 3.5e-13 of the first, so the kept drive is the crank's to far below 1e-7.
HARMONICS = 11
# MAX_HILL_WORK = 4e6 = rows x band width^2 with rows 2R + 1 and width 2 H + 1 (the documented
# rule): at H = 11, 529 (2R + 1) <= 4e6 holds up to R = 3780 (7561 x 529 = 3,999,769) and fails
# at R = 3781 (7563 x 529 = 4,000,827), hand arithmetic. The slack at 3780 (231) is under one
# width^2 (529), so half a row more already crosses the limit.
LAST_ROWS = 3780


def crank_link():
    return ref.rig([ref.link(0.30, 0.05, [(0.02, 0.30)])], ref.crank(0.02, 0.06, 2400.0))


def test_hill_work_limit_holds_one_row_under():
    assert (2 * LAST_ROWS + 1) * (2 * HARMONICS + 1) ** 2 == 3_999_769  # hand arithmetic
    data = crank_link()
    res = ss.stability(ss.rig_from_dict(data), "inverted",
                       settings=Settings(truncation=LAST_ROWS, harmonics=HARMONICS), verify=False)
    assert res.method == "hill" and res.work == {"truncation": LAST_ROWS, "harmonics": HARMONICS}
    # multipliers against numpy.linalg.eigvals of the full crank's solve_ivp monodromy, 1e-9
    want = ref.multipliers(ref.monodromy(data, "inverted"))
    assert ref.same_multipliers(res.multipliers, want, 1.0) <= 1e-9


def test_hill_work_limit_refuses_one_row_over():
    # One row more (7563 x 529 = 4,000,827 > 4e6) is refused by name: the field, the rows asked,
    # the stroke and its ratio to the equivalent length I / (m c) (refsolvers.properties) (house
    # rule, no source).
    assert (2 * (LAST_ROWS + 1) + 1) * (2 * HARMONICS + 1) ** 2 == 4_000_827
    data = crank_link()
    ratio = 0.02 / ref.properties(data)["l_eq_m"]
    with pytest.raises(OutOfReach, match=r"drive.stroke_m: outside what this method can resolve: "
                                         rf"Hill's determinant would need {LAST_ROWS + 1} rows at a "
                                         rf"stroke of 0.02 m, {ratio:.3g} times the pendulum's "
                                         "equivalent length"):
        ss.stability(ss.rig_from_dict(data), "inverted",
                     settings=Settings(truncation=LAST_ROWS + 1, harmonics=HARMONICS),
                     verify=False)


@pytest.mark.parametrize("damping", [0.0, 2e-4])
def test_chain_margin_guards(damping):
    # The chain's margin (architecture.md): log max |rho| less the undamped allowance 1e-9;
    # +inf when a multiplier is not finite (an overflowed cycle: unstable beyond measure),
    # -inf when every multiplier is zero (log 0); hand rule, exact.
    two = ref.rig([ref.link(0.20, 0.04, [(0.01, 0.20)], 0.0, damping),
                   ref.link(0.15, 0.03, [(0.01, 0.15)], 1e-5, damping)], ref.sine(0.02, 2400.0))
    m = as_model(ss.rig_from_dict(two))
    allowance = 0.0 if damping else 1e-9
    assert floquet._multi_margin(m, [0.5, math.inf, 0.1, 0.2]) == math.inf
    assert floquet._multi_margin(m, [complex(math.inf, 0.0), 0.5]) == math.inf
    assert floquet._multi_margin(m, [0.0, 0.0, 0.0j, 0.0]) == -math.inf
    # the largest exactly on the unit circle: log 1 = 0, less the allowance
    assert floquet._multi_margin(m, [1.0, 0.5, 0.25, 0.5j]) == -allowance
    assert floquet._multi_margin(m, [0.5, -2.0, 0.1, 0.1]) == pytest.approx(
        math.log(2.0) - allowance, abs=1e-15)


def test_verdict_rule_at_its_edges():
    # The verdict (architecture.md): damped, stable exactly when margin < 0 (margin 0 and 0.5
    # are unstable); undamped, also when max |rho| <= 1 + 1e-9 (the unit circle's allowance),
    # whatever the margin's sign. Sway nu f = |arg rho| / (2 pi) x 40 Hz per pair, only when
    # stable. Hand rule on made-up multipliers, exact.
    damped = as_model(ss.rig_from_dict(ref.rig([ref.link(0.30, 0.05, [(0.02, 0.30)], 0.0, 2e-4)],
                                               ref.sine(0.02, 2400.0))))
    bare = as_model(ss.rig_from_dict(ref.rig([ref.link(0.30, 0.05, [(0.02, 0.30)])],
                                             ref.sine(0.02, 2400.0))))
    pair = [0.9 * complex(math.cos(0.3), s * math.sin(0.3)) for s in (1, -1)]
    for margin, stable in ((0.0, False), (0.5, False), (-1e-12, True)):
        res = floquet._summarise(damped, "hanging", pair, margin, "hill")
        assert res.stable is stable and res.margin == margin
        assert res.max_multiplier == pytest.approx(0.9, rel=1e-15)
        assert res.slow_frequency_hz == (pytest.approx(0.3 / (2 * math.pi) * F_HZ, rel=1e-12)
                                         if stable else None)
    for top, stable in ((1.0 + 1e-9, True), (1.0 + 0.5e-9, True), (1.0 + 3e-9, False),
                        (1.5, False)):
        rhos = [complex(top, 0.0), complex(1.0 / top, 0.0)]  # real: |rho| is top exactly
        for margin in (0.0, 0.5):
            res = floquet._summarise(bare, "inverted", rhos, margin, "hill")
            assert res.stable is stable, (top, margin)
            assert res.max_multiplier == top
            assert (res.sway_modes_hz is not None) == stable


def two_links(speed_rpm):
    links = [ref.link(0.20, 0.04, [(0.01, 0.20)], 0.0, 2e-4),
             ref.link(0.15, 0.03, [(0.01, 0.15), (0.005, 0.05)], 1e-5, 1e-4)]
    return ref.rig(links, ref.sine(0.02, speed_rpm))


def test_chain_refinement_stops_at_twice_max_steps():
    # The refinement asks n + max(8, n // 2) steps but never more than 2 MAX_STEPS = 8000
    # (cycle.MAX_STEPS, the documented cap): from 7990 it takes 8000. Multipliers against
    # numpy.linalg.eigvals of the solve_ivp monodromy, 1e-9; the equilibrium echoed.
    data = two_links(2400.0)
    res = ss.stability(ss.rig_from_dict(data), "inverted", settings=Settings(steps=7990))
    assert res.method == "monodromy" and res.equilibrium == "inverted"
    assert res.work == {"steps": 8000}
    assert ref.same_multipliers(res.multipliers, ref.multipliers(ref.monodromy(data, "inverted")),
                                1.0) <= 1e-9
    assert res.converged and res.error_estimate <= 1e-8


def test_chain_convergence_is_relative_to_the_largest_multiplier():
    # At 900 rpm the inverted damped chain is unstable (max |rho| 1.45 by numpy.linalg.eigvals of
    # the solve_ivp monodromy). At 7 steps per cycle the refinement moves the multipliers by about
    # 1.04e-8: the coarse cycle's own distance from solve_ivp's (the finer at 15 steps is ~1e3
    # times closer), 2%. That is over 1e-8 but within 1e-8 x max |rho|, so converged by the
    # documented rule (change <= CONVERGENCE_TOLERANCE x max(1, max |rho|)).
    data = two_links(900.0)
    rig = ss.rig_from_dict(data)
    want = ref.multipliers(ref.monodromy(data, "inverted"))
    top = max(abs(want))
    res = ss.stability(rig, "inverted", settings=Settings(steps=7))
    coarse = ss.stability(rig, "inverted", settings=Settings(steps=7), verify=False)
    distance = max(min(abs(x - y) for y in want) for x in coarse.multipliers)
    assert res.error_estimate == pytest.approx(distance, rel=0.02)
    assert 1e-8 < res.error_estimate <= 1e-8 * top
    assert res.converged and res.message == "" and not res.stable
    assert res.work == {"steps": 15}  # 7 + max(8, 3)
    assert ref.same_multipliers(res.multipliers, want, 1.0) <= 1e-9


def test_one_damped_link_is_its_own_mode():
    # A single link's one sway mode has no modal coupling to speak of (a 1 x 1 modal damping
    # matrix has no off-diagonal, Acheson 1993's decoupling holds trivially), so damped or
    # not, its modes are the chain exactly; a damped two-link chain whose dampers couple the
    # modes is not (its modal damping's off-diagonal, by scipy.linalg.eigh(K, M), is 0.014).
    import scipy.linalg
    one = as_model(ss.rig_from_dict(ref.rig([ref.link(0.30, 0.05, [(0.02, 0.30)], 0.0, 2e-4)],
                                            ref.sine(0.02, 2400.0))))
    assert one.damped and floquet.modes_decouple(one)
    data = two_links(2400.0)
    lin = ss.linearise(ss.rig_from_dict(data), "hanging")
    _, x = scipy.linalg.eigh(np.array(lin.K), np.array(lin.M))  # X^T M X = I
    coupling = abs((x.T @ np.array(lin.D) @ x)[0, 1])
    assert coupling > 1e-6
    assert not floquet.modes_decouple(as_model(ss.rig_from_dict(data)))


def test_chain_convergence_scale_is_one_inside_the_circle():
    # A stroke of 18 mm, hanging: stable (max |rho| 0.9995 < 1 by numpy.linalg.eigvals of the
    # solve_ivp monodromy), so the allowance is 1e-8 x max(1, 0.9995) = 1e-8. At 6 steps per
    # cycle the refinement moves the multipliers by about 1.3e-8, the coarse cycle's distance
    # from solve_ivp's (2%): not converged, and the message says so.
    data = two_links(2400.0)
    rig = ss.rig_from_dict(data)
    want = ref.multipliers(ref.monodromy(data, "hanging", stroke_m=0.018))
    assert max(abs(want)) < 1
    res = ss.stability(rig, "hanging", stroke_m=0.018, settings=Settings(steps=6))
    coarse = ss.stability(rig, "hanging", stroke_m=0.018, settings=Settings(steps=6), verify=False)
    distance = max(min(abs(x - y) for y in want) for x in coarse.multipliers)
    assert res.error_estimate == pytest.approx(distance, rel=0.02)
    assert 1e-8 < res.error_estimate < 2e-8
    assert not res.converged and res.message.startswith("monodromy not converged at 6 steps")


def one_link():
    return ref.rig([ref.link(0.30, 0.05, [(0.02, 0.30)])], ref.sine(0.02, 2400.0))


def solve_ivp_trace(data, eq, **at):
    # undamped: the trace of the one-cycle monodromy, scipy solve_ivp (refsolvers), is the
    # Hill trace the determinant approximates (Magnus & Winkler, Hill's equation, ch. 2)
    return float(np.trace(ref.monodromy(data, eq, **at)))


@pytest.mark.parametrize("rows, converged", [(1, False), (2, True)])
def test_hill_refinement_reports_the_trace_change(rows, converged):
    # Hill's determinant at 1 or 2 rows, refined to rows + 4: the reported change is the coarse
    # trace's own error (solve_ivp's trace against the unrefined result's rho_1 + rho_2; the
    # refined trace is ~1e3 times closer), 1%; over CONVERGENCE_TOLERANCE x max(1, |trace|) at
    # one row (3.5e-6: reported with its row count), under it at two (1.9e-11).
    data = one_link()
    rig = ss.rig_from_dict(data)
    res = ss.stability(rig, "inverted", settings=Settings(truncation=rows))
    coarse = ss.stability(rig, "inverted", settings=Settings(truncation=rows), verify=False)
    exact = solve_ivp_trace(data, "inverted")
    assert res.error_estimate == pytest.approx(abs(sum(coarse.multipliers).real - exact), rel=0.01)
    assert res.converged is converged and res.equilibrium == "inverted" and res.method == "hill"
    assert res.message == ("" if converged else
                           f"Hill determinant not converged at {rows} rows: the trace changed "
                           f"by {res.error_estimate:.2g} when refined")
    assert res.work == {"truncation": rows, "harmonics": 1}
    # the result keeps the refined multipliers: solve_ivp's trace to 1e-9
    assert abs(sum(res.multipliers).real - exact) < 1e-9


def test_hill_convergence_scale_is_the_trace():
    # A stroke of 53 mm, hanging, 2 rows: |trace| 1.74 (solve_ivp), the refinement's change
    # 1.97e-8 (the coarse trace's error against solve_ivp's, 1%): over 1e-8 x 1.74, so not
    # converged (the documented rule), though under 2e-8.
    data = one_link()
    rig = ss.rig_from_dict(data)
    exact = solve_ivp_trace(data, "hanging", stroke_m=0.053)
    res = ss.stability(rig, "hanging", stroke_m=0.053, settings=Settings(truncation=2))
    coarse = ss.stability(rig, "hanging", stroke_m=0.053, settings=Settings(truncation=2),
                          verify=False)
    assert res.error_estimate == pytest.approx(abs(sum(coarse.multipliers).real - exact), rel=0.01)
    assert 1e-8 * abs(exact) < res.error_estimate < 2e-8
    assert not res.converged


@pytest.mark.parametrize("method", ["modal", None])
def test_modal_hill_refinement_is_reported(method):
    # An undamped two-link chain by its sway modes' Hill determinants (asked, or by default: the
    # modes are the chain exactly), 2 rows each: the refinement moves a mode's trace by more than
    # 1e-8, so the result says so; it keeps the refined multipliers, numpy.linalg.eigvals of
    # the solve_ivp monodromy to 1e-7 relative.
    data = ref.rig([ref.link(0.20, 0.04, [(0.01, 0.20)]),
                    ref.link(0.15, 0.03, [(0.01, 0.15), (0.005, 0.05)], 1e-5)],
                   ref.sine(0.02, 2400.0))
    res = ss.stability(ss.rig_from_dict(data), "inverted",
                       settings=Settings(truncation=2, method=method))
    assert res.method == "hill (sway modes)" and not res.converged
    assert res.error_estimate > 1e-8
    assert res.message.startswith("Hill determinant not converged at 2 rows")
    want = ref.multipliers(ref.monodromy(data, "inverted"))
    assert ref.same_multipliers(res.multipliers, want, 1.0) <= 1e-7


def test_hill_method_asked_by_name_and_the_point_echoed():
    # settings.method "hill" is one of the documented names: one link by Hill's determinant at
    # another operating point, echoed; multipliers against numpy.linalg.eigvals of solve_ivp's
    # monodromy at that point, 1e-9.
    data = one_link()
    res = ss.stability(ss.rig_from_dict(data), "hanging", speed_rpm=2000.0, stroke_m=0.015,
                       settings=Settings(method="hill"))
    assert (res.speed_rpm, res.stroke_m, res.method) == (2000.0, 0.015, "hill")
    want = ref.multipliers(ref.monodromy(data, "hanging", speed_rpm=2000.0, stroke_m=0.015))
    assert ref.same_multipliers(res.multipliers, want, 1.0) <= 1e-9
    with pytest.raises(ValueError) as err:
        ss.stability(ss.rig_from_dict(data), "hanging", settings=Settings(method="fast"))
    assert str(err.value) == "settings.method: 'fast' is not 'hill', 'monodromy' or 'modal'"
