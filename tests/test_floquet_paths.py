"""The Floquet entry point's other paths: fixed scan settings (RK trace, modal Hill and modal
RK), the refinement's report, the sway modes, and refused arguments.

References: the one-cycle monodromy by scipy.integrate.solve_ivp (DOP853, 1e-12) on M, D, K
from the chain's Lagrangian (refsolvers, built from the rig file, not from the engine), its
multipliers by numpy.linalg.eigvals; the contract's rules for verdict and sway frequency
(architecture.md: nu = |arg rho| / (2 pi)).
"""
import math

import numpy as np
import pytest

import refsolvers as ref
import shakestill as ss
from shakestill.equilibria.floquet import Settings, sway_frequencies_hz
from shakestill.model.rig import OutOfReach

F_HZ = 40.0  # 2400 rpm
MULT_REL = 1e-7  # each multiplier against eigvals of the solve_ivp monodromy, relative


def one_link(damping):
    return ref.rig([ref.link(0.30, 0.05, [(0.02, 0.30)], 0.0, damping)], ref.sine(0.02, 2400.0))


def two_links(damping=(0.0, 0.0), drive=None):
    links = [ref.link(0.20, 0.04, [(0.01, 0.20)], 0.0, damping[0]),
             ref.link(0.15, 0.03, [(0.01, 0.15), (0.005, 0.05)], 1e-5, damping[1])]
    return ref.rig(links, drive or ref.sine(0.02, 2400.0))


def reference(data, eq):
    return ref.multipliers(ref.monodromy(data, eq))


@pytest.mark.parametrize("eq", ["inverted", "hanging"])
@pytest.mark.parametrize("damping", [0.0, 2e-3])
def test_rk_trace_with_fixed_steps(eq, damping):
    # One link, method "monodromy" with fixed steps and no refinement (a scan point):
    # multipliers against numpy.linalg.eigvals of the solve_ivp monodromy, 1e-7 relative;
    # the verdict by the contract (damped: max |rho| < 1).
    data = one_link(damping)
    res = ss.stability(ss.rig_from_dict(data), eq, settings=Settings(method="monodromy", steps=60),
                       verify=False)
    want = reference(data, eq)
    assert res.method == "monodromy" and res.work == {"steps": 60} and res.equilibrium == eq
    assert ref.same_multipliers(res.multipliers, want, 1.0) <= MULT_REL
    top = max(abs(want))
    assert abs(res.max_multiplier - top) <= 1e-8 * max(1.0, top)
    if damping:
        assert res.stable == (top < 1)
        # margin = |trace of u| - 2 cosh(gamma T) has the verdict's sign (hand rule from
        # rho_1 rho_2 = exp(-2 gamma T)): negative exactly when stable
        assert (res.margin < 0) == res.stable
        # and its value: the trace of u = exp(gamma t) q is exp(gamma T) tr(monodromy), gamma
        # = c / (2 I) with I about the pivot (refsolvers.properties); solve_ivp's trace, 1e-7
        gamma_T = damping / (2 * ref.properties(data)["inertia_about_pivot_kg_m2"]) / F_HZ
        trace_u = math.exp(gamma_T) * np.trace(ref.monodromy(data, eq))
        assert res.margin == pytest.approx(abs(trace_u) - 2 * math.cosh(gamma_T), abs=1e-7)


@pytest.mark.parametrize("eq", ["inverted", "hanging"])
@pytest.mark.parametrize("steps", [None, 80])
def test_modal_settings_on_an_undamped_chain(eq, steps):
    # Several links, method "modal": each sway mode's Hill determinant (steps None, refined)
    # or its 2 x 2 RK monodromy (steps set, no refinement). Undamped, the modes are the chain
    # exactly (Acheson 1993), so the multipliers are numpy.linalg.eigvals of the chain's
    # solve_ivp monodromy, 1e-7 relative.
    data = two_links()
    res = ss.stability(ss.rig_from_dict(data), eq, settings=Settings(method="modal", steps=steps),
                       verify=steps is None)
    assert res.method == "hill (sway modes)"
    want = reference(data, eq)
    assert len(res.multipliers) == 4
    assert ref.same_multipliers(res.multipliers, want, 1.0) <= MULT_REL
    top = max(abs(want))
    assert res.stable == (top <= 1 + 1e-9)
    if steps is not None:
        assert res.work == {"steps": steps}
    else:
        assert res.converged and res.error_estimate < 1e-8
        assert res.work["truncation"] >= 8 and res.work["harmonics"] == 1


