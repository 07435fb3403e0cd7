"""The orbit a pendulum holds when its drive is off vertical: Newton shooting with the monodromy.

With any sideways pivot acceleration the upright (or hanging) position is no
longer an equilibrium; the chain settles on a periodic motion of one drive
cycle about a leaning mean angle. That orbit is a fixed point of the one-cycle
map P(x0) = x(T; x0), x = (q, q'), found by Newton's method on P(x0) - x0
with the Jacobian M - I, M the monodromy matrix dP/dx0 (the variational
equations). M is taken by the complex step (Squire & Trapp, SIAM Review 40,
1998): integrating the same fixed-step DOP853 cycle from x0 + i h e_k gives
column k as Im(x(T)) / h, exact to round-off and exactly the derivative of the
discrete map that Newton solves, so Newton converges quadratically. Its
eigenvalues are the orbit's Floquet multipliers.

Continuation: the orbit is sought first from the vertical case's equilibrium;
when Newton does not converge from there the tilt is walked up from zero
(natural continuation with a secant predictor and halving steps). Newton
failing at a tiny step means no orbit exists nearby (a fold: the lean has run
away), which the result says.

The orbit keeps the smooth forces (gravity, drive, joint damping); Coulomb
friction (a band of rest positions, not one orbit) and air drag are left out,
and the result says so when the rig has them.
"""

from __future__ import annotations

import cmath
import math
from dataclasses import dataclass, replace

from ..equilibria.cycle import default_steps
from ..equilibria.floquet import UNDAMPED_TOLERANCE
from ..model.linear import EQUILIBRIA
from ..model.rig import Rig
from ..numerics.linalg import eigvals, solve
from ..numerics.rk import fixed_steps
from .dynamics import Model, model, planar_field_rhs

COMPLEX_STEP = 1e-20  # imaginary perturbation: far below round-off of the real part
NEWTON_TOLERANCE = 1e-11  # rad, rad/s: accepted size of the last Newton correction
LOOSE_TOLERANCE = 1e-6  # searches (edges, tolerance): Newton's last correction accepted
MAX_NEWTON = 12
STALL_AFTER, STALL_RATIO = 3, 0.5  # after 3 iterations each correction must halve at least  # a converging Newton here needs 2-5 iterations
MAX_CORRECTION = 0.3  # rad: a longer Newton step is cut to this (stays in the basin)
MIN_ORBIT_STEPS = 48  # steps per cycle: the wobble is read at the step points
STEP_CHECK = 1e-9  # accepted change of P(x0) - x0 when the step count is doubled
MAX_ORBIT_STEPS = 4000
MIN_SEARCH_STEPS = 12  # searches (edges, tolerance) read no wobble: fewer steps do
SEARCH_ERROR = 1e-8  # accepted one-cycle error of a search's step count (loose Newton: 1e-6)
MIN_TILT_STEP_DEG = 1e-3  # continuation gives up (no orbit nearby) below this step
FAR_LEAN = math.pi / 2  # rad: an orbit leaning past horizontal is not near its vertical


@dataclass(frozen=True)
class Orbit:
    """The held periodic orbit (period one drive cycle) near one equilibrium."""

    equilibrium: str
    found: bool
    start: tuple[float, ...]  # state (q..., q'...) at drive phase 0
    lean_rad: tuple[float, ...]  # mean angle per link from the equilibrium's vertical
    wobble_rad: tuple[float, ...]  # peak-to-peak angle per link within a cycle
    multipliers: tuple[complex, ...]
    max_multiplier: float
    stable: bool
    converged: bool
    iterations: int
    steps: int
    error_estimate: float
    message: str = ""


def _base(equilibrium: str) -> float:
    if equilibrium not in EQUILIBRIA:
        raise ValueError(f"equilibrium: {equilibrium!r} is not one of {EQUILIBRIA}")
    return 0.0 if equilibrium == "inverted" else math.pi


