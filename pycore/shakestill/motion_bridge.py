"""Bridge ops for motion, tolerance and loads (JSON in, JSON out, through bridge.call).

``OPS`` is merged into ``bridge.OPS``. Numbers may be strings with units
("2 s", "10 deg", "3 rad/s", "1800 rpm"); every bad field is reported with
its JSON path, its value and what is allowed. Links are numbered from 1.

Long work (the tolerance search, the basin map) runs as a job: start it, then
call ``motion_job_step`` repeatedly (each call works for about ``budget_ms``
and returns the progress and the picture so far), or ``motion_job_cancel``;
the worker stays free between steps. The shapes follow bridge.py's chart jobs.
"""

from __future__ import annotations

import itertools
import math
import time
from dataclasses import replace

from .dynamics import model, points_m
from .motion import Jump, Knock, Scenario, simulate_steps
from .motion_report import loads_text, motion_text, tolerance_text
from .plots import basin_svg, line_plot, loads_svg, motion_svg
from .report import CAUTIONS
from .rig import Problem, RigError
from .speed import ramp_profile, table_profile
from .basin import basin_steps
from .tolerance import tolerance_steps
from .units import UnitError, allowed_units, parse_quantity

def _bridge():
    from . import bridge  # late: bridge.py merges OPS from this module when it loads
    return bridge


MAX_BUDGET_MS = 5000.0  # one job step never works longer than this on purpose
DEFAULT_BUDGET_MS = 150.0


class _Reader:
    """Reads request fields into SI, collecting every problem with its path."""

    def __init__(self, request: dict):
        self.request, self.problems = request, []

    def quantity(self, where: str, raw, kind: str, *, minimum=None, above=None):
        if raw is None:
            self.problems.append(Problem(where, "is required: a number, or text with a unit "
                                                f"({allowed_units(kind) or 'no unit'})"))
            return None
        try:
            value = parse_quantity(raw, kind)
        except UnitError as exc:
            self.problems.append(Problem(where, f"{raw!r} is not allowed: {exc}"))
            return None
        if not math.isfinite(value) or (minimum is not None and value < minimum) or (
                above is not None and value <= above):
            bound = (f"at least {minimum:g}" if minimum is not None else
                     f"above {above:g}" if above is not None else "finite")
            self.problems.append(Problem(where, f"{raw!r} is not allowed: it must be {bound}"))
            return None
        return value

    def field(self, key: str, kind: str, default=None, **bounds):
        if key not in self.request or self.request[key] is None:
            return default
        return self.quantity(key, self.request[key], kind, **bounds)

    def values(self, where: str, raw, kind: str, n: int):
        if raw is None:
            return None
        if not isinstance(raw, list) or len(raw) != n:
            self.problems.append(Problem(where, f"{raw!r} is not allowed: give a list of {n} "
                                                "value(s), one per link"))
            return None
        out = [self.quantity(f"{where}[{i}]", v, kind) for i, v in enumerate(raw)]
        return None if None in out else tuple(out)

    def items(self, key: str) -> list:
        raw = self.request.get(key) or []
        if not isinstance(raw, list) or not all(isinstance(x, dict) for x in raw):
            self.problems.append(Problem(key, "must be a list of objects"))
            return []
        return raw

    def done(self) -> None:
        if self.problems:
            raise RigError(self.problems)


def _link(r: _Reader, where: str, raw, n: int) -> int:
    if raw is None:
        return 0
    if isinstance(raw, bool) or not isinstance(raw, int) or not 1 <= raw <= n:
        r.problems.append(Problem(where, f"{raw!r} is not allowed: links are numbered 1 to {n}"))
        return 0
    return raw - 1


