"""Pivot kinematics of the three waveforms, and the check's frequency and peak acceleration.

Sources: the contract's displacement formulas; the textbook slider-crank
acceleration a ~ -r w^2 (cos phi + (r/l) cos 2 phi) (machine-design handbooks);
central finite differences of the exact displacement; the trigonometric
interpolant of equally spaced samples (numpy.fft.rfft).
"""
import math

import numpy as np
import pytest
from scipy.optimize import minimize_scalar

import refsolvers as ref
import shakestill as ss

PHASES = np.linspace(0.0, 2 * math.pi, 37)[:-1] + 0.0137   # off the symmetric points too
RPM = 2400.0
OMEGA = 2 * math.pi * RPM / 60


def drive_of(drive_dict):
    return ss.rig_from_dict(ref.rig([ref.link(0.3, 0.05)], drive_dict)).drive


def engine(drive, phases, rpm=RPM):
    pts = [ss.pivot(drive, float(p), rpm) for p in phases]
    return (np.array([p.y_m for p in pts]), np.array([p.v_m_s for p in pts]),
            np.array([p.a_m_s2 for p in pts]))


def crank_y(phi, r, rod):
    # The contract's exact slider-crank displacement, nothing else.
    return r * np.cos(phi) + np.sqrt(rod * rod - r * r * np.sin(phi) ** 2) - rod


def central_diff(f, x, h, order):
    # 8th-order central differences (Fornberg's weights, common practice, no source).
    w1 = [1 / 280, -4 / 105, 1 / 5, -4 / 5, 0.0, 4 / 5, -1 / 5, 4 / 105, -1 / 280]
    w2 = [-1 / 560, 8 / 315, -1 / 5, 8 / 5, -205 / 72, 8 / 5, -1 / 5, 8 / 315, -1 / 560]
    w = w1 if order == 1 else w2
    return sum(c * f(x + (k - 4) * h) for k, c in enumerate(w)) / h ** order


def test_sine_kinematics():
    # y = (stroke/2) cos phi (contract), v and a by hand; 1e-12 relative to A w^k.
    amp = 0.0125
    y, v, a = engine(drive_of(ref.sine(2 * amp, RPM)), PHASES)
    assert np.max(np.abs(y - amp * np.cos(PHASES))) <= 1e-12 * amp
    assert np.max(np.abs(v + amp * OMEGA * np.sin(PHASES))) <= 1e-12 * amp * OMEGA
    assert np.max(np.abs(a + amp * OMEGA ** 2 * np.cos(PHASES))) <= 1e-12 * amp * OMEGA ** 2


@pytest.mark.parametrize("stroke,rod", [(0.02, 0.06), (0.02, 0.2), (0.05, 0.04)])
def test_crank_exact_against_finite_differences(stroke, rod):
    # Exact displacement from the contract; velocity and acceleration against
    # 8th-order central differences of it (h = 0.01 rad; roundoff of the
    # "- l" cancellation dominates below that, truncation above), 1e-8 relative to r w^k.
    r = stroke / 2
    y, v, a = engine(drive_of(ref.crank(stroke, rod, RPM)), PHASES)
    f = lambda p: crank_y(p, r, rod)
    assert np.max(np.abs(y - f(PHASES))) <= 1e-12 * r
    assert np.max(np.abs(v - OMEGA * central_diff(f, PHASES, 1e-2, 1))) <= 1e-8 * r * OMEGA
    assert np.max(np.abs(a - OMEGA ** 2 * central_diff(f, PHASES, 1e-2, 2))) <= 1e-8 * r * OMEGA ** 2
    # and against the derivative taken by hand (refsolvers.Pivot), 1e-12 relative
    _, v_ref, a_ref = ref.Pivot(ref.crank(stroke, rod, RPM)).kinematics(PHASES)
    assert np.max(np.abs(a - a_ref)) <= 1e-12 * r * OMEGA ** 2
    assert np.max(np.abs(v - v_ref)) <= 1e-12 * r * OMEGA


def test_crank_top_dead_centre_at_phase_zero():
    # phi = 0: y = r, a = -r w^2 (1 + r/l) (by hand from the contract's formula); 1e-12.
    r, rod = 0.01, 0.06
    y, v, a = engine(drive_of(ref.crank(2 * r, rod, RPM)), [0.0])
    assert abs(y[0] - r) <= 1e-12 * r and abs(v[0]) <= 1e-12 * r * OMEGA
    assert abs(a[0] + r * OMEGA ** 2 * (1 + r / rod)) <= 1e-12 * r * OMEGA ** 2


