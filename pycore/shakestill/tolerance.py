"""Knock tolerance of the inverted position, and its basin of attraction.

Definitions (shared with the page and the CLI):

- a *knock* is an angular-rate step given to the first link at drive phase 0
  while the pendulum rests inverted;
- a *release* starts the first link at an angle, outer links aligned with it,
  at rest relative to the pivot at drive phase 0;
- the pendulum has *recovered* if no link passes the horizontal during a run
  of max(10 s, 20 slow periods) (``run_seconds``).

``tolerance`` scans upward to the first failure and refines by bisection to
better than 1 %, then probes around the edge: failures below it, or
recoveries just above it, mean the basin's edge is fragmented there and the
answer is reported with how near that happens. Kapitza's effective potential
gives the estimates beside it (``estimates``), labelled as such.

``basin_steps`` maps recovery over initial angle x initial rate of the first
link with Hsu's cell-to-cell mapping on the stroboscopic (once-per-cycle) map
(C. S. Hsu, "A theory of cell-to-cell mapping dynamical systems", J. Appl.
Mech. 47, 1980): each cell's centre is carried one drive cycle by the full
equations, once; every orbit is then a chain of cells, and a start recovers
if its chain does not reach the sink (a cycle that passes the horizontal)
within the run's number of cycles. It yields progress, so the page can run it
in steps and cancel between them, and ends by checking sampled points against
full simulations.
"""

from __future__ import annotations

import math
import random
from dataclasses import dataclass, field, replace

from .dynamics import model
from .estimates import estimates
from .floquet import stability
from .motion import Scenario, simulate
from .properties import properties
from .rig import Rig

MIN_RUN_S = 10.0  # the recovery run lasts at least this long ...
SLOW_PERIODS = 20  # ... and at least this many slow periods of the inverted position
RELATIVE_PRECISION = 0.005  # bisection stops at 0.5 %: the answer is good to 1 % or better
SCAN_STEPS = 6  # scan steps up to the effective-potential estimate
MAX_SCAN = 60  # scan points before giving up on finding a failure
PROBES_BELOW = 4  # checks between the last scan point and the edge (a fragmented edge)
PROBES_ABOVE = (0.01, 0.02, 0.05)  # relative offsets probed above the edge
MAP_SIZE = 41  # grid points per axis of the basin map
MAP_REFINE = 2  # cells per grid spacing (a finer cell grid than the picture)
MAP_VALIDATE = 16  # sampled points re-run as full simulations
MAP_SEED = 20240  # fixed, so a map is reproducible
LOOP_CHECK_PERIODS = 3  # a loop of cells is checked by an exact run this many slow periods
LONG_CHAIN_PERIODS = 1  # a start whose chain falls after more than this is re-run exactly:
# snapping errors add up along a chain (an undamped orbit drifts across energy levels)
MAP_STEPS_PER_SLOW_PERIOD = 16  # a map step of several cycles when the slow motion is slower:
# an orbit of a few cells' radius must move about a cell per step, or cells map onto themselves
HORIZONTAL = math.pi / 2
CHUNK_CYCLES = 64  # drive cycles per piece of a long run: the page can cancel between pieces
RUN_TOLERANCE = 1e-8  # recovery runs: the edges are wanted to 0.5 %, far coarser than this
CELL_TOLERANCE = 1e-7  # one map step from a cell centre: cells are 1e-2 rad wide


def run_seconds(rig: Rig, slow_frequency_hz: float | None = None) -> float:
    """max(10 s, 20 slow periods), with the exact slow frequency of the inverted position."""
    f = slow_frequency_hz
    if f is None:
        s = stability(rig, "inverted")
        f = s.slow_frequency_hz or estimates(rig).inverted_slow_frequency_hz
    return max(MIN_RUN_S, SLOW_PERIODS / f) if f else MIN_RUN_S


def _scenario(n: int, run_s: float, angle: float, rate: float, cycle_s=None,
              tol: float = RUN_TOLERANCE) -> Scenario:
    return Scenario(duration_s=cycle_s or run_s, angles_rad=(angle,) * n,
                    rates_rad_s=(rate,) + (0.0,) * (n - 1), frame_rate_hz=0.0,
                    strobe_phase_rad=None, fall_band_rad=HORIZONTAL,
                    recover_band_rad=HORIZONTAL, settle_s=0.0, stop_at_fall=True,
                    rtol=tol, atol=tol)