def scenario_from_request(request: dict, rig) -> Scenario:
    """The Scenario a ``simulate`` request describes (RigError naming each bad field)."""
    r, n = _Reader(request), rig.n_links
    knocks = tuple(Knock(r.quantity(f"knocks[{i}].t_s", k.get("t_s"), "time", minimum=0.0) or 0.0,
                         r.quantity(f"knocks[{i}].rate_rad_s", k.get("rate_rad_s"),
                                    "angular_rate") or 0.0,
                         _link(r, f"knocks[{i}].link", k.get("link", 1), n))
                   for i, k in enumerate(r.items("knocks")))
    jumps = tuple(Jump(r.quantity(f"jumps[{i}].t_s", j.get("t_s"), "time", minimum=0.0) or 0.0,
                       r.values(f"jumps[{i}].angles_rad", j.get("angles_rad"), "angle", n),
                       r.values(f"jumps[{i}].rates_rad_s", j.get("rates_rad_s"), "angular_rate",
                                n))
                  for i, j in enumerate(r.items("jumps")))
    profile = None
    start_rpm = r.field("start_rpm", "speed", None, minimum=0.0)
    ramps = [_ramp(r, f"ramps[{i}]", x) for i, x in enumerate(r.items("ramps"))]
    table = request.get("speed_table")
    reference = request.get("reference", "inverted")
    angles = r.values("angles_rad", request.get("angles_rad"), "angle", n)
    sc = Scenario(
        duration_s=r.field("duration_s", "time", 5.0, above=0.0),
        angles_rad=angles if angles is not None or reference != "hanging" else (math.pi,) * n,
        rates_rad_s=r.values("rates_rad_s", request.get("rates_rad_s"), "angular_rate", n),
        knocks=knocks, jumps=jumps,
        frame_rate_hz=r.field("frame_rate_hz", "plain", 60.0, minimum=0.0),
        strobe_phase_rad=r.field("strobe_phase_rad", "angle", 0.0),
        reference=reference,
        fall_band_rad=r.field("fall_band_rad", "angle", math.pi / 2, above=0.0),
        recover_band_rad=r.field("recover_band_rad", "angle", 0.2, above=0.0),
        settle_s=r.field("settle_s", "time", 1.0, minimum=0.0))
    r.done()
    if table and (ramps or start_rpm is not None):
        raise RigError([Problem("ramps" if ramps else "start_rpm",
                                "give ramps (and start_rpm) or speed_table, not both")])
    if ramps or start_rpm is not None:
        start = rig.drive.speed_rpm if start_rpm is None else start_rpm  # held until a ramp
        profile = ramp_profile(start, _ramp_times(ramps, start))
    elif table:
        if not isinstance(table, dict):
            raise RigError([Problem("speed_table", "must be {\"t_s\": [...], \"speed_rpm\": [...]}")])
        ts = r.values("speed_table.t_s", table.get("t_s"), "time", len(table.get("t_s") or []))
        vs = r.values("speed_table.speed_rpm", table.get("speed_rpm"), "speed",
                      len(table.get("speed_rpm") or []))
        r.done()
        profile = table_profile(ts or (), vs or ())
    return replace(sc, profile=profile)


def _ramp(r: _Reader, where: str, x: dict) -> tuple:
    """(at_s, over_s or None, to_rpm, rate_rpm_s or None): a ramp gives its time or its rate."""
    if ("over_s" in x) == ("rate_rpm_s" in x):
        r.problems.append(Problem(where, "give over_s (the ramp's time) or rate_rpm_s (its rate), "
                                         "one of the two"))
    return (r.quantity(f"{where}.at_s", x.get("at_s"), "time", minimum=0.0),
            r.quantity(f"{where}.over_s", x["over_s"], "time", above=0.0) if "over_s" in x else None,
            r.quantity(f"{where}.to_rpm", x.get("to_rpm"), "speed", minimum=0.0),
            r.quantity(f"{where}.rate_rpm_s", x["rate_rpm_s"], "rate", above=0.0)
            if "rate_rpm_s" in x else None)


def _ramp_times(ramps, start_rpm: float) -> list:
    """(at_s, over_s, to_rpm) for speed.ramp_profile: a rate lasts |to - speed before| / rate.

    A ramp by rate to the speed it starts from changes nothing and is left out.
    """
    out, before = [], start_rpm
    for at, over, to, rate in ramps:
        if rate is not None:
            if to == before:
                continue
            over = abs(to - before) / rate
        out.append((at, over, to))
        before = to
    return out


def _last(job) -> dict:
    """A job's final reply, without its stage."""
    reply = {}
    for _, reply in job:
        pass
    return {k: v for k, v in reply.items() if k != "stage"}


def _op_simulate(request: dict) -> dict:
    return _last(_simulate_job(*_bridge()._rig(request), request))