def test_crank_approaches_textbook_acceleration():
    # a ~ -r w^2 (cos phi + lam cos 2 phi), lam = r/l (machine-design handbooks).
    # Expanding sqrt(1 - lam^2 sin^2) one term further, the leftover is
    # -(r w^2 lam^3 / 8)(2 cos 2 phi - 2 cos 4 phi): its peak is lam^3 r w^2 / 2.
    # Assert that peak within 10 % and order 3 in lam (+-0.15).
    phases = np.linspace(0.0, 2 * math.pi, 721)
    lams, peaks = [0.05, 0.1, 0.2], []
    r = 0.01
    for lam in lams:
        _, _, a = engine(drive_of(ref.crank(2 * r, r / lam, RPM)), phases)
        approx = -r * OMEGA ** 2 * (np.cos(phases) + lam * np.cos(2 * phases))
        peak = np.max(np.abs(a - approx)) / (r * OMEGA ** 2)
        assert abs(peak / (lam ** 3 / 2) - 1) < 0.10, (lam, peak)
        # without the second harmonic the error is lam itself: the term matters
        plain = np.max(np.abs(a + r * OMEGA ** 2 * np.cos(phases))) / (r * OMEGA ** 2)
        assert abs(plain / lam - 1) < 0.05
        peaks.append(peak)
    for (l1, p1), (l2, p2) in zip(zip(lams, peaks), zip(lams[1:], peaks[1:])):
        assert abs(math.log(p2 / p1) / math.log(l2 / l1) - 3) < 0.15


@pytest.mark.parametrize("count", [8, 9, 64, 63])
def test_samples_through_their_fourier_series(count):
    # Samples at phases 2 pi k / N are the waveform as given (contract): the
    # series interpolates them; v, a from the trigonometric interpolant with an
    # even count's Nyquist term a half-weight cosine (numpy.fft.rfft); 1e-10.
    phi = 2 * math.pi * np.arange(count) / count
    ys = 0.01 * np.cos(phi) + 0.003 * np.sin(2 * phi + 0.4) + 0.001 * np.sign(np.sin(3 * phi))
    drive = ref.samples(list(ys), RPM)
    y_at, _, _ = engine(drive_of(drive), phi)
    assert np.max(np.abs(y_at - ys)) <= 1e-10 * 0.01
    y, v, a = engine(drive_of(drive), PHASES)
    y_ref, v_ref, a_ref = ref.Pivot(drive).kinematics(PHASES)
    scale = 0.01 * (count / 2) ** 2
    assert np.max(np.abs(y - y_ref)) <= 1e-10 * 0.01
    assert np.max(np.abs(v - v_ref)) <= 1e-10 * scale * OMEGA
    assert np.max(np.abs(a - a_ref)) <= 1e-10 * scale * OMEGA ** 2


def test_samples_stroke_scaling():
    # A stroke sweep scales the samples by stroke / stroke_m, stroke_m = max - min
    # by default (contract): stability at stroke s equals the rig whose samples
    # were scaled by hand (both through the engine); 1e-9 absolute on max |rho|.
    phi = 2 * math.pi * np.arange(32) / 32
    ys = 0.008 * np.cos(phi) + 0.002 * np.cos(2 * phi)
    base = ref.rig([ref.link(0.3, 0.05, [(0.02, 0.3)], 0.0, 2e-4)], ref.samples(list(ys), RPM))
    scaled = ref.rig(base["links"], ref.samples(list(ys * (0.03 / np.ptp(ys))), RPM))
    got = ss.stability(ss.rig_from_dict(base), "inverted", stroke_m=0.03).max_multiplier
    want = ss.stability(ss.rig_from_dict(scaled), "inverted").max_multiplier
    assert abs(got - want) <= 1e-9


def peak_accel(pivot):
    # max |a| over a cycle: dense scan, then scipy.optimize.minimize_scalar (bounded).
    phases = np.linspace(0.0, 2 * math.pi, 4001)
    mags = np.abs(pivot.kinematics(phases)[2])
    i = int(np.argmax(mags))
    lo, hi = phases[max(i - 1, 0)], phases[min(i + 1, len(phases) - 1)]
    res = minimize_scalar(lambda p: -abs(float(pivot.kinematics(p)[2])), bounds=(lo, hi),
                          method="bounded", options={"xatol": 1e-12})
    return max(mags[i], -res.fun)


@pytest.mark.parametrize("drive", [
    ref.sine(0.02, 2400.0),
    ref.crank(0.02, 0.06, 2400.0),
    ref.crank(0.03, 0.05, 1500.0),
    ref.samples([0.01 * math.cos(2 * math.pi * k / 40) + 0.002 * math.sin(4 * math.pi * k / 40)
                 for k in range(40)], 1800.0),
], ids=["sine", "crank", "crank-short-rod", "samples"])
def test_check_frequency_and_peak_acceleration(drive):
    # frequency_hz = speed_rpm / 60 (contract); peak_accel_m_s2 = max |y_p''| over a
    # cycle from refsolvers.Pivot (for sine A w^2 exactly); 1e-6 relative.
    data = ref.rig([ref.link(0.3, 0.05, [(0.02, 0.3)], 0.0, 2e-4)], drive,
                   limits={"speed_rpm": [300.0, 3600.0], "stroke_m": [0.0, 0.04]})
    out = ss.check(ss.rig_from_dict(data))
    assert abs(out["frequency_hz"] - drive["speed_rpm"] / 60) <= 1e-12 * drive["speed_rpm"]
    want = peak_accel(ref.Pivot(drive))
    if drive["waveform"] == "sine":
        assert abs(want / (0.01 * (2 * math.pi * 40) ** 2) - 1) < 1e-9
    assert abs(out["peak_accel_m_s2"] / want - 1) < 1e-6, (out["peak_accel_m_s2"], want)
