"""Nonlinear motion of the chain: initial state, knocks and jumps, speed profiles, stick-slip.

``simulate(rig, scenario)`` integrates the full equations (module
``dynamics``) with adaptive DOP853 (module ``integrate``). Coulomb friction
is handled as a switched system: a sliding joint whose relative rate reaches
zero is tested with the torque it would have to hold; it sticks if that is
within its friction torque and is then held by the constraint, and it
slips again when the holding torque needed exceeds the friction torque. Both
switches, and the monitored events (fell, recovered, rotation), are located
on the 7th-degree dense output, not on a smoothed friction law.

Outputs: frames at a frame rate, one stroboscopic sample per drive cycle at
a chosen phase, the energy relative to the pivot, the events, and counters.
"""

from __future__ import annotations

import math

from .dynamics import (Model, Segment, accelerations, energy_J, model, pivot_at, pivot_side_at,
                       relative_rates, rhs)
from ..numerics.integrate import IntegrationError, locate, steps
from ..model.rig import Rig
from ..numerics.roots import golden_max
from .scenario import REFERENCES, Event, Knock, Motion, Scenario, check_scenario
from .speed import constant_speed, phase_times, segments

MAX_SWITCHES = 200_000  # stick/slip switches in one run before it is called chattering
PIECE_STEPS = 500  # steps between the progress reports of simulate_steps
RATE_ZERO = 1e-12  # rad/s: a relative rate this small counts as at rest (for the start)
TWO_PI = 2.0 * math.pi


# ----------------------------------------------------------------------------- stick and slip


def _mode_at(m: Model, seg: Segment, t: float, y, mode) -> tuple[list, list[Event]]:
    """Settle the mode at a state: joints at rest stick if they can, stuck ones slip if they must."""
    mode = list(mode)
    n = m.n
    rel = relative_rates(y[n:])
    trying = []
    for k in range(n):  # a joint that moves slides its way; one newly at rest is tried stuck
        if m.friction[k] <= 0:
            continue
        if abs(rel[k]) > RATE_ZERO:
            mode[k] = 1 if rel[k] > 0 else -1
        elif mode[k] != 0:
            mode[k] = 0
            trying.append(k)
    changes = []
    for _ in range(n + 1):  # release the worst overloaded stuck joint, until all hold
        lam = accelerations(m, seg, mode, t, y)[1]
        over = [(abs(lam[k]) - m.friction[k], k) for k in range(n)
                if mode[k] == 0 and abs(lam[k]) > m.friction[k]]
        if not over:
            break
        _, k = max(over)
        mode[k] = -1 if lam[k] > 0 else 1  # slips the way the unheld torque drives it
        if k in trying:
            trying.remove(k)
        else:
            changes.append(Event(t, "slip", k, f"joint {k + 1} slips: needs {abs(lam[k]):.4g} "
                                               f"N m, friction holds {m.friction[k]:.4g} N m"))
    lam = accelerations(m, seg, mode, t, y)[1] if trying else lam
    changes += [Event(t, "stick", k, f"joint {k + 1} held by friction: {abs(lam[k]):.4g} N m "
                                     f"of {m.friction[k]:.4g}") for k in trying]
    return mode, changes


def _stick_state(m: Model, y, k: int) -> list:
    """Make joint k's relative rate exactly zero (it is zero to the event tolerance already)."""
    y = list(y)
    n = m.n
    y[n + k] = y[n + k - 1] if k > 0 else 0.0
    return y


def _switch(m: Model, seg: Segment, mode, step) -> tuple[float, int] | None:
    """The earliest stick/slip switch inside a step, as (time, joint), or None."""
    n, best = m.n, None
    t0, t1 = step.t0, step.t1
    for k in range(n):
        if m.friction[k] <= 0:
            continue
        if mode[k] != 0:  # sliding: watch s_k r_k fall to zero
            s = mode[k]

            def g(t, k=k, s=s):
                y = step(t)
                return s * (y[n + k] - (y[n + k - 1] if k else 0.0))
            g0, g1 = g(t0), g(t1)
            hit = None
            if g1 <= 0 < g0:
                hit = locate(g, t0, t1, g0, g1)
            elif g1 > 0 and g0 > 0 and _dips(step, n, k, s):
                t_min, g_min = golden_max(lambda t: -g(t), t0, t1, xtol=1e-12 * (1 + t1))
                if -g_min <= 0:
                    hit = locate(g, t0, t_min, g0, -g_min)
            elif g0 <= 0 and g1 <= 0:  # released at the threshold, drifted back: re-test
                hit = t1
        else:  # stuck: watch the holding torque reach the friction torque
            def h(t, k=k):
                return abs(accelerations(m, seg, mode, t, step(t))[1][k]) - m.friction[k]
            hit = None
            h0 = h(t0)
            for ta, tb in ((t0, 0.5 * (t0 + t1)), (0.5 * (t0 + t1), t1)):
                hb = h(tb)
                if hb >= 0 > h0:
                    hit = locate(h, ta, tb, h0, hb)
                    break
                h0 = hb
        if hit is not None and (best is None or hit < best[0]):
            best = (hit, k)
    return best


