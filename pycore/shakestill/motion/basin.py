"""The basin of attraction of the inverted position over start angle x start rate.

``basin_steps`` maps recovery (module ``tolerance``: no link passes the
horizontal in max(10 s, 20 slow periods)) over initial angle x initial rate
of the first link with Hsu's cell-to-cell mapping on the stroboscopic
(once-per-cycle) map (C. S. Hsu, "A theory of cell-to-cell mapping dynamical
systems", J. Appl. Mech. 47, 1980): each cell's centre is carried one map
step (a drive cycle, or a few when the slow motion is slow) by the full
equations, once; every orbit is then a chain of cells, and a start recovers
if its chain does not reach the sink (a step that passes the horizontal)
within the run. Simple cell mapping turns unstable periodic orbits into
persistent cells and lets snapping errors add up along long chains, so loops
of cells and long falling chains are checked by exact runs. The generator
yields progress, so the page can run it in steps and cancel between them,
and ends by checking sampled points against full simulations.
"""

from __future__ import annotations

import math
import random
from dataclasses import dataclass, field, replace

from .dynamics import model
from ..equilibria.estimates import estimates
from ..equilibria.floquet import stability
from .simulation import simulate
from ..model.derived import derive
from ..model.rig import Rig
from .tolerance import HORIZONTAL, fall_steps, relay, run_scenario, run_seconds

MAP_SIZE = 41  # grid points per axis of the basin map
MAP_REFINE = 2  # cells per grid spacing (a finer cell grid than the picture)
MAP_VALIDATE = 16  # sampled points re-run as full simulations
MAP_SEED = 20240  # fixed, so a map is reproducible
LOOP_CHECK_PERIODS = 3  # a loop of cells is checked by an exact run this many slow periods
LONG_CHAIN_PERIODS = 1  # a start whose chain falls after more than this is re-run exactly:
# snapping errors add up along a chain (an undamped orbit drifts across energy levels)
MAP_STEPS_PER_SLOW_PERIOD = 16  # a map step of several cycles when the slow motion is slower:
# an orbit of a few cells' radius must move about a cell per step, or cells map onto themselves
CELL_TOLERANCE = 1e-7  # one map step from a cell centre: cells are 1e-2 rad wide


@dataclass(frozen=True)
class BasinMap:
    """Recovery over a grid of first-link starts: angle (outer links aligned) x rate.

    ``recovered[j][i]`` is for ``rates_rad_s[j]`` and ``angles_rad[i]``; None where not
    yet computed (a partial map while the generator runs).
    """

    angles_rad: tuple[float, ...]
    rates_rad_s: tuple[float, ...]
    recovered: tuple[tuple[bool | None, ...], ...]
    cycles_to_fall: tuple[tuple[int | None, ...], ...]  # None: did not fall in the run
    run_cycles: int
    step_cycles: int  # drive cycles per step of the cell map
    refine: int
    cells_mapped: int
    complete: bool
    validation: dict | None = None
    message: str = ""
    work: dict = field(default_factory=dict, compare=False)

    def as_dict(self) -> dict:
        return {"angles_rad": list(self.angles_rad), "rates_rad_s": list(self.rates_rad_s),
                "recovered": [list(r) for r in self.recovered],
                "cycles_to_fall": [list(r) for r in self.cycles_to_fall],
                "run_cycles": self.run_cycles, "step_cycles": self.step_cycles,
                "refine": self.refine,
                "cells_mapped": self.cells_mapped, "complete": self.complete,
                "validation": self.validation, "message": self.message,
                "method": "cell-to-cell mapping of the once-per-cycle map (Hsu 1980)",
                "work": self.work}


_NEVER = math.inf  # cycles to fall of a chain that ends in a loop of cells