class Shooter:
    """One cycle of the chain at a fixed step count, and its complex-step monodromy."""

    def __init__(self, rig: Rig, steps: int):
        m = model(rig)
        if m.planar is None:  # a vertical path: the same equations with no sideways part
            kin = m.kinematics
            m = replace(m, planar=lambda phi: kin(phi) + (0.0, 0.0, 0.0))
        self.m: Model = m
        self.n, self.steps = m.n, steps
        self.omega = 2.0 * math.pi * rig.drive.frequency_hz
        self.period = 2.0 * math.pi / self.omega
        self._real = planar_field_rhs(m)
        self._complex = planar_field_rhs(m, sin=cmath.sin, cos=cmath.cos)

    def _field(self, t: float) -> tuple[float, float]:
        _, _, d2y, _, _, d2x = self.m.planar(self.omega * t)
        w2 = self.omega * self.omega
        return self.m.g + d2y * w2, d2x * w2

    def cycle(self, x0, steps: int | None = None) -> list[list[float]]:
        """The states at the step points of one cycle from ``x0`` (real)."""
        real = self._real

        def fun(t, y):
            return real(*self._field(t), y)
        return fixed_steps(fun, 0.0, x0, self.period, steps or self.steps)

    def cycle_with_monodromy(self, x0) -> tuple[list[list[float]], list[list[float]]]:
        """(real step states, monodromy M[i][k] = d x_i(T) / d x0_k)."""
        size, h, cplx = 2 * self.n, COMPLEX_STEP, self._complex

        def fun(t, ys):  # all columns at once: the drive is evaluated once per stage
            G, X = self._field(t)
            out = []
            for k in range(size):
                out += cplx(G, X, ys[k * size:(k + 1) * size])
            return out
        y0 = []
        for k in range(size):
            y0 += [complex(v, h if i == k else 0.0) for i, v in enumerate(x0)]
        states = fixed_steps(fun, 0.0, y0, self.period, self.steps)
        real = [[v.real for v in s[:size]] for s in states]
        end = states[-1]
        mono = [[end[k * size + i].imag / h for k in range(size)] for i in range(size)]
        return real, mono


def _newton(sh: Shooter, x0, *, tol: float = NEWTON_TOLERANCE, max_iterations: int = MAX_NEWTON,
            loose: bool = False):
    """(x, states, monodromy, iterations, ok) of Newton shooting from x0.

    ``loose``: stop at a correction below ``LOOSE_TOLERANCE`` and keep that iterate's
    cycle and monodromy (one cycle fewer; lean and multipliers to about 1e-6), for searches.
    """
    x = list(x0)
    size = len(x)
    last = math.inf
    for it in range(1, max_iterations + 1):
        cycle = _safe_cycle(sh, x)
        if cycle is None:
            return x, None, None, it, False
        states, mono = cycle
        resid = [a - b for a, b in zip(states[-1], x)]
        jac = [[mono[i][k] - (1.0 if i == k else 0.0) for k in range(size)] for i in range(size)]
        try:
            dx = solve(jac, [-r for r in resid])
        except (ZeroDivisionError, ValueError, ArithmeticError):
            return x, states, mono, it, False
        big = max(abs(v) for v in dx[:sh.n])
        if not all(math.isfinite(v) for v in dx):
            return x, states, mono, it, False
        if loose and max(abs(v) for v in dx) <= LOOSE_TOLERANCE * (1.0 + max(map(abs, x))):
            return x, states, mono, it, True
        size_dx = max(abs(v) for v in dx)
        if it > STALL_AFTER and size_dx > STALL_RATIO * last:
            return x, states, mono, it, False  # not contracting: no orbit near this start
        last = size_dx
        if big > MAX_CORRECTION:
            dx = [v * MAX_CORRECTION / big for v in dx]
        x = [a + b for a, b in zip(x, dx)]
        if max(abs(v) for v in dx) <= tol * (1.0 + max(abs(v) for v in x)):
            # the cycle and monodromy of the last iterate stand for the new one: they
            # differ by the correction (<= tol), far below what is read from them
            return x, states, mono, it, True
    return x, states, mono, max_iterations, False