def _simulate_job(rig, warnings, request):
    """Yields (fraction, partial reply); the last reply carries the frames."""
    sc = scenario_from_request(request, rig)
    m = model(rig)
    run = simulate_steps(rig, sc, chain_model=m)
    try:
        while True:
            yield 0.999 * next(run), {"stage": "simulate"}
    except StopIteration as stop:
        motion = stop.value
    points = [points_m(m, q, y) for q, y in zip(motion.angles_rad, motion.pivot_y_m)]
    # Every stroboscopic sample is at the same drive phase, so at the same pivot height;
    # positions here let the page draw the samples without geometry of its own.
    strobe_y = m.kinematics(sc.strobe_phase_rad)[0] if sc.strobe_phase_rad is not None else 0.0
    strobe_points = [points_m(m, q, strobe_y) for q in motion.strobe_angles_rad]
    svg, axes = motion_svg(motion, rig.title or "Link angles") if motion.t_s else (None, None)
    strobe_svg, strobe_axes = _strobe_svg(motion) if len(motion.strobe_t_s) > 1 else (None, None)
    yield 1.0, {
        "stage": "done",
        "frames": {"t_s": list(motion.t_s), "pivot_y_m": list(motion.pivot_y_m),
                   "speed_rpm": list(motion.speed_rpm), "energy_J": list(motion.energy_J),
                   "angles_rad": [list(q) for q in motion.angles_rad],
                   "x_m": [[p[0] for p in pts] for pts in points],
                   "y_m": [[p[1] for p in pts] for pts in points]},
        "frame_rate_hz": sc.frame_rate_hz, "links": rig.n_links,
        "strobe": {"t_s": list(motion.strobe_t_s), "phase_rad": sc.strobe_phase_rad,
                   "angles_rad": [list(q) for q in motion.strobe_angles_rad],
                   "rates_rad_s": [list(w) for w in motion.strobe_rates_rad_s],
                   "pivot_y_m": strobe_y,
                   "x_m": [[p[0] for p in pts] for pts in strobe_points],
                   "y_m": [[p[1] for p in pts] for pts in strobe_points]},
        "events": [{**e.as_dict(), "link": None if e.link is None else e.link + 1}
                   for e in motion.events],
        "summary": {"end_t_s": motion.end_t_s, "fell": motion.fell, "turns": list(motion.turns),
                    "success": motion.success, "message": motion.message, "work": motion.work},
        "svg": svg, "axes": axes, "strobe_svg": strobe_svg, "strobe_axes": strobe_axes,
        "report_text": motion_text(motion, rig.title),
        "warnings": _bridge()._problems(warnings), "cautions": list(CAUTIONS)}


def _strobe_svg(motion) -> tuple[str, dict]:
    """The once-per-cycle samples of each link's angle: the slow motion without the shake."""
    n = len(motion.strobe_angles_rad[0])
    series = [(f"link {i + 1}", motion.strobe_t_s,
               [math.degrees(q[i]) for q in motion.strobe_angles_rad]) for i in range(n)]
    return line_plot(series, title="Once per drive cycle", x_label="time (s)",
                     y_label="angle once per cycle (deg)", x_unit="s", y_unit="deg",
                     height_px=240, cls="strobe-plot")


def _op_loads(request: dict) -> dict:
    from .loads import loads
    rig, warnings = _bridge()._rig(request)
    r = _Reader(request)
    knock = r.field("knock_rad_s", "angular_rate", 0.0)
    cycles = request.get("cycles", 1)
    if isinstance(cycles, bool) or not isinstance(cycles, int) or not 1 <= cycles <= 1000:
        r.problems.append(Problem("cycles", f"{cycles!r} is not allowed: 1 to 1000 cycles"))
    equilibrium = request.get("equilibrium", "inverted")
    if equilibrium not in ("inverted", "hanging"):
        r.problems.append(Problem("equilibrium", f"{equilibrium!r} is not allowed: use "
                                                 "\"inverted\" or \"hanging\""))
    r.done()
    result = loads(rig, equilibrium=equilibrium, knock_rad_s=knock, cycles=cycles)
    svg, axes = loads_svg(result)
    return {"result": result, "svg": svg, "axes": axes, "report_text": loads_text(result),
            "warnings": _bridge()._problems(warnings)}


# ----------------------------------------------------------------------------- jobs


