"""The growth of a small disturbance through a speed ramp, by integrating the linearised
equations with the speed changing (G = g + omega^2 y_pp + omega' y_p).

A state's size is measured in the sway-mode coordinates q = X z (X^T M X = I) as
sum_i z_i^2 + (z_i' / W_i)^2, with W_i the mode's own angular frequency at that speed,
W_i^2 = g |kappa_i| + kappa_i^2 <y_p'^2> (kappa_i = 1 / L_i, the mode's length; the second
term is Kapitza's averaged drive, Landau & Lifshitz sec. 30). Through a hanging tongue of
order n the pendulum responds near n omega / 2, which is where that mode's W lies, so a
free swing keeps its size over a cycle in this norm (half the drive frequency, the norm
before, fitted the principal tongue only, and through the n = 2 tongue the growth swung
by up to 2x with the exit phase). Upright, W_i is the rate at which the mode falls.

What the motor's phase is as it passes the entry speed is not known, and the size ripples
a little within a cycle (the drive's own part of the swing), so the growth is the worst
ratio over PHASES instants spread over the crossing's first cycle and PHASES over its last:
the largest singular value of the transfer matrix from any of the first to any of the
last, in that norm. Measured on the n = 2 tongue of tests/test_runup.py's rig (314 cycles
through it), this worst ratio falls with the ramp rate where a single ratio wobbled.
"""

from __future__ import annotations

import math
from functools import lru_cache

from ..model import drive as drv
from ..model.derived import Model, as_model
from ..model.rig import Rig
from ..numerics.linalg import matmul
from ..numerics.rk import STAGE_NODES, fundamental_matrix
from ..numerics.symeig import jacobi_eigen

RAMP_STEPS_PER_CYCLE = 32  # fixed 8th-order steps per drive cycle in the ramp simulation
PHASES = 8  # instants in the first and in the last cycle of a crossing (4 left a 1.5% wobble)
SLOPE_SAMPLES = 512  # phases for <(dy/dphi)^2>: the trapezoid rule, exact to harmonic 511


@lru_cache(maxsize=64)
def mean_square_slope(drive: drv.Drive) -> float:
    """<(dy_p/dphi)^2> over a drive cycle (m^2): times omega^2, the pivot's mean square
    speed."""
    return sum(drv.phase_derivatives(drive, 2 * math.pi * k / SLOPE_SAMPLES)[1] ** 2
               for k in range(SLOPE_SAMPLES)) / SLOPE_SAMPLES


def sway_frequencies(model: Model, equilibrium: str, speed_rpm: float) -> list[float]:
    """Each sway mode's own angular frequency at a speed (rad/s): the module docstring's W."""
    omega = 2 * math.pi * speed_rpm / 60
    slope = omega * omega * mean_square_slope(model.rig.drive)
    return [math.sqrt(model.rig.g_m_s2 * abs(k) + k * k * slope)
            for k in model.of(equilibrium).modal_stiffness]


def _size_maps(model: Model, equilibrium: str, speed_rpm: float):
    """(S, S^-1) at a speed: S takes a state (q, q') to (z, z' / W), whose length is the size."""
    eq = model.of(equilibrium)
    n = len(eq.modal_stiffness)
    X = eq.modal_basis
    M = eq.linear.M
    Xinv = [[sum(X[k][i] * M[k][j] for k in range(n)) for j in range(n)] for i in range(n)]  # X^T M
    w = sway_frequencies(model, equilibrium, speed_rpm)
    S = [[0.0] * (2 * n) for _ in range(2 * n)]
    Sinv = [[0.0] * (2 * n) for _ in range(2 * n)]
    for i in range(n):
        for j in range(n):
            S[i][j], S[n + i][n + j] = Xinv[i][j], Xinv[i][j] / w[i]
            Sinv[i][j], Sinv[n + i][n + j] = X[i][j], X[i][j] * w[j]
    return S, Sinv


