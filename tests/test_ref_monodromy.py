"""Monodromy, multipliers and linearisation against an independent build of the chain.

Reference: M, D, K from the chain's Lagrangian (refsolvers.chain_matrices, built
from the rig file, not from the engine), pivot motion from the contract's
waveforms (samples through their own Fourier series), one cycle integrated by
scipy.integrate.solve_ivp (DOP853, rtol = atol = 1e-12), multipliers from
numpy.linalg.eigvals.
"""
import functools
import math

import numpy as np
import pytest

import refsolvers as ref
import shakestill as ss

MONODROMY_REL = 1e-8    # scaled monodromy entries, relative to max(1, largest entry)
MULTIPLIER_REL = 1e-7   # each multiplier, relative to max(1, |rho|)
MAX_MULT_REL = 1e-8


def cam_samples(count, stroke=0.02):
    # A smooth, asymmetric invented cam profile (not band-limited, so the series
    # of its samples is what matters, as the contract says).
    phi = 2 * math.pi * np.arange(count) / count
    y = (np.cos(phi) + 0.2 * np.cos(2 * phi)) / (1 + 0.1 * np.sin(phi))
    return list(stroke / (y.max() - y.min()) * y)


DRIVES = {
    "sine": ref.sine(0.02, 2400.0),
    "crank": ref.crank(0.02, 0.06, 2400.0),
    "samples64": ref.samples(cam_samples(64), 2400.0),
    "samples63": ref.samples(cam_samples(63), 2400.0),
}


def chain(count, damped):
    d = (2e-4, 1e-4, 5e-5) if damped else (0.0, 0.0, 0.0)
    links = [
        ref.link(0.30, 0.05, [(0.02, 0.30)], 0.0, d[0]),
        ref.link(0.15, 0.03, [(0.01, 0.15), (0.005, 0.05)], 1e-5, d[1]),
        ref.link(0.10, 0.02, [(0.008, 0.10)], 2e-6, d[2]),
    ][:count]
    if count > 1:  # shorter first link for the chains, so they are not all wildly unstable
        links[0] = ref.link(0.20, 0.04, [(0.01, 0.20)], 0.0, d[0])
    return links


def make(count, drive, damped):
    return ref.rig(chain(count, damped), DRIVES[drive],
                   limits={"speed_rpm": [100.0, 6000.0], "stroke_m": [0.0, 0.04]})


CASES = [(n, w, dmp, eq) for n in (1, 2, 3) for w in DRIVES for dmp in (False, True)
         for eq in ("inverted", "hanging") if not (n > 1 and w == "samples63")]
IDS = [f"{n}link-{w}-{'damped' if dmp else 'undamped'}-{eq}" for n, w, dmp, eq in CASES]


@functools.lru_cache(maxsize=None)
def reference(n, drive, damped, equilibrium, speed_rpm=None, stroke_m=None):
    return ref.monodromy(make(n, drive, damped), equilibrium, speed_rpm, stroke_m)


def scaled(phi, rpm):
    # S^-1 Phi S with S = diag(1, w): makes the q and q' blocks comparable.
    phi = np.asarray(phi, dtype=float)
    n = phi.shape[0] // 2
    s = np.diag([1.0] * n + [2 * math.pi * rpm / 60] * n)
    return np.linalg.solve(s, phi @ s)


def assert_same_monodromy(got, want, rpm):
    got, want = scaled(got, rpm), scaled(want, rpm)
    assert got.shape == want.shape
    err = np.max(np.abs(got - want))
    assert err <= MONODROMY_REL * max(1.0, np.max(np.abs(want))), (err, np.max(np.abs(want)))


@pytest.mark.parametrize("n,drive,damped,eq", [c for c in CASES if c[1] == "sine"],
                         ids=[i for c, i in zip(CASES, IDS) if c[1] == "sine"])