def _tolerance_job(rig, warnings, request):
    """Yields (fraction, partial reply); the last reply carries the result."""
    steps = tolerance_steps(rig)
    try:
        while True:
            yield 0.999 * next(steps), {"stage": "tolerance"}
    except StopIteration as stop:
        result = stop.value.as_dict()
    yield 1.0, {"stage": "done", "result": result, "report_text": tolerance_text(result)}


def _basin_job(rig, warnings, request):
    r = _Reader(request)
    size = request.get("size", 41)
    if isinstance(size, bool) or not isinstance(size, int) or not 3 <= size <= 401:
        r.problems.append(Problem("size", f"{size!r} is not allowed: 3 to 401 points per axis"))
    validate = request.get("validate", 16)
    if isinstance(validate, bool) or not isinstance(validate, int) or validate < 0:
        r.problems.append(Problem("validate", f"{validate!r} is not allowed: 0 or more points"))
    rate_max = r.field("rate_max_rad_s", "angular_rate", None, above=0.0)
    r.done()
    marks = {"knock_rad_s": request.get("knock_rad_s"), "release_rad": request.get("release_rad")}
    marks = {k: v for k, v in marks.items() if isinstance(v, (int, float)) and v > 0}
    for fraction, basin in basin_steps(rig, size=size, validate=min(validate, size * size),
                                       rate_max_rad_s=rate_max):
        svg, axes = basin_svg(basin, **marks)
        yield fraction, {"stage": "basin", "basin": basin.as_dict(), "svg": svg, "axes": axes}


def _fit_job(rig, warnings, request):
    from .fit_bridge import fit_job  # late: the fit is its own module, with its own op
    return fit_job(rig, warnings, request)


JOB_KINDS = {"simulate": _simulate_job, "tolerance": _tolerance_job, "basin": _basin_job,
             "fit": _fit_job}
_JOBS: dict[int, dict] = {}
_IDS = itertools.count(1)


def _op_job_start(request: dict) -> dict:
    kind = request.get("kind")
    if kind not in JOB_KINDS:
        raise RigError([Problem("kind", f"{kind!r} is not allowed: use one of "
                                        + ", ".join(sorted(JOB_KINDS)))])
    steps = JOB_KINDS[kind](*_bridge()._rig(request), request)
    job = next(_IDS)
    _JOBS[job] = {"kind": kind, "steps": steps, "last": {}, "fraction": 0.0}
    return {"job": job, "kind": kind}


def _op_job_step(request: dict) -> dict:
    job_id = request.get("job")
    job = _JOBS.get(job_id)
    if job is None:
        raise RigError([Problem("job", f"{job_id!r}: no such job (finished or cancelled)")])
    budget = min(MAX_BUDGET_MS, float(request.get("budget_ms", DEFAULT_BUDGET_MS))) / 1000.0
    start, done = time.perf_counter(), False
    try:
        while not done and time.perf_counter() - start < budget:
            job["fraction"], job["last"] = next(job["steps"])
            done = job["fraction"] >= 1.0
    except StopIteration:
        done = True
    except RigError:
        _JOBS.pop(job_id, None)
        raise
    if done:
        _JOBS.pop(job_id, None)
    return {"job": job_id, "kind": job["kind"], "done": done,
            "fraction": 1.0 if done else job["fraction"], **job["last"]}


def _op_job_cancel(request: dict) -> dict:
    job = _JOBS.pop(request.get("job"), None)
    if job is not None:
        job["steps"].close()
    return {"cancelled": job is not None}


def _op_tolerance(request: dict) -> dict:
    """The whole tolerance search (and the map with "map": true) in one call."""
    rig, warnings = _bridge()._rig(request)
    reply = _last(_tolerance_job(rig, warnings, request))
    if request.get("map"):
        result = reply["result"]
        marks = {"knock_rad_s": result["max_knock_rad_s"],
                 "release_rad": result["max_release_angle_rad"]}
        basin = _last(_basin_job(rig, warnings, {**request, **marks}))
        reply = {**reply, **basin, "report_text": tolerance_text(result, basin["basin"])}
    return {**reply, "warnings": _bridge()._problems(warnings), "cautions": list(CAUTIONS)}


OPS = {
    "simulate": _op_simulate,
    "tolerance": _op_tolerance,
    "loads": _op_loads,
    "motion_job_start": _op_job_start,
    "motion_job_step": _op_job_step,
    "motion_job_cancel": _op_job_cancel,
}
