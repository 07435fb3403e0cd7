"""Kapitza's limits of the vibration-stabilised inverted pendulum, approached by the engine.

Closed forms (Landau & Lifshitz, Mechanics, sec. 30) hold for A/l_eq -> 0; the
engine's exact values must approach them at the rate the Mathieu series give
(DLMF 28.6.1 for a_0(q), DLMF 28.15.1 for the characteristic exponent).
"""
import math

import numpy as np
import pytest
from scipy import special
from scipy.optimize import brentq

import refsolvers as ref
import shakestill as ss

G = ref.G_STANDARD
LIMITS = {"speed_rpm": [10.0, 60000.0], "stroke_m": [0.0, 0.5]}


def tip_rig(length, stroke, rpm):
    # A tip mass on a massless rod: l_eq = length exactly.
    return ref.rig([ref.link(length, 0.0, [(0.1, length)])], ref.sine(stroke, rpm), LIMITS)


def rpm_of(omega):
    return omega * 60.0 / (2 * math.pi)


def slopes(eps, err):
    """Local orders log(err_i+1/err_i) / log(eps_i+1/eps_i)."""
    return [math.log(abs(e2 / e1)) / math.log(x2 / x1)
            for x1, x2, e1, e2 in zip(eps, eps[1:], err, err[1:])]


def test_lower_speed_edge_approaches_kapitza():
    # Kapitza: inverted stable for w > sqrt(2 g l) / A (Landau & Lifshitz, sec. 30).
    # Exact edge a = a_0(q) with a_0 = -q^2/2 + 7 q^4/128 - ... (DLMF 28.6.1) gives
    # w_edge / w_K - 1 = (7/32) (A/l)^2 + O((A/l)^4): order 2, coefficient 7/32.
    length = 0.5
    eps = [0.02, 0.04, 0.08, 0.16]
    err = []
    for e in eps:
        amp = e * length
        w_k = math.sqrt(2 * G * length) / amp
        data = tip_rig(length, 2 * amp, rpm_of(1.5 * w_k))
        lo = ss.check(ss.rig_from_dict(data))["inverted"]["speed_window_rpm"][0]
        exact = rpm_of(math.sqrt(-4 * G / (length * special.mathieu_a(0, 2 * e))))
        assert abs(lo / exact - 1) < 1e-6          # scipy.special.mathieu_a, 1e-6 rel
        err.append(lo / rpm_of(w_k) - 1)
    for e, r in zip(eps[:3], err[:3]):
        assert abs(r / e ** 2 / (7 / 32) - 1) < 0.03, (e, r)   # DLMF 28.6.1, 3 %
    for s in slopes(eps, err):
        assert 1.9 < s < 2.1, (eps, err)                        # order 2, +-0.1


def test_b1_root_is_0908():
    # b_1(q) = 0 at q ~ 0.908 (value from memory); scipy.special.mathieu_b, 1e-3.
    q_star = brentq(lambda q: special.mathieu_b(1, q), 0.5, 1.5, xtol=1e-14)
    assert abs(q_star - 0.908) < 1e-3


def test_upper_stroke_limit_approaches_0454():
    # Upper edge of inverted stability b_1(q) = a; as w0/w -> 0, a -> 0 and
    # A/l_eq -> q*/2 ~ 0.454 with q* the root of b_1 (scipy.special.mathieu_b).
    # Near q*, q_hi - q* ~ -a / b_1'(q*) with a = -4 (w0/w)^2: order 2 in w0/w.
    length = 0.2
    q_star = brentq(lambda q: special.mathieu_b(1, q), 0.5, 1.5, xtol=1e-14)
    w0 = math.sqrt(G / length)
    ratios = [10.0, 20.0, 40.0, 80.0]  # w / w0
    dev = []
    for r in ratios:
        data = tip_rig(length, 0.5 * length, rpm_of(r * w0))   # q = 0.5 inside the band
        hi = ss.check(ss.rig_from_dict(data))["inverted"]["stroke_window_m"][1]
        a = -4.0 / r ** 2
        q_hi = brentq(lambda q: special.mathieu_b(1, q) - a, 0.5, 1.5, xtol=1e-15)
        assert abs(hi / (q_hi * length) - 1) < 1e-6   # scipy.special.mathieu_b, 1e-6 rel
        dev.append(hi / (2 * length) - q_star / 2)
    assert abs(dev[-1]) < 1e-3                        # A/l_eq within 1e-3 of 0.454
    assert all(d > 0 for d in dev)                    # approached from above
    for s in slopes([1 / r for r in ratios], dev):
        assert 1.9 < s < 2.1, dev                     # order 2 in w0/w, +-0.1


@pytest.mark.parametrize("kappa", [2.0, 4.0])
def test_slow_frequency_formula_and_its_order(kappa):
    # Kapitza's slow motion: Omega^2 = (A w)^2 / (2 l^2) - g / l (Landau & Lifshitz,
    # sec. 30). With w = kappa w_K fixed, a and q^2 both scale as (A/l)^2 and
    # DLMF 28.15.1 (a = nu^2 + q^2 / (2 (nu^2 - 1)) + (5 nu^2 + 7) q^4 / (...))
    # gives Omega_K / Omega_exact - 1 = -(eps^2 / 2) (2 - 7 / (16 (1 - kappa^-2))) + O(eps^4).
    length = 0.5
    coef = -0.5 * (2 - 7 / (16 * (1 - kappa ** -2)))
    eps = [0.01, 0.02, 0.04, 0.08]
    err = []
    for e in eps:
        amp = e * length
        w = kappa * math.sqrt(2 * G * length) / amp
        data = tip_rig(length, 2 * amp, rpm_of(w))
        res = ss.stability(ss.rig_from_dict(data), "inverted")
        assert res.stable
        # exact slow frequency from scipy.integrate.solve_ivp: nu = arccos(trace/2)/(2 pi)
        t = np.trace(ref.monodromy(data, "inverted")) / 2
        exact = math.acos(t) / (2 * math.pi) * rpm_of(w) / 60
        assert abs(res.slow_frequency_hz / exact - 1) < 1e-6, (res.slow_frequency_hz, exact)
        kapitza = math.sqrt((amp * w) ** 2 / (2 * length ** 2) - G / length) / (2 * math.pi)
        err.append(kapitza / res.slow_frequency_hz - 1)
    for e, r in zip(eps[:3], err[:3]):
        assert abs(r / e ** 2 / coef - 1) < 0.02, (e, r, coef)   # DLMF 28.15.1, 2 %
    for s in slopes(eps, err):
        assert 1.9 < s < 2.1, err                                  # order 2, +-0.1
