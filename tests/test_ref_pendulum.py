"""Mass properties and small oscillations of fixed-pivot pendulums against handbook forms."""
import cmath
import math

import pytest

import refsolvers as ref
import shakestill as ss

G = ref.G_STANDARD
REL = 1e-12   # closed forms evaluated in double precision


def props(links, g=G):
    return ss.properties(ss.rig_from_dict(ref.rig(links, ref.sine(0.02, 2400.0), g=g)))


def close(got, want, rel=REL):
    return abs(got - want) <= rel * abs(want)


@pytest.mark.parametrize("length,mass", [(0.1, 0.01), (0.3, 0.05), (1.0, 2.0)])
def test_uniform_rod_pivoted_at_one_end(length, mass):
    # Compound pendulum, uniform rod about its end: I = m L^2 / 3, l_eq = 2L/3,
    # period 2 pi sqrt(2L / (3 g)) (handbook); 1e-12 relative.
    p = props([ref.link(length, mass)])
    assert close(p.total_mass_kg, mass)
    assert close(p.first_moment_kg_m, mass * length / 2)
    assert close(p.inertia_about_pivot_kg_m2, mass * length ** 2 / 3)
    assert close(p.l_eq_m, 2 * length / 3)
    assert close(1 / p.hanging_frequency_hz, 2 * math.pi * math.sqrt(2 * length / (3 * G)))


@pytest.mark.parametrize("at", [0.3, 0.2, 0.05])
def test_rod_with_point_mass(at):
    # Parallel-axis theorem / point mass: I = m L^2/3 + M s^2, m d = m L/2 + M s (handbook).
    length, rod, bob = 0.3, 0.05, 0.02
    p = props([ref.link(length, rod, [(bob, at)])])
    inertia = rod * length ** 2 / 3 + bob * at ** 2
    first = rod * length / 2 + bob * at
    assert close(p.total_mass_kg, rod + bob)
    assert close(p.link_mass_kg[0], rod + bob)
    assert close(p.inertia_about_pivot_kg_m2, inertia)
    assert close(p.l_eq_m, inertia / first)
    assert close(p.hanging_frequency_hz, math.sqrt(G / (inertia / first)) / (2 * math.pi))


def test_disk_bob_extra_inertia_parallel_axis():
    # A solid disk bob of radius R: J = M R^2 / 2 about its centre (handbook),
    # carried about the pivot by the parallel-axis theorem: I = m L^2/3 + M L^2 + J.
    # The link's centre of mass is not the disk's, but extra inertia without mass is
    # the same about every axis, so the sum holds; 1e-12 relative.
    length, rod, bob, radius = 0.4, 0.1, 0.3, 0.05
    disk = bob * radius ** 2 / 2
    p = props([ref.link(length, rod, [(bob, length)], disk)])
    inertia = rod * length ** 2 / 3 + bob * length ** 2 + disk
    assert close(p.inertia_about_pivot_kg_m2, inertia)
    assert close(p.l_eq_m, inertia / (rod * length / 2 + bob * length))


@pytest.mark.parametrize("m1,m2,l1,l2", [(1.0, 1.0, 0.5, 0.5), (0.3, 0.1, 0.2, 0.35)])
def test_double_pendulum_point_masses(m1, m2, l1, l2):
    # Point masses on massless rods. Normal modes (value from memory, any mechanics text):
    # w^2 = g [ (m1+m2)(l1+l2) -+ sqrt((m1+m2)((m1+m2)(l1+l2)^2 - 4 m1 l1 l2)) ] / (2 m1 l1 l2);
    # equal masses and lengths give w^2 = (2 - sqrt 2) g / l. 1e-12 relative.
    p = props([ref.link(l1, 0.0, [(m1, l1)]), ref.link(l2, 0.0, [(m2, l2)])])
    mt = m1 + m2
    w2 = G * (mt * (l1 + l2) - math.sqrt(mt * (mt * (l1 + l2) ** 2 - 4 * m1 * l1 * l2))) / (
        2 * m1 * l1 * l2)
    if m1 == m2 and l1 == l2:
        assert close(w2, (2 - math.sqrt(2)) * G / l1)
    assert close(p.hanging_frequency_hz, math.sqrt(w2) / (2 * math.pi), 1e-11)
    # aligned: m d = m1 l1 + m2 (l1 + l2), I = m1 l1^2 + m2 (l1 + l2)^2
    assert close(p.first_moment_kg_m, m1 * l1 + m2 * (l1 + l2))
    assert close(p.inertia_about_pivot_kg_m2, m1 * l1 ** 2 + m2 * (l1 + l2) ** 2)
    assert close(p.l_eq_m, (m1 * l1 ** 2 + m2 * (l1 + l2) ** 2) / (m1 * l1 + m2 * (l1 + l2)))