def _dips(step, n: int, k: int, s: int) -> bool:
    """Whether s r_k falls then rises inside the step (its rate of change turns up)."""
    def dr(f):
        return s * (f[n + k] - (f[n + k - 1] if k else 0.0))
    return dr(step.f0) < 0 < dr(step.f1)


def _after_switch(m: Model, seg: Segment, mode, t: float, y, k: int):
    """New mode, state and events once joint k reaches a switch at time t."""
    if mode[k] != 0:  # at rest: sticks if the joint can hold it, else slides back the other way
        y = _stick_state(m, y, k)
        mode, events = _mode_at(m, seg, t, y, mode)
        return mode, y, events
    mode = list(mode)
    lam = accelerations(m, seg, mode, t, y)[1][k]
    mode[k] = -1 if lam > 0 else 1
    return mode, y, [Event(t, "slip", k, f"joint {k + 1} slips: needs {abs(lam):.4g} N m, "
                                         f"friction holds {m.friction[k]:.4g} N m")]


# ----------------------------------------------------------------------------- monitors


def _deviation(q: float, ref: float) -> float:
    """|angle - ref| wrapped to [0, pi]."""
    d = math.fmod(abs(q - ref), TWO_PI)
    return TWO_PI - d if d > math.pi else d


class _Watch:
    """Frames, stroboscopic samples and the fell / recovered / rotation events of one run."""

    def __init__(self, m: Model, sc: Scenario, y0):
        self.m, self.sc, self.n = m, sc, m.n
        self.ref = REFERENCES[sc.reference]
        self.frames = {k: [] for k in ("t", "q", "w", "yp", "xp", "rpm", "E", "mode")}
        self.strobe = {"t": [], "q": [], "w": [], "k": set()}
        self.events: list[Event] = []
        self.frame_dt = 1.0 / sc.frame_rate_hz if sc.frame_rate_hz > 0 else None
        self.next_frame = 0
        self.start = list(y0[:self.n])
        self.turns = [0.0] * self.n
        self.fell = self.fallen = self.stop = False
        self.disturbed = False
        self.since = None  # when every angle last came back inside the recover band
        self._reset_bands(0.0, y0)

    def _reset_bands(self, t: float, y) -> None:
        dev = [_deviation(q, self.ref) for q in y[:self.n]]
        self.inside = [d <= self.sc.recover_band_rad for d in dev]
        if not all(self.inside):
            self.disturbed = True
            self.since = None
        elif self.since is None:
            self.since = t
        for i, d in enumerate(dev):
            if d > self.sc.fall_band_rad:
                self._fall(t, i)

    def jumped(self, t: float, y, event: Event) -> None:
        self.events.append(event)
        self.disturbed = True
        self.since = None
        self._reset_bands(t, y)

    def _fall(self, t: float, i: int) -> None:
        if not self.fallen:
            self.fallen = self.fell = True
            self.events.append(Event(t, "fell", i, f"link {i + 1} left the band of "
                                     f"{math.degrees(self.sc.fall_band_rad):.0f} deg about "
                                     f"{self.sc.reference}"))
            if self.sc.stop_at_fall:
                self.stop = True

    def begin(self, seg: Segment, t_end: float) -> None:
        """A new segment: its stroboscopic times."""
        phase = self.sc.strobe_phase_rad
        self.strobes = [] if phase is None else phase_times(seg, t_end, phase)
        self.strobes.reverse()  # popped from the end, earliest first

    def piece(self, seg: Segment, step, ta: float, tb: float, mode) -> None:
        """Record everything in [ta, tb) of one accepted step (tb <= step.t1)."""
        dt = self.frame_dt
        if dt is not None:
            while self.next_frame * dt < tb or (tb >= self.sc.duration_s
                                                and self.next_frame * dt <= tb):
                t = self.next_frame * dt
                self._frame(seg, t, step(max(ta, min(t, step.t1))), mode)
                self.next_frame += 1
        while self.strobes and self.strobes[-1][0] < tb:
            t, k = self.strobes.pop()
            if k not in self.strobe["k"]:
                y = step(max(ta, t))
                self.strobe["k"].add(k)
                self.strobe["t"].append(t)
                self.strobe["q"].append(tuple(y[:self.n]))
                self.strobe["w"].append(tuple(y[self.n:]))
        self._bands(step, ta, tb)

    def _frame(self, seg: Segment, t: float, y, mode) -> None:
        f = self.frames
        f["t"].append(t)
        f["q"].append(tuple(y[:self.n]))
        f["w"].append(tuple(y[self.n:]))
        f["yp"].append(pivot_at(self.m, seg, t)[0])
        if self.m.planar is not None:  # the pivot moves sideways too
            f["xp"].append(pivot_side_at(self.m, seg, t)[0])
        f["rpm"].append(seg.omega(t) * 60.0 / TWO_PI)
        f["E"].append(energy_J(self.m, y))
        f["mode"].append(tuple(mode))

    def _bands(self, step, ta: float, tb: float) -> None:
        n, sc, ref = self.n, self.sc, self.ref
        ya, yb = step(ta), step(tb)
        span = tb - ta
        for i in range(n):
            q0, q1, w0, w1 = ya[i], yb[i], ya[n + i], yb[n + i]
            parts = [(ta, tb, q0, q1)]
            if (w0 > 0) != (w1 > 0) and w0 != 0 and w1 != 0:
                # The angle turns inside; find where only if a threshold is within reach.
                reach = span * (abs(w0) + abs(w1)) + span * span * (abs(step.f0[n + i])
                                                                    + abs(step.f1[n + i]))
                if self._near(i, q0, q1, reach):
                    tm = locate(lambda t: step(t)[n + i], ta, tb, w0, w1,
                                xtol=1e-9 * span + 1e-15)
                    qm = step(tm)[i]
                    parts = [(ta, tm, q0, qm), (tm, tb, qm, q1)]
            for t0, t1, qa, qb in parts:
                self._turns(step, i, t0, t1, qa, qb)
                d0, d1 = _deviation(qa, ref), _deviation(qb, ref)
                if d1 > sc.fall_band_rad >= d0:
                    self._fall(self._cross(step, i, t0, t1, sc.fall_band_rad), i)
                    if self.stop:
                        return
                inside = d1 <= sc.recover_band_rad
                if inside != self.inside[i]:
                    t = self._cross(step, i, t0, t1, sc.recover_band_rad)
                    self.inside[i] = inside
                    if not inside:
                        self.disturbed, self.since = True, None
                    elif all(self.inside):
                        self.since = t
        if self.disturbed and self.since is not None and tb - self.since >= sc.settle_s:
            self.events.append(Event(self.since, "recovered", None,
                                     f"back within {math.degrees(sc.recover_band_rad):.1f} deg "
                                     f"of {sc.reference} and stayed {sc.settle_s:g} s"))
            self.disturbed = self.fallen = False

    def _near(self, i: int, q0: float, q1: float, reach: float) -> bool:
        """Whether an angle within ``reach`` of [q0, q1] could cross a band or a full turn."""
        d = sorted((_deviation(q0, self.ref), _deviation(q1, self.ref)))
        u = sorted((abs(q0 - self.start[i]), abs(q1 - self.start[i])))
        return (any(d[0] - reach <= b <= d[1] + reach
                    for b in (self.sc.fall_band_rad, self.sc.recover_band_rad))
                or (self.turns[i] < 1.0 and u[1] + reach >= TWO_PI))

    def _cross(self, step, i: int, t0: float, t1: float, band: float) -> float:
        def g(t):
            return _deviation(step(t)[i], self.ref) - band
        g0, g1 = g(t0), g(t1)
        return locate(g, t0, t1, g0, g1) if (g0 > 0) != (g1 > 0) else t1

    def _turns(self, step, i: int, t0: float, t1: float, q0: float, q1: float) -> None:
        before, after = abs(q0 - self.start[i]) / TWO_PI, abs(q1 - self.start[i]) / TWO_PI
        self.turns[i] = max(self.turns[i], after)
        if before < 1.0 <= after:
            def g(t):
                return abs(step(t)[i] - self.start[i]) - TWO_PI
            t = locate(g, t0, t1, g(t0), g(t1))
            self.events.append(Event(t, "rotation", i, f"link {i + 1} went over the top: a full "
                                                       "turn"))


