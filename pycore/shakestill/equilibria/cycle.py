"""One drive cycle of the linearised chain: how finely to step it, and its monodromy.

The RK and Magnus paths sample the drive at stage phases (``drive_nodes``,
``default_steps``); the chain's monodromy is the Taylor-series cycle in its sway-mode
coordinates (numerics/taylor.py, ``chain_steps``), whose multipliers are the chain's.
"""

from __future__ import annotations

import math
from functools import lru_cache

from ..model import drive as drv
from ..model.derived import Model, as_model
from ..model.linear import EQUILIBRIA
from ..model.rig import Rig
from ..numerics.linalg import matmul
from ..numerics.taylor import ORDER as TAYLOR_ORDER
from ..numerics.taylor import modal_cycle

MIN_STEPS = 24  # RK steps per cycle, never fewer
STEP_PHASE = 0.2  # target of (fastest linear rate) x (step) for the 8th-order step
MAX_STEPS = 4000  # a cycle finer than this is not worth it: report non-convergence
HARMONIC_STEPS = 2  # RK steps per drive harmonic, at least
# The chain's Taylor cycle (numerics.taylor): (fastest rate + the drive's phase rate) x
# (step) at most CYCLE_PHASE, and steps enough for the drive's series to hold to
# DRIVE_SERIES_TOLERANCE of its peak: monodromies to ~1e-10 (tests/test_taylor_cycle.py)
CYCLE_PHASE = 1.0
CYCLE_MIN_STEPS = 6
DRIVE_SERIES_TOLERANCE = 1e-10


def check_equilibrium(equilibrium: str) -> None:
    if equilibrium not in EQUILIBRIA:
        raise ValueError(f"equilibrium: {equilibrium!r} is not one of {EQUILIBRIA}")


def operating(m: Model, speed_rpm, stroke_m) -> Model:
    if speed_rpm is not None and not (speed_rpm > 0 and math.isfinite(speed_rpm)):
        raise ValueError(f"speed_rpm: {speed_rpm!r} must be a finite number above 0")
    if stroke_m is not None and not (stroke_m >= 0 and math.isfinite(stroke_m)):
        raise ValueError(f"stroke_m: {stroke_m!r} must be a finite number of at least 0")
    d = m.rig.drive
    if stroke_m is not None and d.waveform == "crank" and stroke_m >= 2 * d.rod_length_m:
        # a crank radius of the rod's length or more cannot turn (a rig file is held to
        # MAX_CRANK_RATIO of it, model.rigread; between the two Hill's band may refuse)
        raise ValueError(f"stroke_m: {stroke_m!r} is more than this crank can turn: a stroke "
                         f"under twice its {d.rod_length_m:g} m rod ({2 * d.rod_length_m:g} m)")
    return m.at(speed_rpm, stroke_m)


def default_steps(model: Rig | Model, equilibrium: str, *, step_phase: float = STEP_PHASE,
                  min_steps: int = MIN_STEPS, per_harmonic: float = HARMONIC_STEPS) -> int:
    """Steps per cycle from the fastest rate of the linear system over the cycle:
    (rate) x (step) = ``step_phase``, at least ``min_steps`` and ``per_harmonic`` per drive
    harmonic.

    The rate is sqrt(G_peak * |eig B|) + |eig C|; the crank's peak acceleration is taken
    at top dead centre, r omega^2 (1 + r/l), which is close enough to choose a step.
    """
    m = as_model(model)
    rig, eq = m.rig, m.of(equilibrium)
    d = rig.drive
    omega = 2 * math.pi * d.frequency_hz
    if d.waveform == "crank":
        r = d.stroke_m / 2
        peak = r * (1 + r / d.rod_length_m) * omega ** 2
    else:
        peak = drv.peak_accel_m_s2(d)
    rate = math.sqrt((rig.g_m_s2 + peak) * eq.stiffness_rate) + eq.damping_rate
    harmonics = m.harmonics.count
    steps = math.ceil(rate / d.frequency_hz / step_phase)
    return min(MAX_STEPS, max(min_steps, math.ceil(per_harmonic * harmonics), steps))


