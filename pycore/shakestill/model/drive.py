"""Pivot kinematics for each drive waveform, and the harmonics of its acceleration.

Phase phi = 2 pi f t, f = speed_rpm / 60; y_p upward positive.
- sine:    y_p = (stroke/2) cos phi
- crank:   y_p = r cos phi + sqrt(l^2 - r^2 sin^2 phi) - l, r = stroke/2 (exact, with
           analytic derivatives)
- samples: one cycle at equal phases through its Fourier series (an even
           count's Nyquist term is a half-weight cosine), scaled by
           stroke / samples_stroke.
"""

from __future__ import annotations

import cmath
import math
from dataclasses import dataclass
from functools import lru_cache

from .rig import Drive
from ..numerics.roots import golden_max

TWO_PI = 2.0 * math.pi
_PEAK_SCAN = 720  # phases scanned before refining the peak acceleration
_HARMONIC_FLOOR = 1e-15  # relative size of round-off in the computed harmonics
_CRANK_MAX_POINTS = 4096  # cap on the DFT size for a crank near r = l


@dataclass(frozen=True)
class PivotState:
    y_m: float
    v_m_s: float
    a_m_s2: float


@dataclass(frozen=True)
class Harmonics:
    """d^2 y_p / d phi^2 = sum_n cos_m[n-1] cos(n phi) + sin_m[n-1] sin(n phi) (metres).

    Multiply by omega^2 for the acceleration; the series has no mean term.
    """

    cos_m: tuple[float, ...]
    sin_m: tuple[float, ...]

    @property
    def count(self) -> int:
        return len(self.cos_m)


def _samples_series(drive: Drive) -> tuple[float, list[float], list[float]]:
    """Mean and Fourier coefficients of the scaled samples (exact interpolation)."""
    return _series(drive.samples_m, drive.stroke_m / drive.samples_stroke_m)


