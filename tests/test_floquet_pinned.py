"""The Floquet entry point's rules that no other test reached (issue 12: every number a user
reads pinned by a test that can fail): the Hill determinant's work limit, a refinement that
does not converge on each Hill path, the chain's refinement and its relative acceptance, the
settings handed to the chain's cycle, proportional damping, and the words of a refusal.

References: the one-cycle monodromy by scipy.integrate.solve_ivp (DOP853, 1e-12) on M, D, K
from the chain's Lagrangian (tests/refsolvers.py, built from the rig file, not from the
engine), multipliers by numpy.linalg.eigvals; for the undriven chain the constant system's
eigenvalues (numpy) give the multipliers exp(lambda T); Rayleigh's proportional damping
(D = alpha M + beta K keeps the undamped modes: Rayleigh, Theory of Sound (1877) sec. 97;
Caughey & O'Kelly, J. Appl. Mech. 32 (1965) 583).
"""
import math

import numpy as np
import pytest

import refsolvers as ref
import shakestill as ss
from shakestill.equilibria.cycle import chain_steps
from shakestill.equilibria.floquet import (CONVERGENCE_TOLERANCE, MAX_HILL_WORK, MODAL_METHOD,
                                           HillTooLarge, Settings, _multi_margin, modes_decouple)
from shakestill.model.derived import as_model
from shakestill.model.rig import OutOfReach

MULT_REL = 1e-7  # each multiplier against eigvals of the solve_ivp monodromy, relative


def one_link(drive):
    return ref.rig([ref.link(0.25, 0.04, [(0.03, 0.25)], 0.0, 3e-4)], drive)


def two_links(damping, drive=None, masses=(0.1, 0.1)):
    """Two links carrying point masses at their ends (no rod mass)."""
    links = [ref.link(0.20, 0.0, [(masses[0], 0.20)], 0.0, damping[0]),
             ref.link(0.05, 0.0, [(masses[1], 0.05)], 0.0, damping[1])]
    return ref.rig(links, drive or ref.sine(0.03, 2700.0))


def reference(data, eq, speed_rpm=None, stroke_m=None):
    return ref.multipliers(ref.monodromy(data, eq, speed_rpm, stroke_m))


# ---------------------------------------------------------------- Hill's work limit


def test_hills_work_limit_is_rows_times_band_width_squared():
    # MAX_HILL_WORK bounds (2R + 1) (2H + 1)^2, the rows times the band's width squared of
    # one determinant (its LU's work). With H = 11 harmonics the band is 23 wide: 529 x 7561
    # = 3,999,769 fits 4,000,000 (R = 3780), 529 x 7563 = 4,000,827 does not (R = 3781). The
    # product is odd, so it never equals the even limit: > and >= agree there.
    data = one_link(ref.crank(0.04, 0.05, 2700.0))
    rig = ss.rig_from_dict(data)
    assert len(as_model(rig).harmonics.cos_m) >= 11  # the crank has the harmonics to keep
    assert (2 * 3780 + 1) * 23 ** 2 <= MAX_HILL_WORK < (2 * 3781 + 1) * 23 ** 2
    with pytest.raises(HillTooLarge) as refused:
        ss.stability(rig, "inverted", settings=Settings(truncation=3781, harmonics=11), verify=False)
    problem = refused.value.problems[0]
    assert problem.path == "drive.stroke_m"
    assert problem.message.startswith("outside what this method can resolve: Hill's determinant "
                                      "would need 3781 rows at a stroke of 0.04 m, ")
    assert problem.message.endswith(" times the pendulum's equivalent length")
    # at the limit it runs, and rows beyond convergence change nothing: the multipliers are
    # those of the drive's first 11 harmonics (a crank of r/l = 0.4 keeps 11 to ~1e-7 of its
    # peak: the verdict and the multipliers to 1e-5 of solve_ivp's whole crank)
    big = ss.stability(rig, "inverted", settings=Settings(truncation=3780, harmonics=11), verify=False)
    assert big.work == {"truncation": 3780, "harmonics": 11}
    assert ref.same_multipliers(big.multipliers, reference(data, "inverted"), 1.0) <= 1e-5


# ---------------------------------------------------------------- refinement on Hill's paths


def assert_refinement_reported(res, rows, speed_rpm, stroke_m, eq):
    assert res.converged is False
    assert res.error_estimate > CONVERGENCE_TOLERANCE * max(1.0, res.max_multiplier)
    assert res.message == (f"Hill determinant not converged at {rows} rows: the trace changed "
                           f"by {res.error_estimate:.2g} when refined")
    assert (res.equilibrium, res.speed_rpm, res.stroke_m) == (eq, speed_rpm, stroke_m)
    assert res.work["truncation"] == rows


