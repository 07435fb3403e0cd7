"""Stability edges of an undamped single link on a sine drive against Mathieu's equation.

The linear equation q'' -+ (g + y_p'')/l_eq q = 0 with y_p = A cos(w t) becomes
y'' + (a - 2 q cos 2z) y = 0 under z = w t / 2, a = +-4 g / (l_eq w^2),
|q| = 2 A / l_eq (derivation in refsolvers.mathieu_aq). Its stability edges are
the transition curves a_n(q), b_n(q) (scipy.special.mathieu_a / mathieu_b;
ordering a_0 < b_1 < a_1 < b_2 < ... for q > 0, DLMF 28.2.17 / 28.7).
"""
import math

import numpy as np
import pytest
from scipy import special

import refsolvers as ref
import shakestill as ss

G = ref.G_STANDARD
WINDOW_REL = 1e-6   # the tolerance on window ends
FLIP_REL = 1e-5     # step either side of an edge at which stability must differ
SPEED_LIMITS = [10.0, 60000.0]
STROKE_LIMITS = [0.0, 0.5]


def one_link(length, stroke, rpm, rod_mass=0.0, tip_mass=0.1):
    links = [ref.link(length, rod_mass, [(tip_mass, length)] if tip_mass else [])]
    return ref.rig(links, ref.sine(stroke, rpm),
                   limits={"speed_rpm": SPEED_LIMITS, "stroke_m": STROKE_LIMITS})


# (id, rig dict, l_eq). l_eq of a tip mass on a massless rod is L; of a uniform
# rod alone 2L/3; of the rod plus tip mass (m L^2/3 + M L^2)/(m L/2 + M L).
SCENARIOS = [
    # inverted in the Kapitza band (q = 0.2 < 0.908: no upper speed edge)
    ("kapitza-band", one_link(0.25, 0.05, 1000.0), 0.25),
    # short rod, q = 1 > 0.908: inverted has an upper speed edge at b_1(q)
    ("short-rod-upper-edge", one_link(0.03, 0.02, 900.0, rod_mass=0.01, tip_mass=0.0), 0.02),
    # hanging above its first tongue (a < b_1)
    ("hanging-fast", one_link(0.3, 0.1, 600.0, rod_mass=0.05, tip_mass=0.02),
     (0.05 * 0.09 / 3 + 0.02 * 0.09) / (0.05 * 0.15 + 0.02 * 0.3)),
    # hanging between the first and second tongue (a_1 < a < b_2)
    ("hanging-between-1-2", one_link(0.3, 0.1, 76.0, rod_mass=0.05, tip_mass=0.02),
     (0.05 * 0.09 / 3 + 0.02 * 0.09) / (0.05 * 0.15 + 0.02 * 0.3)),
    # hanging between the second and third tongue (a_2 < a < b_3)
    ("hanging-between-2-3", one_link(0.3, 0.1, 49.0, rod_mass=0.05, tip_mass=0.02),
     (0.05 * 0.09 / 3 + 0.02 * 0.09) / (0.05 * 0.15 + 0.02 * 0.3)),
    # hanging inside its first tongue (b_1 < a < a_1): unstable, null windows
    ("hanging-in-tongue", one_link(0.25, 0.05, 120.0), 0.25),
    # inverted below Kapitza's speed: unstable, null windows
    ("inverted-too-slow", one_link(0.25, 0.05, 400.0), 0.25),
]


def close(got, want, rel):
    return abs(got - want) <= rel * abs(want) + 1e-12


# ------------------------------------------------ the references themselves

@pytest.mark.parametrize("q", [0.0, 0.05, 0.4, 0.908, 1.5, 4.0])
def test_scipy_characteristic_values_match_dlmf_recurrence(q):
    # scipy.special.mathieu_a / mathieu_b against the tridiagonal recurrences of
    # DLMF 28.4 solved with numpy.linalg.eigvalsh; tolerance 1e-10 absolute.
    for n in range(5):
        assert abs(special.mathieu_a(n, q) - ref.char_value_tridiagonal("a", n, q)) < 1e-10
        assert abs(special.mathieu_b(n + 1, q) - ref.char_value_tridiagonal("b", n + 1, q)) < 1e-10


def test_mapping_puts_transition_curves_at_trace_two():
    # On a transition curve a Floquet multiplier is +-1, so |trace|/2 of the
    # one-cycle monodromy is 1 (Floquet theory; Magnus & Winkler, Hill's equation).
    # The monodromy comes from scipy.integrate.solve_ivp, the curve from scipy.special;
    # tolerance 1e-9 on |trace|/2 checks the a, q mapping used everywhere here.
    data, l_eq = SCENARIOS[0][1], SCENARIOS[0][2]
    a, q = ref.mathieu_aq(l_eq, G, 0.05, 1000.0, "inverted")
    edge = ref.speed_window(l_eq, G, 0.05, 1000.0, "inverted", SPEED_LIMITS)[0]
    half_trace = np.trace(ref.monodromy(data, "inverted", speed_rpm=edge)) / 2
    assert abs(abs(half_trace) - 1.0) < 1e-9
    # and at the operating point a, q lie strictly inside the Kapitza band
    assert special.mathieu_a(0, q) < a < special.mathieu_b(1, q)