class _CellMap:
    """Hsu's simple cell mapping of the stroboscopic map, built lazily, mirror-symmetric.

    A cell is a tuple of integers: the state (q, q') at drive phase 0 divided by the
    cell sizes. The chain is symmetric under (q, q') -> -(q, q') (the drive is vertical),
    so each cell and its mirror share one entry.
    """

    def __init__(self, rig: Rig, cell_angle: float, cell_rate: float, run_steps: int,
                 step_cycles: int):
        self.rig, self.n = rig, rig.n_links
        self.model = model(rig)
        self.cycle = 1.0 / rig.drive.frequency_hz
        self.period = step_cycles / rig.drive.frequency_hz  # one map step
        self.size = (cell_angle,) * self.n + (cell_rate,) * self.n
        self.run_steps = run_steps
        self.image: dict[tuple, tuple | None] = {}  # canonical cell -> image cell (None: sink)
        self.fall: dict[tuple, float] = {}  # canonical cell -> cycles until it falls
        self.cycles = 0.0  # drive cycles integrated
        self.loops = 0
        self.check_steps = run_steps

    def one_step(self, state) -> tuple | None:
        """The cell one map step after ``state``, or None if it passes the horizontal."""
        n = self.n
        sc = replace(run_scenario(n, self.period, 0.0, 0.0, self.period, CELL_TOLERANCE),
                     angles_rad=tuple(state[:n]), rates_rad_s=tuple(state[n:]))
        motion = simulate(self.rig, sc, chain_model=self.model)
        self.cycles += self.period / self.cycle
        if motion.fell or not motion.success:
            return None
        return tuple(round(x / s) for x, s in zip(motion.end_state, self.size))

    @staticmethod
    def _canon(cell):
        mirror = tuple(-c for c in cell)
        return (cell, False) if cell >= mirror else (mirror, True)

    def _image(self, cell):
        key, flip = self._canon(cell)
        if key not in self.image:
            if any(abs(c * s) > HORIZONTAL for c, s in zip(key[:self.n], self.size)):
                self.image[key] = None
            else:
                self.image[key] = self.one_step([c * s for c, s in zip(key, self.size)])
        img = self.image[key]
        return None if img is None else (tuple(-c for c in img) if flip else img)

    def cycles_to_fall(self, cell) -> float:
        """Map steps from ``cell`` until its chain reaches the sink (inf: not in the run)."""
        chain, seen, c = [], {}, cell
        entry, base = None, _NEVER
        while True:
            key = self._canon(c)[0]
            if key in self.fall:
                base = self.fall[key]
                break
            if key in seen:  # a loop of cells: checked by an exact run from its entry cell
                entry = seen[key]
                base = self._loop_check(key)
                break
            if len(chain) > self.run_steps:
                break  # longer than the run without falling
            seen[key] = len(chain)
            chain.append(key)
            nxt = self._image(c)
            if nxt is None:
                base = 0.0  # this cell's own cycle falls: counted below
                break
            c = nxt
        self.loops += entry is not None
        tails = [chain] if entry is None else [chain[:entry], chain[entry + 1:]]
        if entry is not None:
            self.fall[chain[entry]] = base
        for part in tails:
            b = base
            for key in reversed(part):
                b += 1
                self.fall[key] = b
        return self.fall[chain[0]] if chain else base

    def _loop_check(self, key) -> float:
        """Map steps until an exact orbit from the cell's centre falls (inf: not in the check).

        Simple cell mapping turns an unstable periodic orbit (the crest of the effective
        potential) into a persistent cell; an exact run shows whether the loop is real.
        """
        n = self.n
        state = [c * s for c, s in zip(key, self.size)]
        steps = min(self.run_steps, self.check_steps)
        sc = replace(run_scenario(n, steps * self.period, 0.0, 0.0),
                     angles_rad=tuple(state[:n]), rates_rad_s=tuple(state[n:]))
        motion = simulate(self.rig, sc, chain_model=self.model)
        self.cycles += motion.end_t_s / self.cycle
        if not motion.fell:
            return _NEVER
        t_fell = min(e.t_s for e in motion.events if e.kind == "fell")
        return float(math.ceil(t_fell / self.period))