@pytest.mark.parametrize("eq", ["inverted", "hanging"])
def test_one_link_refinement_that_moves_is_reported_and_keeps_the_finer(eq):
    # Two rows at q ~ 1 are far from converged (Hill's truncation error falls like
    # q^R / (R!)^2): the refinement to 2 + 4 rows moves the trace by ~1e-2; the result says
    # so and keeps the finer trace, whose multipliers are solve_ivp's to ~1e-4 (6 rows).
    data = one_link(ref.sine(0.05, 2400.0))
    res = ss.stability(ss.rig_from_dict(data), eq, 2000.0, 0.06, settings=Settings(truncation=2))
    assert_refinement_reported(res, 2, 2000.0, 0.06, eq)
    assert ref.same_multipliers(res.multipliers, reference(data, eq, 2000.0, 0.06), 1.0) <= 1e-3
    assert res.method == "hill"


def test_modal_refinement_that_moves_is_reported_on_both_modal_paths():
    # An undamped chain is its modes exactly (Acheson 1993): by default and when asked for
    # the modes, two rows are refined and reported alike; the finer modes' multipliers are the
    # chain's (solve_ivp) to the six rows' accuracy.
    data = two_links((0.0, 0.0), ref.sine(0.01, 2700.0))
    rig = ss.rig_from_dict(data)
    assert modes_decouple(as_model(rig))
    want = reference(data, "hanging")
    for settings in (Settings(truncation=2), Settings(truncation=2, method="modal")):
        res = ss.stability(rig, "hanging", settings=settings)
        assert_refinement_reported(res, 2, 2700.0, 0.01, "hanging")
        assert res.method == MODAL_METHOD
        assert ref.same_multipliers(res.multipliers, want, 1.0) <= 1e-3


# ---------------------------------------------------------------- proportional damping


def test_proportionally_damped_chain_is_its_modes_exactly():
    # Point masses m1, m2 at the ends of two links and joint dampers c1 = c2 m1 / m2 make the
    # chain's damping matrix a combination of M and K (worked by hand from D = [[c1 + c2,
    # -c2], [-c2, c2]] and the chain's M and K about either equilibrium), which keeps the
    # undamped modes (Rayleigh): the modes are taken exactly, damped, and their multipliers are
    # the whole chain's (solve_ivp) to 1e-7. Dampers in another ratio couple the modes.
    data = two_links((3e-4, 1e-4), ref.sine(0.01, 2700.0), masses=(0.3, 0.1))
    rig = ss.rig_from_dict(data)
    m = as_model(rig)
    assert m.damped and m.modes.coupling <= 1e-12 and modes_decouple(m)
    for eq in ("inverted", "hanging"):
        res = ss.stability(rig, eq)
        assert res.method == MODAL_METHOD
        assert ref.same_multipliers(res.multipliers, reference(data, eq), 1.0) <= MULT_REL
        assert math.prod(abs(r) for r in res.multipliers) == \
            pytest.approx(ref.liouville_det(data, eq), rel=1e-9)
    coupled = ss.rig_from_dict(two_links((2e-4, 1e-4), ref.sine(0.01, 2700.0)))
    assert not modes_decouple(as_model(coupled))
    assert ss.stability(coupled, "hanging").method == "monodromy"


# ---------------------------------------------------------------- the chain's monodromy


def coupled_rig(drive=None):
    return ss.rig_from_dict(two_links((2e-4, 1e-4), drive))


def test_the_chain_refines_by_half_its_steps_up_to_twice_max_steps():
    # The refinement takes n + max(8, n // 2) steps, at most 2 x MAX_STEPS (8000): 6000 steps
    # are refined with 8000; the multipliers agree with solve_ivp's either way.
    data = two_links((2e-4, 1e-4), ref.crank(0.03, 0.05, 2700.0))
    res = ss.stability(ss.rig_from_dict(data), "inverted", settings=Settings(steps=6000))
    assert res.work == {"steps": 8000}
    assert res.converged and res.error_estimate <= 1e-10
    assert ref.same_multipliers(res.multipliers, reference(data, "inverted"), 1.0) <= MULT_REL
    assert (res.equilibrium, res.speed_rpm, res.stroke_m) == ("inverted", 2700.0, 0.03)


def test_the_chains_refinement_is_accepted_relative_to_the_largest_multiplier():
    # CONVERGENCE_TOLERANCE is relative to max(1, |rho|): at 10 steps this unstable point
    # (|rho| ~ 28.7, stroke 6 cm on a 5 cm link) moves by ~1.5e-8 under refinement, more than
    # 1e-8 absolute but well within 1e-8 x 28.7: accepted. The multipliers: solve_ivp's.
    data = two_links((2e-4, 1e-4), ref.sine(0.06, 2700.0))
    res = ss.stability(ss.rig_from_dict(data), "hanging", settings=Settings(steps=10))
    assert CONVERGENCE_TOLERANCE < res.error_estimate <= 0.1 * CONVERGENCE_TOLERANCE * res.max_multiplier
    assert res.converged and res.message == ""
    assert res.max_multiplier == pytest.approx(max(abs(reference(data, "hanging"))), rel=1e-8)