@lru_cache(maxsize=64)
def _series(samples: tuple[float, ...], scale: float):
    n = len(samples)
    mean = scale * sum(samples) / n
    cos_c, sin_c = [], []
    for k in range(1, n // 2 + 1):
        ck = sum(y * math.cos(TWO_PI * k * j / n) for j, y in enumerate(samples)) * 2.0 / n
        sk = sum(y * math.sin(TWO_PI * k * j / n) for j, y in enumerate(samples)) * 2.0 / n
        if 2 * k == n:  # Nyquist: a half-weight cosine, no sine
            ck, sk = ck / 2.0, 0.0
        cos_c.append(scale * ck)
        sin_c.append(scale * sk)
    return mean, cos_c, sin_c


def phase_derivatives(drive: Drive, phi: float) -> tuple[float, float, float]:
    """y, dy/dphi, d2y/dphi2 at phase ``phi``."""
    if drive.waveform == "sine":
        amp = drive.stroke_m / 2.0
        c, s = math.cos(phi), math.sin(phi)
        return amp * c, -amp * s, -amp * c
    if drive.waveform == "crank":
        r, rod = drive.stroke_m / 2.0, drive.rod_length_m
        c, s = math.cos(phi), math.sin(phi)
        u = math.sqrt(rod * rod - r * r * s * s)
        y = r * c + u - rod
        dy = -r * s - r * r * s * c / u
        d2y = -r * c - r * r * (c * c - s * s) / u - r ** 4 * s * s * c * c / u ** 3
        return y, dy, d2y
    mean, cos_c, sin_c = _samples_series(drive)
    y, dy, d2y = mean, 0.0, 0.0
    for k, (a, b) in enumerate(zip(cos_c, sin_c), start=1):
        c, s = math.cos(k * phi), math.sin(k * phi)
        y += a * c + b * s
        dy += k * (-a * s + b * c)
        d2y -= k * k * (a * c + b * s)
    return y, dy, d2y


def accel_series(drive: Drive, steps: int, terms: int) -> tuple[float, ...]:
    """d2y/dphi2 over ``steps`` equal phase steps as Taylor series, scaled for a step:
    sigma_j = dphi^(j+2) (d^(j+2) y / dphi^(j+2))(phi0) / j! for j < ``terms`` at each step's
    start phi0 = k dphi (dphi = 2 pi / steps), step-major.

    Since omega h = dphi these are also the time series of y_p'' scaled by h^(j+2), at any
    speed: a scan along speed at one stroke computes them once.
    """
    return _accel_series(drive.waveform, drive.stroke_m, drive.rod_length_m, drive.samples_m,
                         drive.samples_stroke_m, steps, terms)


def accel_series_error(drive: Drive, steps: int, terms: int) -> float:
    """How far ``accel_series`` strays from the exact d2y/dphi2 within a step: the largest
    difference at a half and a whole step, over every step, relative to the largest value
    there (the peak, to within the sampling)."""
    return _accel_series_error(drive.waveform, drive.stroke_m, drive.rod_length_m,
                               drive.samples_m, drive.samples_stroke_m, steps, terms)


@lru_cache(maxsize=1024)
def _accel_series(waveform, stroke_m, rod_length_m, samples_m, samples_stroke_m, steps: int,
                  terms: int) -> tuple[float, ...]:
    shape = Drive(waveform, 1.0, stroke_m, rod_length_m, samples_m, samples_stroke_m)
    dphi = TWO_PI / steps
    out: list[float] = []
    for k in range(steps):
        y = _position_series(shape, k * dphi, dphi, terms + 2)
        out.extend((j + 1) * (j + 2) * y[j + 2] for j in range(terms))
    return tuple(out)


@lru_cache(maxsize=1024)
def _accel_series_error(waveform, stroke_m, rod_length_m, samples_m, samples_stroke_m,
                        steps: int, terms: int) -> float:
    shape = Drive(waveform, 1.0, stroke_m, rod_length_m, samples_m, samples_stroke_m)
    series = _accel_series(waveform, stroke_m, rod_length_m, samples_m, samples_stroke_m,
                           steps, terms)
    dphi = TWO_PI / steps
    worst = peak = 0.0
    for k in range(steps):
        coefficients = series[k * terms:(k + 1) * terms]
        for tau in (0.5, 1.0):
            value = sum(c * tau ** j for j, c in enumerate(coefficients))
            exact = dphi * dphi * phase_accel_m(shape, (k + tau) * dphi)
            worst, peak = max(worst, abs(value - exact)), max(peak, abs(exact))
    return worst / peak if peak > 0 else 0.0


def _position_series(drive: Drive, phi0: float, dphi: float, count: int) -> list[float]:
    """Y_j, j < count: y(phi0 + tau dphi) = sum_j Y_j tau^j (Taylor coefficients in tau)."""
    if drive.waveform == "crank":
        return _crank_series(drive.stroke_m / 2.0, drive.rod_length_m, phi0, dphi, count)
    if drive.waveform == "sine":
        mean, cos_c, sin_c = 0.0, [drive.stroke_m / 2.0], [0.0]
    else:
        mean, cos_c, sin_c = _samples_series(drive)
    y = [mean] + [0.0] * (count - 1)
    for k, (a, b) in enumerate(zip(cos_c, sin_c), start=1):
        scale = 1.0  # (k dphi)^j / j!
        for j in range(count):
            angle = k * phi0 + j * math.pi / 2.0
            y[j] += scale * (a * math.cos(angle) + b * math.sin(angle))
            scale *= k * dphi / (j + 1)
    return y


def _crank_series(r: float, rod: float, phi0: float, dphi: float, count: int) -> list[float]:
    """The slider-crank's y = r cos phi + sqrt(l^2 - r^2 sin^2 phi) - l as a series in tau:
    cos and sin by their derivatives, the square by a Cauchy product and the root by the
    series square-root recurrence W_n = (U_n - sum_{0<k<n} W_k W_{n-k}) / (2 W_0)."""
    cos_s, sin_s, scale = [], [], 1.0
    for j in range(count):
        angle = phi0 + j * math.pi / 2.0
        cos_s.append(scale * math.cos(angle))
        sin_s.append(scale * math.sin(angle))
        scale *= dphi / (j + 1)
    under = [-r * r * sum(sin_s[k] * sin_s[j - k] for k in range(j + 1)) for j in range(count)]
    under[0] += rod * rod
    root = [math.sqrt(under[0])]
    for j in range(1, count):
        root.append((under[j] - sum(root[k] * root[j - k] for k in range(1, j))) / (2.0 * root[0]))
    y = [r * c + w for c, w in zip(cos_s, root)]
    y[0] -= rod
    return y


def pivot(drive: Drive, phase_rad: float, speed_rpm: float | None = None) -> PivotState:
    """Pivot displacement, velocity and acceleration at a drive phase."""
    omega = TWO_PI * (drive.speed_rpm if speed_rpm is None else speed_rpm) / 60.0
    y, dy, d2y = phase_derivatives(drive, phase_rad)
    return PivotState(y, omega * dy, omega * omega * d2y)


def phase_accel_m(drive: Drive, phase_rad: float) -> float:
    """d2y/dphi2 at a phase: the acceleration per (rad/s)^2 of drive speed."""
    return phase_derivatives(drive, phase_rad)[2]


def peak_accel_m_s2(drive: Drive, speed_rpm: float | None = None) -> float:
    """The largest |y_p''| over a cycle."""
    omega = TWO_PI * (drive.speed_rpm if speed_rpm is None else speed_rpm) / 60.0
    return omega * omega * peak_phase_accel_m(drive)


def peak_phase_accel_m(drive: Drive) -> float:
    """max |d2y/dphi2| over a cycle (metres per radian^2)."""
    if drive.waveform == "sine":
        return drive.stroke_m / 2.0

    def mag(phi: float) -> float:
        return abs(phase_derivatives(drive, phi)[2])

    h = TWO_PI / _PEAK_SCAN
    best = max(range(_PEAK_SCAN), key=lambda k: mag(k * h))
    return golden_max(mag, (best - 1) * h, (best + 1) * h, xtol=1e-13)[1]


def harmonics(drive: Drive) -> Harmonics:
    """Fourier coefficients of d2y/dphi2 (exact for sine and samples)."""
    if drive.waveform == "sine":
        return Harmonics((-drive.stroke_m / 2.0,), (0.0,))
    if drive.waveform == "samples":
        _, cos_c, sin_c = _samples_series(drive)
        return _trim(tuple(-(k * k) * a for k, a in enumerate(cos_c, 1)),
                     tuple(-(k * k) * b for k, b in enumerate(sin_c, 1)))
    return _crank_harmonics(drive.stroke_m / 2.0, drive.rod_length_m)


@lru_cache(maxsize=256)
def _crank_harmonics(r: float, rod: float) -> Harmonics:
    # The crank acceleration is even in phi (cosines only) and analytic; its
    # coefficients fall geometrically, so double the FFT until the tail is gone.
    drive = Drive("crank", 60.0, 2.0 * r, rod)
    points = 32
    while True:
        values = [phase_derivatives(drive, TWO_PI * j / points)[2] for j in range(points)]
        spectrum = fft(values)
        coefs = [2.0 * spectrum[k].real / points for k in range(1, points // 2)]
        top = max(abs(c) for c in coefs) or 1.0
        tail = max(abs(c) for c in coefs[len(coefs) * 3 // 4:])
        if tail <= _HARMONIC_FLOOR * top or points >= _CRANK_MAX_POINTS:
            return _trim(tuple(coefs), tuple(0.0 for _ in coefs))
        points *= 2


def fft(values: list[float]) -> list[complex]:
    """Radix-2 decimation-in-time FFT, X_k = sum_j x_j exp(-2 pi i j k / n); n a power of 2."""
    n = len(values)
    out = [complex(v) for v in values]
    j = 0
    for i in range(1, n):  # bit-reversal permutation
        bit = n >> 1
        while j & bit:
            j ^= bit
            bit >>= 1
        j |= bit
        if i < j:
            out[i], out[j] = out[j], out[i]
    size = 2
    while size <= n:
        step = cmath.exp(-2j * math.pi / size)
        half = size // 2
        twiddles = [step ** k for k in range(half)]
        for start in range(0, n, size):
            for k in range(half):
                a, b = out[start + k], out[start + k + half] * twiddles[k]
                out[start + k], out[start + k + half] = a + b, a - b
        size *= 2
    return out


def _trim(cos_m: tuple[float, ...], sin_m: tuple[float, ...]) -> Harmonics:
    """Zero the coefficients at round-off level and drop the trailing zeros."""
    top = max(max(map(abs, cos_m)), max(map(abs, sin_m))) or 1.0
    floor = _HARMONIC_FLOOR * top
    cos_m = tuple(c if abs(c) > floor else 0.0 for c in cos_m)
    sin_m = tuple(c if abs(c) > floor else 0.0 for c in sin_m)
    keep = len(cos_m)
    while keep > 1 and cos_m[keep - 1] == 0.0 and sin_m[keep - 1] == 0.0:
        keep -= 1
    return Harmonics(cos_m[:keep], sin_m[:keep])
