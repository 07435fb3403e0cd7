"""The chain's Taylor-series cycle (numerics/taylor.py, floquet.chain_steps) against outside values.

References: the drive's Taylor coefficients by Cauchy's integral formula on a circle in the
complex phase plane (numpy FFT of the waveform's closed form, evaluated at complex phases:
an independent route to the derivatives); the method's order on a constant-coefficient
chain against scipy.linalg.expm; multipliers of damped two- and three-link chains at the
chart's coarser steps against scipy.integrate.solve_ivp (refsolvers.monodromy, rtol 1e-12)
and numpy.linalg.eigvals.
"""
import math

import numpy as np
import pytest
from scipy.linalg import expm

import refsolvers as ref
import shakestill as ss
from shakestill.equilibria import cycle, floquet
from shakestill.equilibria.chart_rows import CHART_CYCLE_PHASE, CHART_DRIVE_TOLERANCE
from shakestill.model import drive as drv
from shakestill.model.rig import Drive
from shakestill.numerics.taylor import ORDER


def cauchy_series(y, phi0, dphi, count, radius=0.9, points=256):
    # Y_j of y(phi0 + tau dphi) = sum Y_j tau^j by Cauchy's formula on |tau| = radius,
    # the trapezoidal rule (spectrally accurate for an analytic periodic integrand).
    theta = 2 * np.pi * np.arange(points) / points
    tau = radius * np.exp(1j * theta)
    values = y(phi0 + tau * dphi)
    coefficients = np.fft.fft(values) / points
    return [(coefficients[j] / radius ** j).real for j in range(count)]


def sine_y(stroke):
    return lambda phi: stroke / 2 * np.cos(phi)


def crank_y(stroke, rod):
    r = stroke / 2
    return lambda phi: r * np.cos(phi) + np.sqrt(rod * rod - r * r * np.sin(phi) ** 2) - rod


@pytest.mark.parametrize("drive,y", [
    (Drive("sine", 600.0, 0.02, 0.1), sine_y(0.02)),
    (Drive("crank", 600.0, 0.02, 0.05), crank_y(0.02, 0.05)),
    (Drive("crank", 600.0, 0.04, 0.03), crank_y(0.04, 0.03)),
], ids=["sine", "crank r/l 0.2", "crank r/l 0.67"])
def test_drive_series_match_cauchys_formula(drive, y):
    # sigma_j = (j + 1)(j + 2) Y_{j+2} (the scaled series of d2y/dphi2) at every step start,
    # 1e-12 of the largest coefficient; the crank's circle stays inside its analytic strip
    # (singularities arccosh(l / r) off the real axis: 0.9 x 2 pi / 24 < 0.69 for r/l 0.67).
    steps, terms = 24, ORDER - 1
    got = drv.accel_series(drive, steps, terms)
    dphi = 2 * math.pi / steps
    want = []
    for k in range(steps):
        Y = cauchy_series(y, k * dphi, dphi, terms + 2)
        want.extend((j + 1) * (j + 2) * Y[j + 2] for j in range(terms))
    scale = max(abs(w) for w in want)
    assert max(abs(a - b) for a, b in zip(got, want)) <= 1e-12 * scale


def test_drive_series_error_falls_with_the_step():
    # The series' stray over a step, measured against the exact d2y/dphi2: for the sine drive
    # (entire) the truncation after ORDER - 1 terms is (dphi)^(ORDER+1) / (ORDER - 1)! of the
    # peak to first order (the next term of cos); checked within a factor 3 at 12 steps.
    drive = Drive("sine", 600.0, 0.02, 0.1)
    dphi = 2 * math.pi / 12
    want = dphi ** (ORDER - 1) / math.factorial(ORDER - 1)  # relative to the peak's dphi^2
    got = drv.accel_series_error(drive, 12, ORDER - 1)
    assert want / 3 <= got <= 3 * want


def test_order_on_a_constant_coefficient_chain():
    # Stroke 0: G = g, the cycle is expm(A T) exactly (scipy.linalg.expm); a twelfth-order
    # method's error falls by 2^12 = 4096 when the steps double (checked 2^11 .. 2^13.5), at
    # step counts where the error is still well above round-off.
    rig = ss.rig_from_dict(ref.rig([ref.link(0.2, 0.04, [(0.01, 0.2)], 0.0, 2e-4),
                                    ref.link(0.1, 0.02, [(0.008, 0.1)], 0.0, 1e-4)],
                                   ref.sine(0.0, 60.0)))
    lin = ss.linearise(rig, "hanging")
    M, D, K = (np.array(x) for x in (lin.M, lin.D, lin.K))
    n = len(M)
    A = np.block([[np.zeros((n, n)), np.eye(n)],
                  [-rig.g_m_s2 * np.linalg.solve(M, K), -np.linalg.solve(M, D)]])
    exact = expm(A * 1.0)  # one period at 60 rpm
    errors = [np.max(np.abs(np.array(cycle.monodromy(rig, "hanging", steps=s)) - exact))
              for s in (4, 8)]
    assert 2 ** 11 <= errors[0] / errors[1] <= 2 ** 13.5, errors


TWO = [ref.link(0.2, 0.04, [(0.01, 0.2)], 0.0, 2e-4),
       ref.link(0.15, 0.03, [(0.01, 0.15)], 1e-5, 1e-4)]
THREE = TWO + [ref.link(0.08, 0.01, [(0.006, 0.08)], 0.0, 1e-4)]
POINTS = [(2500.0, 0.016, "inverted"), (900.0, 0.016, "hanging"), (6000.0, 0.004, "inverted"),
          (4500.0, 0.03, "inverted"), (500.0, 0.03, "hanging")]


@pytest.mark.parametrize("links", [TWO, THREE], ids=["two links", "three links"])
@pytest.mark.parametrize("drive", [ref.sine(0.02, 2000.0), ref.crank(0.02, 0.06, 2000.0),
                                   ref.crank(0.02, 0.0125, 2000.0)],
                         ids=["sine", "crank", "short crank"])
def test_chart_steps_hold_multipliers_to_5e_8(links, drive):
    # At the chart's coarser Taylor steps (CHART_CYCLE_PHASE, CHART_DRIVE_TOLERANCE) each
    # multiplier within 5e-8 of max(1, |rho|) of its match in numpy.linalg.eigvals of the solve_ivp
    # monodromy (refsolvers, rtol 1e-12), damped chains, sine and crank drives, a rod of
    # 1.25 crank throws too; the check's own steps (defaults) within 1e-9.
    data = ref.rig(links, drive, limits={"speed_rpm": [100.0, 8000.0], "stroke_m": [0.0, 0.04]})
    rig = ss.rig_from_dict(data)
    for speed, stroke, eq in POINTS:
        if drive["waveform"] == "crank" and stroke / 2 >= drive["rod_length_m"]:
            continue
        want = ref.multipliers(ref.monodromy(data, eq, speed, stroke))
        for settings, tol in ((floquet.Settings(cycle_phase=CHART_CYCLE_PHASE,
                                                drive_tolerance=CHART_DRIVE_TOLERANCE), 5e-8),
                              (floquet.Settings(), 1e-9)):
            got = floquet.stability(rig, eq, speed, stroke, settings=settings,
                                    verify=False).multipliers
            assert ref.same_multipliers(got, want, 1.0) <= tol, (speed, stroke, eq, tol)