def test_double_compound_pendulum_of_equal_rods():
    # Two equal uniform rods: w^2 = (3 -+ 6/sqrt 7) g / L (value from memory; it is the
    # root of 7 lam^2 - 42 lam + 27 = 0 from the Lagrangian). 1e-11 relative.
    length, mass = 0.25, 0.2
    p = props([ref.link(length, mass), ref.link(length, mass)])
    w2 = (3 - 6 / math.sqrt(7)) * G / length
    assert close(p.hanging_frequency_hz, math.sqrt(w2) / (2 * math.pi), 1e-11)
    assert close(p.total_mass_kg, 2 * mass)
    assert close(p.first_moment_kg_m, mass * length / 2 + mass * 1.5 * length)
    # rod 2 about the pivot: m L^2/12 + m (1.5 L)^2 (parallel-axis theorem)
    assert close(p.inertia_about_pivot_kg_m2,
                 mass * length ** 2 / 3 + mass * length ** 2 / 12 + mass * (1.5 * length) ** 2)


def test_hanging_frequency_scales_with_gravity():
    # w ~ sqrt(g) for any fixed-pivot pendulum (dimensional analysis); 1e-12.
    links = [ref.link(0.3, 0.05, [(0.02, 0.3)]), ref.link(0.1, 0.02)]
    assert close(props(links, g=1.62).hanging_frequency_hz / props(links).hanging_frequency_hz,
                 math.sqrt(1.62 / G))


@pytest.mark.parametrize("equilibrium", ["hanging", "inverted"])
def test_fixed_pivot_multipliers_are_damped_oscillator(equilibrium):
    # Zero stroke: I q'' + d q' +- g m_d q = 0, roots lam = (-d +- sqrt(d^2 -+ 4 I g m_d)) / (2 I),
    # multipliers exp(lam T) over one drive period (damped harmonic oscillator, any
    # mechanics text); 1e-9 relative.
    length, rod, bob, damping, rpm = 0.3, 0.05, 0.02, 3e-3, 600.0
    data = ref.rig([ref.link(length, rod, [(bob, length)], 0.0, damping)], ref.sine(0.02, rpm),
                   limits={"speed_rpm": [100.0, 3600.0], "stroke_m": [0.0, 0.04]})
    inertia = rod * length ** 2 / 3 + bob * length ** 2
    first = rod * length / 2 + bob * length
    sign = 1.0 if equilibrium == "hanging" else -1.0
    disc = cmath.sqrt(damping ** 2 - sign * 4 * inertia * G * first)
    period = 60.0 / rpm
    want = sorted((cmath.exp((-damping + s * disc) / (2 * inertia) * period) for s in (1, -1)),
                  key=lambda z: (abs(z), z.imag))
    res = ss.stability(ss.rig_from_dict(data), equilibrium, stroke_m=0.0)
    got = sorted(res.multipliers, key=lambda z: (abs(z), z.imag))
    assert len(got) == 2
    for g_, w_ in zip(got, want):
        assert abs(g_ - w_) <= 1e-9 * abs(w_), (got, want)
    assert res.stable == (equilibrium == "hanging")