def _safe_cycle(sh: Shooter, x):
    """(states, monodromy) of one cycle, or None when the motion blows up on the way (far
    from any orbit: the angles overflow or turn to NaN)."""
    try:
        states, mono = sh.cycle_with_monodromy(x)
    except (OverflowError, ValueError, ZeroDivisionError):
        return None
    if not all(math.isfinite(v) for v in states[-1]):
        return None
    return states, mono


def is_damped(rig: Rig) -> bool:
    return any(link.joint_damping_N_m_s > 0 for link in rig.links)


def orbit_steps(rig: Rig, equilibrium: str) -> int:
    """Steps per cycle: the linear system's own choice, at least ``MIN_ORBIT_STEPS``."""
    return max(MIN_ORBIT_STEPS, default_steps(rig, equilibrium))


def steps_hold(rig: Rig, start, steps: int, full: int) -> bool:
    """True when one cycle from ``start`` at ``steps`` ends within ``SEARCH_ERROR`` of the
    cycle at ``full`` steps."""
    try:
        a, b = Shooter(rig, steps).cycle(start)[-1], Shooter(rig, full).cycle(start)[-1]
    except (OverflowError, ValueError, ZeroDivisionError):
        return False
    return max(abs(x - y) for x, y in zip(a, b)) <= SEARCH_ERROR


def search_steps(rig: Rig, orbit: Orbit) -> int:
    """Steps per cycle for the many loose solves of a search near ``orbit`` (found, at the
    rig's drive): ``orbit.steps`` halved while ``steps_hold`` from its start, at least
    ``MIN_SEARCH_STEPS``. Searches read the lean (the mean over the step points, exact for
    a periodic trapezoid) and the multipliers, not the wobble; a search checks the count
    again at the end it finds."""
    steps = orbit.steps
    while steps // 2 >= MIN_SEARCH_STEPS and steps_hold(rig, orbit.start, steps // 2,
                                                          orbit.steps):
        steps //= 2
    return steps