def recovers(rig: Rig, *, angle_rad: float = 0.0, rate_rad_s: float = 0.0,
             run_s: float | None = None, chain_model=None) -> bool:
    """Whether the start (first-link angle with outer links aligned, first-link rate) recovers."""
    return _finish(fall_steps(rig, angle_rad, rate_rad_s, run_s, chain_model)) is None


def fall_steps(rig: Rig, angle_rad: float, rate_rad_s: float, run_s=None, chain_model=None):
    """Generator: the recovery run in chunks of whole drive cycles, yielding between them.

    Returns (StopIteration.value) when the start first passes the horizontal (s), or None if
    it recovers. Chunks start at drive phase 0 again, so they join into one run.
    """
    run = run_s or run_seconds(rig)
    m = chain_model or model(rig)
    n, f = rig.n_links, rig.drive.frequency_hz
    angles, rates = (angle_rad,) * n, (rate_rad_s,) + (0.0,) * (n - 1)
    t = 0.0
    while t < run:
        span = min(CHUNK_CYCLES / f, run - t)
        sc = replace(_scenario(n, span, 0.0, 0.0), angles_rad=angles, rates_rad_s=rates)
        motion = simulate(rig, sc, chain_model=m)
        if not motion.success:
            return t + motion.end_t_s
        fell = [e.t_s for e in motion.events if e.kind == "fell"]
        if fell:
            return t + min(fell)
        angles, rates = motion.end_state[:n], motion.end_state[n:]
        t += span
        yield
    return None


def _at(progress, gen):
    """Re-yield ``progress`` for each step of a sub-generator; return its value."""
    try:
        while True:
            next(gen)
            yield progress
    except StopIteration as stop:
        return stop.value


# ----------------------------------------------------------------------------- tolerance


@dataclass(frozen=True)
class Edge:
    """Where recovery is lost along one line of starts (a knock or a release angle)."""

    value: float  # every tested start below this recovered: the tolerance
    failed_at: float | None  # the smallest failing start found (None: none up to the cap)
    precision: float  # (failed_at - value) / value
    scan_step: float
    evaluations: int
    fragmented: bool  # failures below the edge or recoveries above it were found
    recoveries_above: tuple[float, ...] = ()
    failures_below: tuple[float, ...] = ()
    message: str = ""


def edge_steps(fall, step: float, cap: float):
    """Generator: scan upward from ``step``, bisect the first failure, probe the edge.

    ``fall(x)`` is a generator returning the fall time of start x (None: it recovered),
    such as ``fall_steps``. Yields progress fractions (rough); returns the Edge.
    """
    evaluations = 0

    def test(x, fraction):
        nonlocal evaluations
        evaluations += 1
        return (yield from _at(fraction, fall(x))) is None

    good, bad, x = 0.0, None, step
    passed = [0.0]  # scan points that recovered
    while x < cap and evaluations < MAX_SCAN:
        if not (yield from test(x, 0.4 * x / cap)):
            bad = x
            break
        passed.append(x)
        good, x = x, x + step
    if bad is None:
        return Edge(good if x < cap else cap, None, 0.0, step, evaluations, False,
                    message=f"no failure found up to {min(x, cap):.4g}")
    below: list[float] = []
    for _ in range(PROBES_BELOW + 1):  # bisect; a failure found below restarts there
        while bad - good > RELATIVE_PRECISION * max(good, step * 1e-3):
            mid = 0.5 * (good + bad)
            if (yield from test(mid, 0.4 + 0.4 * (1 - (bad - good) / step))):
                good = mid
            else:
                bad = mid
        # The bisection trusted one crossing; look for failures in the stretch below it.
        lows = [good - step * (k + 1) / (PROBES_BELOW + 1) for k in range(PROBES_BELOW)]
        failing = None
        for v in sorted(v for v in lows if v > 0):
            if not (yield from test(v, 0.85)):
                failing = v
                break
        if failing is None:
            break
        below.append(failing)
        good, bad = max(p for p in passed if p < failing), failing
    above = []
    for rel in PROBES_ABOVE:
        v = bad * (1 + rel)
        if v < cap and (yield from test(v, 0.95)):
            above.append(v)
    fragmented = bool(above or below)
    message = ""
    if fragmented:
        near = min(above) / good - 1 if above else 0.0
        message = ("the basin edge is fragmented here: "
                   + (f"starts {near * 100:.1f}% above the first failure recover again"
                      if above else "")
                   + ("; " if above and below else "")
                   + (f"failures below the scanned edge were found at "
                      f"{', '.join(f'{v:.4g}' for v in below)}" if below else ""))
    return Edge(good, bad, (bad - good) / good if good else math.inf, step, evaluations,
                fragmented, tuple(above), tuple(below), message)