# ----------------------------------------------------------------------------- the run


def _initial(rig: Rig, sc: Scenario) -> list[float]:
    n = rig.n_links
    q = list(sc.angles_rad) if sc.angles_rad is not None else [REFERENCES[sc.reference]] * n
    w = list(sc.rates_rad_s) if sc.rates_rad_s is not None else [0.0] * n
    return [float(x) for x in q + w]


def _actions(sc: Scenario):
    """Knocks and jumps by time, in the order given."""
    out: dict[float, list] = {}
    for k in sc.knocks:
        out.setdefault(float(k.t_s), []).append(k)
    for j in sc.jumps:
        out.setdefault(float(j.t_s), []).append(j)
    return out


def _apply(m: Model, y, action) -> tuple[list, Event]:
    y = list(y)
    n = m.n
    if isinstance(action, Knock):
        y[n + action.link] += action.rate_rad_s
        return y, Event(action.t_s, "knock", action.link,
                        f"link {action.link + 1} rate stepped by {action.rate_rad_s:.4g} rad/s")
    if action.angles_rad is not None:
        y[:n] = [float(x) for x in action.angles_rad]
    if action.rates_rad_s is not None:
        y[n:] = [float(x) for x in action.rates_rad_s]
    return y, Event(action.t_s, "jump", None, "state set")