def drive_nodes(rig: Rig, steps: int, stages: tuple[float, ...]):
    """(d2y/dphi2 at ``stages`` (fractions of a step) of every step, omega^2, g): G = g +
    omega^2 d2y/dphi2 there."""
    d = rig.drive
    omega = 2 * math.pi * d.frequency_hz
    nodes = _phase_accel_nodes(d.waveform, d.stroke_m, d.rod_length_m, d.samples_m,
                               d.samples_stroke_m, steps, stages)
    return nodes, omega * omega, rig.g_m_s2


@lru_cache(maxsize=256)
def _phase_accel_nodes(waveform, stroke_m, rod_length_m, samples_m, samples_stroke_m,
                       steps: int, stages: tuple[float, ...]) -> tuple[float, ...]:
    """d2y/dphi2 at every stage phase: the shape of the cycle, the same at every speed,
    so a scan along speed at one stroke computes it once."""
    shape = drv.Drive(waveform, 1.0, stroke_m, rod_length_m, samples_m, samples_stroke_m)
    dphi = 2 * math.pi / steps
    return tuple(drv.phase_accel_m(shape, (s + c) * dphi) for s in range(steps) for c in stages)


def monodromy(rig: Rig | Model, equilibrium: str, speed_rpm: float | None = None,
              stroke_m: float | None = None, *, steps: int | None = None):
    """The one-cycle monodromy matrix (2N x 2N) for the state (q, q'), as tuples."""
    check_equilibrium(equilibrium)
    m = operating(as_model(rig), speed_rpm, stroke_m)
    modal = modal_monodromy(m, equilibrium, steps or chain_steps(m, equilibrium))
    # back from (z, z') to (q, q'): q = X z and z = X^T M q, for positions and rates alike
    eq = m.of(equilibrium)
    X = [list(row) for row in eq.modal_basis]
    to_z = matmul([list(col) for col in zip(*X)], [list(row) for row in eq.linear.M])
    out = matmul(matmul(_twice(X), modal), _twice(to_z))
    return tuple(tuple(row) for row in out)


def _twice(a: list[list[float]]) -> list[list[float]]:
    """The block-diagonal [[a, 0], [0, a]]."""
    n = len(a)
    return [row + [0.0] * n for row in a] + [[0.0] * n + row for row in a]


def chain_steps(model: Rig | Model, equilibrium: str, *, cycle_phase: float = CYCLE_PHASE,
                drive_tolerance: float = DRIVE_SERIES_TOLERANCE) -> int:
    """Steps of the chain's Taylor cycle: (rate x period + 2 pi) / steps <= ``cycle_phase``,
    the rate as default_steps measures it and 2 pi for the drive's own phase (both bound a
    step's series), at least CYCLE_MIN_STEPS; then more, a quarter at a time, until the
    drive's series holds to ``drive_tolerance`` over a step (a crank's acceleration has
    singularities arccosh(l / r) off the real phase axis: a short rod needs short steps)."""
    m = as_model(model)
    d = m.rig.drive
    rate_cycle = default_steps(m, equilibrium, step_phase=1.0, min_steps=1, per_harmonic=0)
    steps = max(CYCLE_MIN_STEPS, math.ceil((rate_cycle + 2 * math.pi) / cycle_phase))
    while steps < MAX_STEPS and \
            drv.accel_series_error(d, steps, TAYLOR_ORDER - 1) > drive_tolerance:
        steps = min(MAX_STEPS, math.ceil(steps * 1.25))
    return steps


def modal_monodromy(m: Model, equilibrium: str, steps: int) -> list[list[float]]:
    """The monodromy in the sway-mode coordinates (z, z'): the same multipliers."""
    eq = m.of(equilibrium)
    d = m.rig.drive
    h = 1.0 / (d.frequency_hz * steps)
    return modal_cycle(eq.modal_stiffness, eq.modal_damping,
                       drv.accel_series(d, steps, TAYLOR_ORDER - 1), m.rig.g_m_s2 * h * h, h,
                       steps)
