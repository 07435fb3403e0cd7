"""Knock tolerance of the inverted position, and its basin of attraction.

Definitions (shared with the page and the CLI):

- a *knock* is an angular-rate step given to the first link at drive phase 0
  while the pendulum rests inverted (with the drive off vertical: while it holds its
  leaning orbit, the state of that orbit at phase 0);
- a *release* starts the first link at an angle, outer links aligned with it,
  at rest relative to the pivot at drive phase 0;
- the pendulum has *recovered* if no link passes the horizontal during a run
  of max(10 s, 20 slow periods) (``run_seconds``).

``tolerance`` scans upward to the first failure and refines by bisection to
better than 1 %, then probes around the edge: failures below it, or
recoveries just above it, mean the basin's edge is fragmented there and the
answer is reported with how near that happens. Kapitza's effective potential
gives the estimates beside it (``estimates``), labelled as such.

The basin of attraction over start angle x rate is mapped in module ``basin``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace

from .dynamics import model
from .orbit import held_orbit
from ..equilibria.estimates import estimates
from ..equilibria.floquet import stability
from .scenario import Scenario
from .simulation import simulate
from ..model.derived import derive
from ..model.rig import Rig

MIN_RUN_S = 10.0  # the recovery run lasts at least this long ...
SLOW_PERIODS = 20  # ... and at least this many slow periods of the inverted position
RELATIVE_PRECISION = 0.005  # bisection stops at 0.5 %: the answer is good to 1 % or better
SCAN_STEPS = 6  # scan steps up to the effective-potential estimate
MAX_SCAN = 60  # scan points before giving up on finding a failure
PROBES_BELOW = 4  # checks between the last scan point and the edge (a fragmented edge)
PROBES_ABOVE = (0.01, 0.02, 0.05)  # relative offsets probed above the edge
HORIZONTAL = math.pi / 2
CHUNK_CYCLES = 64  # drive cycles per piece of a long run: the page can cancel between pieces
RUN_TOLERANCE = 1e-8  # recovery runs: the edges are wanted to 0.5 %, far coarser than this


def run_seconds(rig: Rig, slow_frequency_hz: float | None = None) -> float:
    """max(10 s, 20 slow periods), with the exact slow frequency of the inverted position."""
    f = slow_frequency_hz
    if f is None:
        derived = derive(rig)
        s = stability(derived, "inverted")
        f = s.slow_frequency_hz or estimates(derived).inverted_slow_frequency_hz
    return max(MIN_RUN_S, SLOW_PERIODS / f) if f else MIN_RUN_S


def run_scenario(n: int, run_s: float, angle: float, rate: float, cycle_s=None,
              tol: float = RUN_TOLERANCE) -> Scenario:
    return Scenario(duration_s=cycle_s or run_s, angles_rad=(angle,) * n,
                    rates_rad_s=(rate,) + (0.0,) * (n - 1), frame_rate_hz=0.0,
                    strobe_phase_rad=None, fall_band_rad=HORIZONTAL,
                    recover_band_rad=HORIZONTAL, settle_s=0.0, stop_at_fall=True,
                    rtol=tol, atol=tol)


def recovers(rig: Rig, *, angle_rad: float = 0.0, rate_rad_s: float = 0.0,
             run_s: float | None = None, chain_model=None) -> bool:
    """Whether the start (first-link angle with outer links aligned, first-link rate) recovers."""
    return run_to_end(fall_steps(rig, angle_rad, rate_rad_s, run_s, chain_model)) is None


def fall_steps(rig: Rig, angle_rad: float, rate_rad_s: float, run_s=None, chain_model=None,
               base=None):
    """Generator: the recovery run in chunks of whole drive cycles, yielding between them.

    Returns (StopIteration.value) when the start first passes the horizontal (s), or None if
    it recovers. Chunks start at drive phase 0 again, so they join into one run. ``base``
    (a state at phase 0, the held orbit's) is knocked instead of the position at rest.
    """
    run = run_s or run_seconds(rig)
    m = chain_model or model(rig)
    n, f = rig.n_links, rig.drive.frequency_hz
    angles, rates = (angle_rad,) * n, (rate_rad_s,) + (0.0,) * (n - 1)
    if base is not None:
        angles = tuple(base[:n])
        rates = (base[n] + rate_rad_s,) + tuple(base[n + 1:])
    t = 0.0
    while t < run:
        span = min(CHUNK_CYCLES / f, run - t)
        sc = replace(run_scenario(n, span, 0.0, 0.0), angles_rad=angles, rates_rad_s=rates)
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


def relay(progress, gen):
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
        return (yield from relay(fraction, fall(x))) is None

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
    derived = derive(rig)
    s = stability(derived, "inverted")
    est = estimates(derived)
    base = None
    if rig.drive.off_vertical:  # the knocks hit the leaning orbit the pendulum holds
        orbit = held_orbit(rig, "inverted")
        if not orbit.stable:
            return Tolerance(False, 0.0, 0.0, None, None, est.knock_estimate_rad_s,
                             est.crest_angle_rad, 0.0, message=orbit.message or (
                                 "no stable upright orbit with the drive off vertical"))
        base = orbit.start
    elif not s.stable:
        return Tolerance(False, 0.0, 0.0, None, None, est.knock_estimate_rad_s,
                         est.crest_angle_rad, 0.0, message=(
                             f"the inverted position is unstable here (largest Floquet "
                             f"multiplier {s.max_multiplier:.4g}): any disturbance grows"))
    run = run_seconds(rig, s.slow_frequency_hz or None)
    m = model(rig)
    rate_scale = est.knock_estimate_rad_s or math.sqrt(rig.g_m_s2 / derived.properties.l_eq_m)
    knock = yield from _scaled(edge_steps(
        lambda x: fall_steps(rig, 0.0, x, run, m, base),
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
    return run_to_end(tolerance_steps(rig))


def run_to_end(gen):
    try:
        while True:
            next(gen)
    except StopIteration as stop:
        return stop.value