@dataclass(frozen=True)
class Tolerance:
    stable: bool  # the inverted position is stable at the operating point (Floquet)
    max_knock_rad_s: float
    max_release_angle_rad: float
    knock: Edge | None
    release: Edge | None
    knock_estimate_rad_s: float  # Kapitza's effective potential: an estimate
    release_angle_estimate_rad: float  # the crest of the effective potential: an estimate
    run_s: float
    message: str = ""
    work: dict = field(default_factory=dict, compare=False)

    def as_dict(self) -> dict:
        def edge(e: Edge | None):
            if e is None:
                return None
            return {"value": e.value, "first_failure": e.failed_at, "precision": e.precision,
                    "scan_step": e.scan_step, "evaluations": e.evaluations,
                    "fragmented": e.fragmented, "recoveries_above": list(e.recoveries_above),
                    "failures_below": list(e.failures_below), "message": e.message}
        return {"stable": self.stable, "max_knock_rad_s": self.max_knock_rad_s,
                "max_release_angle_rad": self.max_release_angle_rad,
                "max_release_angle_deg": math.degrees(self.max_release_angle_rad),
                "knock": edge(self.knock), "release": edge(self.release),
                "estimates": {"knock_rad_s": self.knock_estimate_rad_s,
                              "release_angle_rad": self.release_angle_estimate_rad,
                              "note": "Kapitza's effective potential (Landau & Lifshitz, "
                                      "Mechanics, sec. 30): an estimate, not the simulated "
                                      "answer"},
                "run_s": self.run_s, "message": self.message, "work": self.work}


def tolerance_steps(rig: Rig):
    """Generator of progress fractions; returns the Tolerance (StopIteration.value)."""
    s = stability(rig, "inverted")
    est = estimates(rig)
    if not s.stable:
        return Tolerance(False, 0.0, 0.0, None, None, est.knock_estimate_rad_s,
                         est.crest_angle_rad, 0.0, message=(
                             f"the inverted position is unstable here (largest Floquet "
                             f"multiplier {s.max_multiplier:.4g}): any disturbance grows"))
    run = run_seconds(rig, s.slow_frequency_hz or None)
    m = model(rig)
    rate_scale = est.knock_estimate_rad_s or math.sqrt(rig.g_m_s2 / properties(rig).l_eq_m)
    knock = yield from _scaled(edge_steps(
        lambda x: fall_steps(rig, 0.0, x, run, m),
        rate_scale / SCAN_STEPS, 20 * rate_scale), 0.0, 0.5)
    crest = est.crest_angle_rad or HORIZONTAL
    release = yield from _scaled(edge_steps(
        lambda x: fall_steps(rig, x, 0.0, run, m),
        min(crest, HORIZONTAL) / SCAN_STEPS, HORIZONTAL), 0.5, 1.0)
    return Tolerance(True, knock.value, release.value, knock, release,
                     est.knock_estimate_rad_s, est.crest_angle_rad, run,
                     work={"simulations": knock.evaluations + release.evaluations})


def _scaled(gen, lo: float, hi: float):
    """Re-yield a sub-generator's fractions mapped onto [lo, hi]; return its value."""
    try:
        while True:
            yield lo + (hi - lo) * next(gen)
    except StopIteration as stop:
        return stop.value


def tolerance(rig: Rig) -> Tolerance:
    """Run ``tolerance_steps`` to the end."""
    return _finish(tolerance_steps(rig))


def _finish(gen):
    try:
        while True:
            next(gen)
    except StopIteration as stop:
        return stop.value


# ----------------------------------------------------------------------------- basin map


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
        sc = replace(_scenario(n, self.period, 0.0, 0.0, self.period, CELL_TOLERANCE),
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
        sc = replace(_scenario(n, steps * self.period, 0.0, 0.0),
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
    if rate_max_rad_s is None:
        est = estimates(rig).knock_estimate_rad_s
        rate_max_rad_s = 2 * (est or math.sqrt(rig.g_m_s2 / properties(rig).l_eq_m))
    if not rate_max_rad_s > 0:
        raise ValueError(f"rate_max_rad_s: {rate_max_rad_s!r} must be above 0")
    if not (isinstance(validate, int) and 0 <= validate <= size * size):
        raise ValueError(f"validate: {validate!r} must be a whole number from 0 to size^2")
    slow = stability(rig, "inverted").slow_frequency_hz or None
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
            t = yield from _at((0.7 * done / len(half), current), fall_steps(
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
        sim = (yield from _at((0.7 + 0.29 * k / max(1, len(picks)), current), fall_steps(
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