def test_the_chains_steps_follow_the_settings_given():
    # A scan's cycle_phase and drive_tolerance (the chart's 1.4 and 1e-7) choose the chain's
    # Taylor steps at each point (cycle.chain_steps), not the check's own (1.0 and 1e-10).
    data = two_links((2e-4, 1e-4), ref.crank(0.03, 0.05, 2700.0))
    rig = ss.rig_from_dict(data)
    chart_like = Settings(cycle_phase=1.4, drive_tolerance=1e-7)
    want = chain_steps(as_model(rig), "inverted", cycle_phase=1.4, drive_tolerance=1e-7)
    assert want != chain_steps(as_model(rig), "inverted")  # the two differ here
    res = ss.stability(rig, "inverted", settings=chart_like, verify=False)
    assert res.work == {"steps": want}
    assert ref.same_multipliers(res.multipliers, reference(data, "inverted"), 1.0) <= 1e-8


def test_an_undriven_chain_past_double_precision_is_refused_with_the_point_named():
    # No stroke at 10 rpm: the upright chain is its constant system, multipliers
    # exp(lambda T) with lambda the eigenvalues of [[0, I], [-g M^-1 K, -M^-1 D]] (numpy),
    # ~5.7e53; at 3 rpm they would be ~1e178 and past what the eigenvalues resolve in double
    # precision: refused, naming the links, the speed and the stroke.
    data = two_links((2e-4, 1e-4))
    rig = ss.rig_from_dict(data)
    mass, damp, stiff = ref.chain_matrices(data, "inverted")
    n = mass.shape[0]
    a = np.block([[np.zeros((n, n)), np.eye(n)],
                  [-ref.G_STANDARD * np.linalg.solve(mass, stiff), -np.linalg.solve(mass, damp)]])
    fastest = max(np.linalg.eigvals(a).real)
    res = ss.stability(rig, "inverted", 10.0, 0.0)
    assert res.max_multiplier == pytest.approx(math.exp(fastest * 6.0), rel=1e-6)
    assert not res.stable
    with pytest.raises(OutOfReach) as refused:
        ss.stability(rig, "inverted", 3.0, 0.0)
    problem = refused.value.problems[0]
    assert problem.path == "links"
    assert problem.message.startswith("outside what this method can resolve at 3 rpm and a "
                                      "stroke of 0 m: ")
    assert math.exp(fastest * 20.0) > 1e170


# ---------------------------------------------------------------- margins and arguments


def test_the_chains_margin_is_the_log_of_the_largest_multiplier():
    # The margin of several links: log max |rho| (0 on the unit circle), less the undamped
    # tolerance without dampers; +inf for an overflowed multiplier, -inf for none outside 0.
    damped = as_model(coupled_rig())
    undamped = as_model(ss.rig_from_dict(two_links((0.0, 0.0))))
    assert _multi_margin(damped, [0.5, 1.0, -0.25j]) == 0.0
    assert _multi_margin(damped, [2.0, 0.1]) == pytest.approx(math.log(2.0), rel=1e-15)
    assert _multi_margin(undamped, [1.0, 1j]) == pytest.approx(-1e-9, rel=1e-12)
    assert _multi_margin(damped, [math.inf, 1.0]) == math.inf
    assert _multi_margin(damped, [0.0, 0.0]) == -math.inf


def test_the_methods_asked_for_by_name():
    # "hill" is the one-link default, by name; an unknown name is refused with the choices.
    data = one_link(ref.sine(0.02, 2400.0))
    rig = ss.rig_from_dict(data)
    named = ss.stability(rig, "inverted", settings=Settings(method="hill"))
    assert named == ss.stability(rig, "inverted")
    assert ref.same_multipliers(named.multipliers, reference(data, "inverted"), 1.0) <= MULT_REL
    with pytest.raises(ValueError) as refused:
        ss.stability(rig, "inverted", settings=Settings(method="magic"))
    assert str(refused.value) == ("settings.method: 'magic' is not 'hill', 'monodromy' or 'modal'")
    # a crank whose radius reaches its rod cannot turn (the slider-crank's geometry)
    with pytest.raises(ValueError, match=r"^stroke_m: 0\.1 is more than this crank can turn: a "
                                         r"stroke under twice its 0\.05 m rod \(0\.1 m\)$"):
        ss.stability(ss.rig_from_dict(one_link(ref.crank(0.03, 0.05, 2700.0))), "inverted",
                     2700.0, 0.1)


@pytest.mark.parametrize("name", ["truncation", "harmonics", "steps"])
def test_fixed_settings_below_one_are_refused_by_name(name):
    # Hill keeps at least one harmonic and one row, a cycle at least one step (a zero here
    # crashed inside the determinant): refused naming the setting and what it takes.
    rig = ss.rig_from_dict(one_link(ref.sine(0.02, 2400.0)))
    with pytest.raises(ValueError, match=rf"^settings\.{name}: 0 must be a whole number of at least 1"):
        ss.stability(rig, "inverted", settings=Settings(**{name: 0}))