@pytest.mark.parametrize("eq", ["inverted", "hanging"])
def test_modal_rk_with_damping_is_the_modes_prediction(eq):
    # With damping the modal RK treats each mode's diagonal damping c_i alone: for one mode
    # rho_1 rho_2 = exp(-c_i T) (Liouville's formula on the 2 x 2 system, hand rule), so the
    # product of all four multipliers is exp(-(c_1 + c_2) T) = det of the chain's monodromy
    # (the trace of the modal damping matrix is trace(M^-1 D)); checked against the
    # solve_ivp monodromy's determinant (numpy.linalg.det), 1e-9 relative.
    data = two_links((2e-4, 1e-4))
    res = ss.stability(ss.rig_from_dict(data), eq, settings=Settings(method="modal", steps=80),
                       verify=False)
    assert res.equilibrium == eq and res.method == "hill (sway modes)"
    # the verdict's sign rule: margin < 0 exactly when every multiplier is inside the circle
    assert (res.margin < 0) == (res.max_multiplier < 1)
    prod = np.prod(np.asarray(res.multipliers))
    want = np.linalg.det(ref.monodromy(data, eq))
    assert abs(prod / want - 1) < 1e-9


def test_damped_chain_by_refined_rk():
    # A damped two-link chain (modes coupled) by the chain's RK monodromy, refined: multipliers
    # against numpy.linalg.eigvals of solve_ivp's, 1e-7; the refinement's change is the
    # reported estimate and within the convergence tolerance (1e-8), steps grown by half.
    data = two_links((2e-4, 1e-4))
    res = ss.stability(ss.rig_from_dict(data), "inverted", settings=Settings(steps=48))
    assert res.method == "monodromy" and res.converged and res.message == ""
    assert res.work == {"steps": 72}  # 48 + max(8, 48 // 2), the documented refinement
    assert ref.same_multipliers(res.multipliers, reference(data, "inverted"), 1.0) <= MULT_REL
    assert 0 < res.error_estimate <= 1e-8


def test_too_few_steps_are_reported_not_hidden():
    # 24 steps per cycle against 36: the multipliers move by more than 1e-8 (the RK8 error
    # at this step, hand estimate (rate h)^8 ~ 1e-6); the result says so and keeps the finer.
    data = two_links((2e-4, 1e-4))
    res = ss.stability(ss.rig_from_dict(data), "inverted", settings=Settings(steps=4))
    assert not res.converged
    assert res.message.startswith("monodromy not converged at 4 steps per cycle")
    assert res.error_estimate > 1e-8
    assert res.work == {"steps": 12}


def test_sway_frequencies_from_multipliers():
    # Hand computation from the contract: nu = |arg rho| / (2 pi), one per conjugate pair,
    # ascending. Pairs at angles 0.3 and 1.1 rad, 40 Hz: 0.3/(2 pi) 40 and 1.1/(2 pi) 40.
    rhos = [0.9 * complex(math.cos(a), s * math.sin(a)) for a in (1.1, 0.3) for s in (1, -1)]
    got = sway_frequencies_hz(rhos, 40.0)
    assert got == pytest.approx((0.3 / (2 * math.pi) * 40, 1.1 / (2 * math.pi) * 40), rel=1e-12)
    # three pairs (three links): 0.2, 0.3, 1.1 rad, one frequency each
    rhos += [complex(math.cos(0.2), s * math.sin(0.2)) for s in (1, -1)]
    got = sway_frequencies_hz(rhos, 40.0)
    assert got == pytest.approx(tuple(a / (2 * math.pi) * 40 for a in (0.2, 0.3, 1.1)), rel=1e-12)


def test_two_link_sway_modes_match_eigvals():
    # Undamped stable two-link hanging chain: sway_modes_hz are |arg rho| / (2 pi) f of
    # numpy.linalg.eigvals of the solve_ivp monodromy, one per pair, ascending; 1e-7 Hz.
    data = two_links()
    res = ss.stability(ss.rig_from_dict(data), "hanging")
    assert res.stable
    nus = np.sort(np.abs(np.angle(reference(data, "hanging")))) / (2 * math.pi) * F_HZ
    assert res.sway_modes_hz == pytest.approx(tuple(nus[::2]), abs=1e-7)
    assert res.slow_frequency_hz == res.sway_modes_hz[0]