def test_linearise_matches_lagrangian(n, drive, damped, eq):
    # ss.linearise against M, D, K of the chain's Lagrangian (refsolvers.chain_matrices);
    # tolerance 1e-12 relative to the largest entry of each matrix.
    lin = ss.linearise(ss.rig_from_dict(make(n, drive, damped)), eq)
    for got, want in zip((lin.M, lin.D, lin.K), ref.chain_matrices(make(n, drive, damped), eq)):
        got = np.asarray(got, dtype=float)
        assert got.shape == want.shape
        assert np.max(np.abs(got - want)) <= 1e-12 * max(np.max(np.abs(want)), 1e-300)


@pytest.mark.parametrize("n,drive,damped,eq", CASES, ids=IDS)
def test_monodromy_matches_solve_ivp(n, drive, damped, eq):
    # ss.monodromy against scipy.integrate.solve_ivp (DOP853, 1e-12); 1e-8 relative.
    got = ss.monodromy(ss.rig_from_dict(make(n, drive, damped)), eq)
    assert_same_monodromy(got, reference(n, drive, damped, eq), 2400.0)


@pytest.mark.parametrize("n,drive,damped,eq", CASES, ids=IDS)
def test_multipliers_match_eigvals(n, drive, damped, eq):
    # ss.stability multipliers against numpy.linalg.eigvals of the solve_ivp
    # monodromy (1e-7 relative each, 1e-8 on the largest modulus); verdict and
    # slow frequency by the contract's rules.
    want = ref.multipliers(reference(n, drive, damped, eq))
    res = ss.stability(ss.rig_from_dict(make(n, drive, damped)), eq)
    assert res.converged, res.message
    assert len(res.multipliers) == 2 * n
    assert ref.same_multipliers(res.multipliers, want, 1.0) <= MULTIPLIER_REL, (
        sorted(res.multipliers, key=abs), sorted(want, key=abs))
    top = max(abs(want))
    assert abs(res.max_multiplier - top) <= MAX_MULT_REL * max(1.0, top)
    if damped:
        assert res.stable == (res.max_multiplier < 1)
    elif n == 1:
        half_trace = np.trace(reference(n, drive, damped, eq)) / 2
        if abs(abs(half_trace) - 1) > 1e-7:
            assert res.stable == (abs(half_trace) < 1), half_trace
    else:
        assert res.stable == (res.max_multiplier <= 1 + 1e-9)
        if top > 1 + 1e-6:
            assert not res.stable
    if res.stable and (damped or n == 1):
        # Largest multiplier unique up to its conjugate: nu = |arg rho| / (2 pi).
        mods = sorted(abs(want), reverse=True)
        rho = want[np.argmax(abs(want))]
        distinct = abs(mods[0] - mods[1]) > 1e-6 or abs(rho.imag) > 1e-9
        if distinct or n == 1:
            nu = abs(math.atan2(rho.imag, rho.real)) / (2 * math.pi)
            assert abs(res.slow_frequency_hz - nu * 40.0) <= 1e-7 * 40.0


@pytest.mark.parametrize("n,drive,damped,eq", CASES, ids=IDS)
def test_liouville_determinant(n, drive, damped, eq):
    # det(monodromy) = exp(-integral over a cycle of trace(M^-1 D)) (Liouville's
    # formula); M, D from the Lagrangian; tolerance 1e-9 relative.
    got = np.linalg.det(np.asarray(ss.monodromy(ss.rig_from_dict(make(n, drive, damped)), eq)))
    want = ref.liouville_det(make(n, drive, damped), eq)
    assert abs(got / want - 1) < 1e-9, (got, want)


@pytest.mark.parametrize("drive", ["sine", "crank", "samples64"])
@pytest.mark.parametrize("n", [1, 2])
def test_speed_and_stroke_overrides(n, drive):
    # speed_rpm / stroke_m arguments against solve_ivp with the same overrides
    # (samples scale by stroke / (max - min), the contract); 1e-8 relative.
    rig = ss.rig_from_dict(make(n, drive, True))
    got = ss.monodromy(rig, "inverted", speed_rpm=3100.0, stroke_m=0.027)
    want = reference(n, drive, True, "inverted", 3100.0, 0.027)
    assert_same_monodromy(got, want, 3100.0)