def simulate(rig: Rig, scenario: Scenario | None = None, *, chain_model: Model | None = None
             ) -> Motion:
    """Integrate the full nonlinear motion of ``rig`` for ``scenario``.

    Bad scenario fields raise ``RigError`` naming each field; a numerical failure
    (step size underflow, chattering friction) ends the run early and is reported
    in ``success`` / ``message``. ``chain_model`` reuses a prepared ``dynamics.model``.
    """
    run = simulate_steps(rig, scenario, chain_model=chain_model)
    while True:
        try:
            next(run)
        except StopIteration as stop:
            return stop.value


def simulate_steps(rig: Rig, scenario: Scenario | None = None, *,
                   chain_model: Model | None = None):
    """``simulate`` as a generator: yields the fraction of the run done every
    ``PIECE_STEPS`` steps (so a page can pause or cancel), returns the Motion."""
    sc = scenario or Scenario()
    check_scenario(rig, sc)
    m = chain_model or model(rig)
    n = m.n
    y = _initial(rig, sc)
    actions = _actions(sc)
    profile = sc.profile or constant_speed(rig.drive.speed_rpm)
    pieces = segments(profile, sc.duration_s, actions.keys())
    watch = _Watch(m, sc, y)
    work = {"steps": 0, "rejected": 0, "rhs": 0, "switches": 0}
    mode = [1] * n
    success, message = True, ""
    t, h = 0.0, None
    try:
        for seg, t_end in pieces:
            for action in actions.get(seg.t0, []):
                y, event = _apply(m, y, action)
                watch.jumped(seg.t0, y, event)
            mode, changes = _mode_at(m, seg, seg.t0, y, mode)
            watch.events.extend(changes)
            watch.begin(seg, t_end)
            t = seg.t0
            while t < t_end and not watch.stop:
                t, y, h, mode = _advance(m, seg, mode, t, y, t_end, h, sc, watch, work)
                yield t / sc.duration_s
            if watch.stop:
                break
        if not watch.stop:
            for action in actions.get(sc.duration_s, []):
                y, event = _apply(m, y, action)
                watch.jumped(sc.duration_s, y, event)
    except IntegrationError as exc:
        success, message = False, f"integration stopped at t = {t:.6g} s: {exc}"
    f, s = watch.frames, watch.strobe
    return Motion(tuple(f["t"]), tuple(f["q"]), tuple(f["w"]), tuple(f["yp"]), tuple(f["rpm"]),
                  tuple(f["E"]), tuple(f["mode"]), tuple(s["t"]), tuple(s["q"]), tuple(s["w"]),
                  tuple(sorted(watch.events, key=lambda e: e.t_s)), t, tuple(y),
                  tuple(watch.turns), watch.fell, success, message, work, tuple(f["xp"]))


def _advance(m, seg, mode, t, y, t_end, h, sc, watch, work):
    """Integrate from t until t_end, a friction switch, a stop or PIECE_STEPS steps.

    Returns the new (t, y, h, mode).
    """
    fun = rhs(m, seg, mode)
    for count, step in enumerate(steps(fun, t, y, t_end, rtol=sc.rtol, atol=sc.atol,
                                       first_step=h, counters=work), 1):
        if step.t1 < t_end or h is None:
            h = step.t1 - step.t0
        switch = _switch(m, seg, mode, step) if any(m.friction) else None
        cut = switch[0] if switch else step.t1
        watch.piece(seg, step, step.t0, cut, mode)
        if watch.stop:
            return cut, list(step(cut)), h, mode
        if switch:
            work["switches"] += 1
            if work["switches"] > MAX_SWITCHES:
                raise IntegrationError(f"more than {MAX_SWITCHES} stick/slip switches "
                                       "(chattering friction)")
            mode, y_new, events = _after_switch(m, seg, mode, cut, step(cut), switch[1])
            watch.events.extend(events)
            return cut, y_new, h, mode
        if count == PIECE_STEPS and step.t1 < t_end:
            return step.t1, list(step.y1), h, mode
    return t_end, list(step.y1), h, mode