def test_unstable_point_has_no_sway():
    # Inverted one link at a tenth of the speed: the Kapitza criterion (Landau & Lifshitz
    # sec. 30: A^2 w^2 > 2 g l) fails by far, so unstable, no slow frequency, margin > 0.
    res = ss.stability(ss.rig_from_dict(one_link(2e-4)), "inverted", speed_rpm=240.0)
    assert not res.stable and res.slow_frequency_hz is None and res.sway_modes_hz is None
    assert res.margin > 0 and res.max_multiplier > 1


@pytest.mark.parametrize("kwargs, field", [
    ({"speed_rpm": 0.0}, "speed_rpm"), ({"speed_rpm": -5.0}, "speed_rpm"),
    ({"speed_rpm": math.inf}, "speed_rpm"), ({"speed_rpm": math.nan}, "speed_rpm"),
    ({"stroke_m": -1e-3}, "stroke_m"), ({"stroke_m": math.inf}, "stroke_m"),
    ({"settings": Settings(method="fast")}, "settings.method"),
])
def test_refused_arguments_name_the_field(kwargs, field):
    # Bad input names the field (house rule, no source).
    rig = ss.rig_from_dict(one_link(0.0))
    with pytest.raises(ValueError, match=field):
        ss.stability(rig, "inverted", **kwargs)


def test_refused_equilibrium():
    with pytest.raises(ValueError, match="equilibrium: 'upright'"):
        ss.stability(ss.rig_from_dict(one_link(0.0)), "upright")
    with pytest.raises(ValueError, match="equilibrium"):
        ss.monodromy(ss.rig_from_dict(one_link(0.0)), "sideways")


def test_zero_stroke_is_allowed():
    # A still pivot: hanging pendulum, undamped, multipliers exp(+-i w0 T) with
    # w0 = sqrt(m g c / I) (Landau & Lifshitz sec. 21 small oscillations; I and m c from
    # refsolvers.properties); 1e-8.
    data = one_link(0.0)
    res = ss.stability(ss.rig_from_dict(data), "hanging", stroke_m=0.0)
    props = ref.properties(data)
    w0 = math.sqrt(ref.G_STANDARD / props["l_eq_m"])
    want = complex(math.cos(w0 / F_HZ), math.sin(w0 / F_HZ))
    assert res.stable
    assert ref.same_multipliers(res.multipliers, [want, want.conjugate()], 1.0) < 1e-8


def test_a_stroke_beyond_hills_reach_is_refused():
    # One link on a crank (rod 0.06 m) at a stroke of 0.119 m, next to the dead point where
    # the rod is half the stroke: the drive's harmonics fall slowly and Hill's band would need
    # hundreds of rows of a band hundreds wide, past MAX_HILL_WORK; refused naming
    # drive.stroke_m, the stroke and its ratio to the equivalent length I / (m c)
    # (refsolvers.properties) (house rule, no source).
    data = ref.rig([ref.link(0.30, 0.05, [(0.02, 0.30)])], ref.crank(0.02, 0.06, 2400.0))
    ratio = 0.119 / ref.properties(data)["l_eq_m"]
    with pytest.raises(OutOfReach, match=rf"drive.stroke_m.* 0.119 m, {ratio:.3g} times"):
        ss.stability(ss.rig_from_dict(data), "inverted", stroke_m=0.119)


@pytest.mark.parametrize("eq", ["inverted", "hanging"])
def test_modal_harmonics_setting_keeps_the_first(eq):
    # A slider-crank's height r cos(phi) + sqrt(l^2 - r^2 sin^2 phi) - l has r cos(phi) as its
    # first harmonic (the root is pi-periodic in phi: even harmonics only), so keeping one
    # harmonic of the crank is the sine drive of the same stroke: multipliers against
    # numpy.linalg.eigvals of the sine chain's solve_ivp monodromy, 1e-7 relative.
    crank = ss.rig_from_dict(two_links(drive=ref.crank(0.02, 0.06, 2400.0)))
    res = ss.stability(crank, eq, settings=Settings(method="modal", harmonics=1))
    assert res.work["harmonics"] == 1
    want = reference(two_links(), eq)
    assert ref.same_multipliers(res.multipliers, want, 1.0) <= MULT_REL