def solve_orbit(rig: Rig, equilibrium: str, *, start=None, steps: int | None = None,
                verify: bool = True, read_steps: int | None = None) -> Orbit:
    """Newton shooting for the held orbit at the rig's own drive, from ``start``.

    ``start`` is a state (q..., q'...) at phase 0; default the equilibrium itself.
    With ``verify`` the step count is doubled until P(x0) - x0 moves less than
    ``STEP_CHECK`` (at most ``MAX_ORBIT_STEPS``), which is reported as the error estimate;
    without it Newton stops loosely (``_newton``), for searches over many orbits.
    ``read_steps``: lean and wobble are read from one cycle at that many steps (a loose
    Newton on fewer ``steps``, the wobble at the step points of a finer cycle).
    """
    base = _base(equilibrium)
    n = rig.n_links
    x0 = list(start) if start is not None else [base] * n + [0.0] * n
    steps = steps or orbit_steps(rig, equilibrium)
    error = 0.0
    coarse = max(MIN_SEARCH_STEPS, steps // 4)
    if verify and coarse < steps:  # most Newton steps on a coarse cycle, the last on the fine
        x, _, _, _, ok = _newton(Shooter(rig, coarse), x0, loose=True)
        if ok:
            x0 = x
    while True:
        sh = Shooter(rig, steps)
        x, states, mono, its, ok = _newton(sh, x0, loose=not verify)
        if not ok or not verify:
            break
        try:
            finer = Shooter(rig, 2 * steps).cycle(x)[-1]
            error = max(abs(a - b) for a, b in zip(finer, x))
        except (OverflowError, ValueError, ZeroDivisionError):
            error = math.inf
        if not math.isfinite(error):  # the finer cycle blew up: not converged, say so
            error = math.inf
            break
        if error <= STEP_CHECK or 2 * steps > MAX_ORBIT_STEPS:
            break
        steps, x0 = 2 * steps, x
    if ok and read_steps and read_steps != steps:
        try:
            states = Shooter(rig, read_steps).cycle(x)
        except (OverflowError, ValueError, ZeroDivisionError):
            ok = False
    return _summary(rig, equilibrium, x, states, mono, its, ok, steps, error, base)


def _summary(rig, equilibrium, x, states, mono, its, ok, steps, error, base) -> Orbit:
    n = rig.n_links
    lean = wobble = ()
    if ok:
        points = states[:-1]  # one full period of equally spaced points (periodic trapezoid)
        mean = [sum(s[i] for s in points) / len(points) for i in range(n)]
        lean = tuple(math.remainder(v - base, 2.0 * math.pi) for v in mean)
        wobble = tuple(max(s[i] for s in points) - min(s[i] for s in points) for i in range(n))
    found = ok and max(abs(v) for v in lean) < FAR_LEAN
    rhos = tuple(eigvals(mono)) if found else ()
    biggest = max((abs(r) for r in rhos), default=math.inf)
    limit = 1.0 if is_damped(rig) else 1.0 + UNDAMPED_TOLERANCE
    stable = found and (biggest < limit if is_damped(rig) else biggest <= limit)
    notes = []
    if not ok:
        notes.append(f"no held orbit found near the {equilibrium} position: Newton shooting "
                     f"did not converge (at most {MAX_NEWTON} iterations)")
    elif not found:
        notes.append(f"the only orbit found leans {math.degrees(max(map(abs, lean))):.0f} deg, "
                     f"far from the {equilibrium} position: none is held near it")
    elif not stable:
        notes.append(f"the held orbit near the {equilibrium} position is unstable "
                     f"(largest |multiplier| {biggest:.6g})")
    if ok and error > STEP_CHECK:
        notes.append(f"orbit not converged in the step count: {error:.2g} at {steps} steps")
    if any(link.joint_friction_N_m > 0 for link in rig.links) or any(
            p.drag_coefficient > 0 and p.frontal_area_m2 > 0
            for link in rig.links for p in link.point_masses):
        notes.append("joint friction and air drag are left out of the held orbit")
    return Orbit(equilibrium, found, tuple(x), lean if found else (), wobble if found else (),
                 rhos, biggest if found else math.inf, stable, ok and error <= STEP_CHECK,
                 its, steps, error, "; ".join(notes))


def held_orbit(rig: Rig, equilibrium: str, *, steps: int | None = None) -> Orbit:
    """The held orbit at the rig's tilt, continued in tilt from the vertical case.

    Newton starts from the equilibrium; if it fails there, the axis tilt is walked
    up from 0 with a secant predictor, halving the step on failure, down to
    ``MIN_TILT_STEP_DEG`` (then no orbit exists nearby and the result says so).
    """
    first = solve_orbit(rig, equilibrium, steps=steps)
    if first.found or rig.drive.axis_tilt_deg == 0.0:
        return first
    target = rig.drive.axis_tilt_deg
    steps = steps or first.steps

    def at(tilt, start):
        tilted = replace(rig, drive=replace(rig.drive, axis_tilt_deg=tilt))
        return solve_orbit(tilted, equilibrium, start=start, steps=steps, verify=False)
    done = at(0.0, None)
    if not done.found:
        return first
    prev, tilt, step = None, 0.0, target / 8.0
    while tilt != target:
        nxt = target if abs(target - tilt) <= abs(step) else tilt + step
        if prev is None:
            guess = done.start
        else:  # secant predictor along the branch
            frac = (nxt - tilt) / (tilt - prev[0])
            guess = [a + frac * (a - b) for a, b in zip(done.start, prev[1].start)]
        trial = at(nxt, guess)
        if trial.found:
            prev, tilt, done = (tilt, done), nxt, trial
            step *= 1.5
        else:
            step /= 2.0
            if abs(step) < MIN_TILT_STEP_DEG:
                return replace(first, message=f"no held orbit near the {equilibrium} position "
                               f"beyond {tilt:.3g} deg of tilt: its lean runs away (a fold)")
    return solve_orbit(rig, equilibrium, start=done.start, steps=steps)