# ---------------------------------------------------------------- the engine

def reference_for(data, l_eq, equilibrium):
    drive = data["drive"]
    args = (l_eq, G, drive["stroke_m"], drive["speed_rpm"], equilibrium)
    return (ref.speed_window(*args, SPEED_LIMITS), ref.stroke_window(*args, STROKE_LIMITS))


@pytest.mark.parametrize("name,data,l_eq", SCENARIOS, ids=[s[0] for s in SCENARIOS])
@pytest.mark.parametrize("equilibrium", ["inverted", "hanging"])
def test_check_windows_equal_mathieu_edges(name, data, l_eq, equilibrium):
    # Window ends from ss.check against the transition curves of
    # scipy.special.mathieu_a / mathieu_b; tolerance 1e-6 relative (limits 1e-9).
    speed_ref, stroke_ref = reference_for(data, l_eq, equilibrium)
    result = ss.check(ss.rig_from_dict(data))[equilibrium]
    assert result["stable"] == (speed_ref is not None)
    for key, want in (("speed_window_rpm", speed_ref), ("stroke_window_m", stroke_ref)):
        got = result[key]
        if want is None:
            assert got is None, f"{key}: {got} where Mathieu says unstable"
            continue
        assert got is not None, f"{key} is null where Mathieu says stable ({want})"
        for g_end, w_end in zip(got, want):
            assert close(g_end, w_end, WINDOW_REL), f"{key}: {got} vs Mathieu {want}"


STABLE = [(name, data, l_eq, eq) for name, data, l_eq in SCENARIOS
          for eq in ("inverted", "hanging") if reference_for(data, l_eq, eq)[0] is not None]


@pytest.mark.parametrize("name,data,l_eq,equilibrium", STABLE,
                         ids=[f"{s[0]}-{s[3]}" for s in STABLE])
def test_stability_flips_across_mathieu_edges(name, data, l_eq, equilibrium):
    # ss.stability just inside / just outside each Mathieu edge (scipy.special),
    # 1e-5 relative either side; limits are not edges and are left out.
    speed_ref, stroke_ref = reference_for(data, l_eq, equilibrium)
    rig = ss.rig_from_dict(data)
    drive = data["drive"]
    edges = [("speed_rpm", e, side, drive["speed_rpm"]) for e, side, lim in
             zip(speed_ref, (-1, 1), SPEED_LIMITS) if e != lim]
    edges += [("stroke_m", e, side, drive["stroke_m"]) for e, side, lim in
              zip(stroke_ref, (-1, 1), STROKE_LIMITS) if e != lim]
    assert edges, "scenario has no edge inside the limits"
    for key, edge, side, _ in edges:
        inside = ss.stability(rig, equilibrium, **{key: edge * (1 - side * FLIP_REL)})
        outside = ss.stability(rig, equilibrium, **{key: edge * (1 + side * FLIP_REL)})
        assert inside.stable and not outside.stable, (
            f"{key} edge {edge}: inside {inside.max_multiplier}, outside {outside.max_multiplier}")


@pytest.mark.parametrize("name,data,l_eq", SCENARIOS, ids=[s[0] for s in SCENARIOS])
@pytest.mark.parametrize("equilibrium", ["inverted", "hanging"])
def test_operating_point_multiplier_matches_solve_ivp(name, data, l_eq, equilibrium):
    # Undamped: multipliers rho, 1/rho (det = 1, Liouville); the largest |rho| is
    # |t| + sqrt(t^2 - 1) with t = trace/2 from scipy.integrate.solve_ivp (DOP853,
    # 1e-12), or exactly 1 on the unit circle; tolerance 1e-8 relative.
    t = np.trace(ref.monodromy(data, equilibrium)) / 2
    want = abs(t) + math.sqrt(t * t - 1) if abs(t) > 1 else 1.0
    res = ss.stability(ss.rig_from_dict(data), equilibrium)
    assert res.converged
    assert close(res.max_multiplier, want, 1e-8), (res.max_multiplier, want)
    assert res.stable == (abs(t) < 1)
    if abs(t) < 1:  # slow frequency nu f, nu = arccos(t) / (2 pi) (contract)
        nu = math.acos(t) / (2 * math.pi)
        assert close(res.slow_frequency_hz, nu * data["drive"]["speed_rpm"] / 60, 1e-7)