def basin_steps(rig: Rig, *, size: int = MAP_SIZE, angle_max_rad: float = HORIZONTAL,
                rate_max_rad_s: float | None = None, refine: int = MAP_REFINE,
                validate: int = MAP_VALIDATE, run_s: float | None = None):
    """Generator of (fraction, BasinMap): the map so far, then the complete map.

    Parameters
    ----------
    size : int
        Grid points per axis (odd keeps the inverted position on the grid).
    angle_max_rad, rate_max_rad_s : float
        Half-ranges of the axes; the rate defaults to twice the effective-potential knock
        estimate.
    refine : int
        Cells per grid spacing in each direction (finer cells, smaller snapping error).
    validate : int
        Grid points re-run as full simulations at the end (half near the edge).
    """
    if not (isinstance(size, int) and 3 <= size <= 401):
        raise ValueError(f"size: {size!r} must be a whole number from 3 to 401")
    if not (isinstance(refine, int) and 1 <= refine <= 16):
        raise ValueError(f"refine: {refine!r} must be a whole number from 1 to 16")
    if not 0 < angle_max_rad <= HORIZONTAL:
        raise ValueError(f"angle_max_rad: {angle_max_rad!r} must be above 0 and at most pi/2")
    derived = derive(rig)
    if rate_max_rad_s is None:
        est = estimates(derived).knock_estimate_rad_s
        rate_max_rad_s = 2 * (est or math.sqrt(rig.g_m_s2 / derived.properties.l_eq_m))
    if not rate_max_rad_s > 0:
        raise ValueError(f"rate_max_rad_s: {rate_max_rad_s!r} must be above 0")
    if not (isinstance(validate, int) and 0 <= validate <= size * size):
        raise ValueError(f"validate: {validate!r} must be a whole number from 0 to size^2")
    slow = stability(derived, "inverted").slow_frequency_hz or None
    run = run_s or run_seconds(rig, slow)
    f = rig.drive.frequency_hz
    run_cycles = math.ceil(run * f)
    step_cycles = max(1, int(f / slow / MAP_STEPS_PER_SLOW_PERIOD)) if slow else 1
    run_steps = math.ceil(run_cycles / step_cycles)
    angles = tuple(angle_max_rad * (2 * i / (size - 1) - 1) for i in range(size))
    rates = tuple(rate_max_rad_s * (2 * j / (size - 1) - 1) for j in range(size))
    cells = _CellMap(rig, (angles[1] - angles[0]) / refine, (rates[1] - rates[0]) / refine,
                     run_steps, step_cycles)
    cells.check_steps = math.ceil(LOOP_CHECK_PERIODS * f / slow / step_cycles) if slow else 1
    long_chain = LONG_CHAIN_PERIODS * f / slow / step_cycles if slow else run_steps
    confirmed = 0
    fall = [[None] * size for _ in range(size)]
    n = rig.n_links
    half = [(j, i) for j in range(size) for i in range(size)
            if (j, i) <= (size - 1 - j, size - 1 - i)]

    def snapshot(complete, validation=None, message=""):
        rec = tuple(tuple(None if v is None else v > run_steps for v in row) for row in fall)
        ctf = tuple(tuple(None if v is None or v > run_steps else int(v) * step_cycles
                          for v in row) for row in fall)
        work = {"cycles_integrated": round(cells.cycles), "cells": len(cells.image),
                "loops": cells.loops, "starts_run_exactly": confirmed}
        return BasinMap(angles, rates, rec, ctf, run_cycles, step_cycles, refine,
                        len(cells.image), complete, validation, message, work)

    current = snapshot(False)
    for done, (j, i) in enumerate(half):
        start = [angles[i]] * n + [rates[j]] + [0.0] * (n - 1)
        first = cells.one_step(start) if abs(angles[i]) <= HORIZONTAL else None
        value = 1.0 if first is None else 1.0 + cells.cycles_to_fall(first)
        if long_chain < value <= run_steps:  # a long chain may have drifted: run it exactly
            t = yield from relay((0.7 * done / len(half), current), fall_steps(
                rig, angles[i], rates[j], run, cells.model))
            value = _NEVER if t is None else float(math.ceil(t / cells.period))
            confirmed += 1
            cells.cycles += (t or run) * f
        fall[j][i] = fall[size - 1 - j][size - 1 - i] = value
        if i == size - 1 or done + 1 == len(half):  # the picture so far, a row at a time
            current = snapshot(False)
        yield 0.7 * (done + 1) / len(half), current
    picks = _validation_points(fall, run_steps, validate)
    checks = []
    for k, (j, i) in enumerate(picks):
        sim = (yield from relay((0.7 + 0.29 * k / max(1, len(picks)), current), fall_steps(
            rig, angles[i], rates[j], run, cells.model))) is None
        checks.append({"angle_rad": angles[i], "rate_rad_s": rates[j],
                       "map": fall[j][i] > run_steps, "simulation": sim,
                       "edge": _on_edge(fall, run_steps, j, i)})
        yield 0.7 + 0.29 * (k + 1) / max(1, len(picks)), current
    validation = _agreement(checks)
    yield 1.0, snapshot(True, validation, validation["summary"] if checks else "")


def _on_edge(fall, limit, j, i) -> bool:
    """Whether a grid neighbour has the other verdict (limit: the run in map steps)."""
    here = fall[j][i] > limit
    size = len(fall)
    return any(0 <= j + a < size and 0 <= i + b < size and (fall[j + a][i + b] > limit) != here
               for a, b in ((1, 0), (-1, 0), (0, 1), (0, -1)))


def _validation_points(fall, limit, count):
    """Half of the points on the map's edge, half elsewhere; reproducible."""
    size = len(fall)
    pts = [(j, i) for j in range(size) for i in range(size)]
    edge = [p for p in pts if _on_edge(fall, limit, *p)]
    rest = [p for p in pts if p not in set(edge)]
    rng = random.Random(MAP_SEED)
    take = min(len(edge), count // 2)
    picks = rng.sample(edge, take) if take else []
    picks += rng.sample(rest, min(len(rest), count - take))
    return picks


def _agreement(checks) -> dict:
    def share(items):
        return (sum(c["map"] == c["simulation"] for c in items) / len(items)) if items else None
    edge = [c for c in checks if c["edge"]]
    rest = [c for c in checks if not c["edge"]]
    total = share(checks)
    summary = (f"map agrees with full simulations at {sum(c['map'] == c['simulation'] for c in checks)}"
               f" of {len(checks)} sampled points" if checks else "not validated")
    return {"points": checks, "agreement": total, "edge_agreement": share(edge),
            "interior_agreement": share(rest), "summary": summary}


def basin_map(rig: Rig, **options) -> BasinMap:
    """Run ``basin_steps`` to the end."""
    last = None
    for _, last in basin_steps(rig, **options):
        pass
    return last