@pytest.mark.parametrize("damping", [(0.0, 0.0), (2e-4, 1e-4)])
def test_chain_margin_is_the_log_of_the_largest_multiplier(damping):
    # The documented margin of the chain's monodromy: log max |rho|, less 1e-9 without damping
    # (the unit circle's allowance), none with it (hand rule, architecture.md); 1e-15.
    data = two_links(damping)
    res = ss.stability(ss.rig_from_dict(data), "hanging", settings=Settings(method="monodromy"))
    assert res.method == "monodromy"
    allowance = 0.0 if damping[0] else 1e-9
    assert res.margin == pytest.approx(math.log(res.max_multiplier) - allowance, abs=1e-15)


def test_step_settings_reach_the_step_count():
    # Hand rule of chain_steps (the chain's Taylor cycle): (rate x period + 2 pi) / steps =
    # cycle_phase, the rate sqrt((g + A w^2) max|eig M^-1 K|) + max|eig M^-1 D| (numpy),
    # so a tenth of the phase asks for ten times the steps (ceil: within 1 and 10); the sine
    # drive's series then holds at any count this fine; an explicit step count is taken as is.
    from shakestill.equilibria.cycle import CYCLE_MIN_STEPS
    data = ss.rig_from_dict(two_links((2e-4, 1e-4)))
    lin = ss.linearise(data, "inverted")
    m_inv = np.linalg.inv(np.array(lin.M))
    d = data.drive
    omega = 2 * math.pi * d.speed_rpm / 60
    rate = math.sqrt((data.g_m_s2 + d.stroke_m / 2 * omega ** 2) *
                     max(abs(np.linalg.eigvals(m_inv @ np.array(lin.K)))))
    rate += max(abs(np.linalg.eigvals(m_inv @ np.array(lin.D))))
    cycle = math.ceil(rate / (d.speed_rpm / 60))  # default_steps' ceil of the rate per cycle
    at = {}
    for phase in (1.0, 0.1):
        res = ss.stability(data, "inverted", settings=Settings(cycle_phase=phase), verify=False)
        at[phase] = res.work["steps"]
        assert at[phase] == max(CYCLE_MIN_STEPS, math.ceil((cycle + 2 * math.pi) / phase))
        # no refinement asked: nothing measured, nothing to report (documented defaults)
        assert (res.error_estimate, res.converged, res.message) == (0.0, True, "")
    assert abs(at[0.1] - 10 * at[1.0]) <= 10
    res = ss.stability(data, "inverted", settings=Settings(steps=200), verify=False)
    assert res.work["steps"] == 200


def test_one_harmonic_with_a_phase_is_mathieus():
    # A shift of z turns theta_1 = q e^{i a} into q (the trace is a property of the equation's
    # period, not of its origin): at theta0 = scipy.special.mathieu_a(1, q), theta_1 = -q
    # e^{0.7 i}, the trace is -2 (period 2 pi, odd order), 1e-8 as the real case.
    from scipy.special import mathieu_a

    from shakestill.numerics.hill import default_truncation, hill_trace
    q = 0.9
    a = mathieu_a(1, q)
    theta = (-q * complex(math.cos(0.7), math.sin(0.7)),)
    assert abs(hill_trace(a, theta, default_truncation(a, theta)) + 2.0) < 1e-8


@pytest.mark.parametrize("eq", ["inverted", "hanging"])
def test_one_link_harmonics_setting_keeps_the_first(eq):
    # As above for one link by Hill's determinant: one harmonic of the crank is the sine
    # drive of the same stroke; numpy.linalg.eigvals of the sine rig's solve_ivp monodromy,
    # 1e-7 relative.
    crank = ref.rig([ref.link(0.30, 0.05, [(0.02, 0.30)])], ref.crank(0.02, 0.06, 2400.0))
    res = ss.stability(ss.rig_from_dict(crank), eq, settings=Settings(harmonics=1))
    assert res.method == "hill" and res.work["harmonics"] == 1
    want = reference(one_link(0.0), eq)
    assert ref.same_multipliers(res.multipliers, want, 1.0) <= MULT_REL