def ramp_amplification(rig: Rig | Model, equilibrium: str, a: float, b: float,
                       rate_rpm_s: float) -> float:
    """Growth of a small disturbance through a ramp from a to b rpm (the drive at phase 0 as
    it passes a): the largest singular value, in the module docstring's norm, of the transfer
    matrix from any of PHASES instants in the ramp's first cycle (or first half, if it is
    shorter than two) to any of PHASES in its last."""
    model = as_model(rig)
    drive, g = model.rig.drive, model.rig.g_m_s2
    eq = model.of(equilibrium)
    duration = abs(b - a) / rate_rpm_s
    sign = 1.0 if b >= a else -1.0
    cycles = abs(b * b - a * a) / 120.0 / rate_rpm_s
    h_nominal = duration / max(64, math.ceil(cycles * RAMP_STEPS_PER_CYCLE))
    w_a, alpha = 2 * math.pi * a / 60, sign * rate_rpm_s * 2 * math.pi / 60  # rad/s, rad/s^2
    first = min(60.0 / a, duration / 2) / PHASES
    last = min(60.0 / b, duration / 2) / PHASES
    starts = [k * first for k in range(PHASES)]
    ends = [duration - k * last for k in range(PHASES)]

    def transfer(t0: float, t1: float):
        steps = max(1, math.ceil((t1 - t0) / h_nominal))
        h = (t1 - t0) / steps
        nodes = []
        for k in range(steps):
            for c in STAGE_NODES:
                t = t0 + (k + c) * h
                _, dy, d2y = drv.phase_derivatives(drive, w_a * t + alpha * t * t / 2)
                omega = w_a + alpha * t
                nodes.append(g + omega * omega * d2y + alpha * dy)
        return fundamental_matrix(eq.B, eq.C, nodes, t1 - t0, steps)

    core = transfer(starts[-1], ends[-1])
    entry = [None] * PHASES  # entry[i]: from starts[i] to the core's start, then S^-1 there
    into = _identity(len(core))
    for i in reversed(range(PHASES)):
        if i < PHASES - 1:
            into = matmul(into, transfer(starts[i], starts[i + 1]))
        entry[i] = matmul(into, _size_maps(model, equilibrium, _rpm(a, alpha, starts[i]))[1])
    growth = 0.0
    out = core
    for j in reversed(range(PHASES)):
        if j < PHASES - 1:
            out = matmul(transfer(ends[j + 1], ends[j]), out)
        exit_map = matmul(_size_maps(model, equilibrium, _rpm(a, alpha, ends[j]))[0], out)
        for e in entry:
            growth = max(growth, largest_singular_value(matmul(exit_map, e)))
    return growth


def _rpm(a: float, alpha: float, t: float) -> float:
    return a + alpha * t * 60 / (2 * math.pi)


def _identity(size: int) -> list[list[float]]:
    return [[1.0 if i == j else 0.0 for j in range(size)] for i in range(size)]


def largest_singular_value(a: list[list[float]]) -> float:
    """The 2-norm of a square matrix: the root of F^T F's largest eigenvalue (symmetric:
    Jacobi's rotations). Divided by its largest entry first (a growth near e^200,
    MAX_LOG_GROWTH, squares to e^400 in F^T F and overflows). Infinite if an entry is not
    finite: the ramp's growth overflowed a double, as a secant step of the minimum-rate
    search can ask for a ramp far slower than the frozen estimate's e^200 bound (three
    links, 2026-12-05: its NaNs stalled the eigenvalue search and the run-up crashed)."""
    if not all(math.isfinite(v) for row in a for v in row):
        return math.inf
    big = max(abs(v) for row in a for v in row)
    if big == 0.0:
        return 0.0
    scaled = [[v / big for v in row] for row in a]
    gram = matmul([list(col) for col in zip(*scaled)], scaled)
    return big * math.sqrt(max(max(jacobi_eigen(gram)[0]), 0.0))
