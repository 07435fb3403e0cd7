"""Fitting rig numbers to angles logged on the real rig.

Chosen numbers of the rig file (each link's joint damping, joint friction or
extra inertia) and the run's initial angles and rates are adjusted so that
the full nonlinear simulation (``motion.simulate``, with the logged drive
speed when there is one) matches the logged angles in least squares. The
method is Levenberg-Marquardt with Marquardt's diagonal scaling and
Nielsen's damping update (K. Madsen, H. B. Nielsen, O. Tingleff, Methods for
Non-Linear Least Squares Problems, 2nd ed., 2004, algorithm 3.16), on a
forward-difference Jacobian; physical numbers stay at or above zero.
Standard errors come from the Gauss-Newton covariance s^2 (J^T J)^-1.

``fit_steps`` yields progress after each simulation, so a page can show it
and cancel by dropping the generator; ``fit`` runs it to the end.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field, replace
from typing import Iterator, Sequence

from ..numerics.linalg import inverse
from ..model.linear import linearise
from .logfile import AngleLog
from ..motion.scenario import Scenario
from ..motion.simulation import simulate
from ..model.rig import Rig
from ..motion.speed import MAX_KNOTS, table_profile

FITTABLE = ("joint_damping_N_m_s", "joint_friction_N_m", "extra_inertia_kg_m2")
SHORT_NAMES = {"damping": "joint_damping_N_m_s", "friction": "joint_friction_N_m",
               "inertia": "extra_inertia_kg_m2"}
_PATH = re.compile(r"^links\[(\d+)\]\.(\w+)$")
SIM_TOL = 1e-10  # simulation tolerance: differences of 1e-5 in a parameter stay resolvable
FD_STEP = 1e-5  # forward-difference step, relative to max(1, |scaled value|)
MAX_ITERATIONS = 30
GRADIENT_TOL = 1e-8  # stop when the scaled gradient is this small against the cost
STEP_TOL = 1e-7  # stop when a step changes the scaled numbers by less than this (relative)
MIN_SWING_RAD = 1e-4  # a log moving less than this (0.006 deg) shows no dynamics to fit
COST_TOL = 1e-10  # stop when an accepted step lowers the cost by less than this (relative)


@dataclass(frozen=True)
class FitResult:
    """Fitted numbers with standard errors, and the run they describe."""

    parameters: tuple[str, ...]  # JSON paths into the rig file
    start: tuple[float, ...]
    values: tuple[float, ...]
    std_errors: tuple[float, ...]  # nan where the log does not determine the number
    initial_angles_rad: tuple[float, ...]
    initial_rates_rad_s: tuple[float, ...]
    rms_start_rad: float
    rms_rad: float
    t_s: tuple[float, ...]
    measured_rad: tuple[tuple[float, ...], ...]
    model_rad: tuple[tuple[float, ...], ...]
    rig: Rig
    converged: bool
    message: str
    iterations: int
    work: dict = field(default_factory=dict, compare=False)
    skipped_columns: tuple[str, ...] = ()  # the log's columns the fit did not read


def parameter_paths(rig: Rig, names: Sequence[str]) -> tuple[str, ...]:
    """JSON paths of the numbers to fit: "links[0].joint_damping_N_m_s", or a short
    name ("damping", "friction", "inertia") meaning that number of every link."""
    paths: list[str] = []
    for name in names:
        if name in SHORT_NAMES:
            paths += [f"links[{i}].{SHORT_NAMES[name]}" for i in range(rig.n_links)]
            continue
        m = _PATH.match(name)
        if not m or m.group(2) not in FITTABLE or int(m.group(1)) >= rig.n_links:
            raise ValueError(f"parameters: {name!r} is not allowed: use damping, friction, "
                             f"inertia, or links[i].<{ ' | '.join(FITTABLE)}> with i from 0 to "
                             f"{rig.n_links - 1}")
        paths.append(name)
    if not paths or len(set(paths)) != len(paths):
        raise ValueError(f"parameters: {list(names)!r} is not allowed: name each number once")
    return tuple(paths)


def _get(rig: Rig, path: str) -> float:
    m = _PATH.match(path)
    return getattr(rig.links[int(m.group(1))], m.group(2))


def with_values(rig: Rig, paths: Sequence[str], values: Sequence[float]) -> Rig:
    """The rig with the numbers at ``paths`` replaced."""
    links = list(rig.links)
    for path, value in zip(paths, values):
        m = _PATH.match(path)
        i = int(m.group(1))
        links[i] = replace(links[i], **{m.group(2): float(value)})
    return replace(rig, links=tuple(links))


def _scales(rig: Rig, paths) -> list[float]:
    """A natural size for each number from the hanging rig's linear model: 1% of critical
    damping, the gravity torque at 0.01 rad, 1% of the joint's inertia."""
    lin = linearise(rig, "hanging")
    out = []
    for path in paths:
        i = int(_PATH.match(path).group(1))
        inertia, stiff = lin.M[i][i], rig.g_m_s2 * lin.K[i][i]
        name = _PATH.match(path).group(2)
        natural = {"joint_damping_N_m_s": 0.02 * math.sqrt(inertia * abs(stiff)),
                   "joint_friction_N_m": 0.01 * abs(stiff),
                   "extra_inertia_kg_m2": 0.01 * inertia}[name]
        out.append(max(natural, abs(_get(rig, path)) * 0.1, 1e-12))
    return out


def _initial_rates(log: AngleLog) -> list[float]:
    """Rates at the first sample from a second-order one-sided difference."""
    q, h = log.angles_rad, log.step_s
    return [(-3 * q[0][j] + 4 * q[1][j] - q[2][j]) / (2 * h) for j in range(len(q[0]))]


def _profile(log: AngleLog):
    if log.speed_rpm is None:
        return None
    every = max(1, math.ceil(len(log.t_s) / MAX_KNOTS))
    ts, vs = log.t_s[::every], log.speed_rpm[::every]
    return table_profile(ts, vs, where="log.speed")


class _Model:
    """Residuals of the logged angles for a vector (scaled numbers, initial angles, rates)."""

    def __init__(self, rig: Rig, log: AngleLog, paths, scales):
        self.rig, self.log, self.paths, self.scales = rig, log, paths, scales
        self.profile = _profile(log)
        self.n = rig.n_links
        self.runs = 0

    def unpack(self, x):
        k = len(self.paths)
        values = [max(0.0, v) * s for v, s in zip(x[:k], self.scales)]
        return values, x[k:k + self.n], x[k + self.n:]

    def angles(self, x) -> list[list[float]]:
        values, q0, w0 = self.unpack(x)
        rig = with_values(self.rig, self.paths, values)
        log = self.log
        duration = log.t_s[-1] + 0.5 * log.step_s
        sc = Scenario(duration_s=duration, angles_rad=tuple(q0), rates_rad_s=tuple(w0),
                      profile=self.profile, frame_rate_hz=1.0 / log.step_s,
                      strobe_phase_rad=None, reference=log.reference, rtol=SIM_TOL,
                      atol=SIM_TOL)
        self.runs += 1
        run = simulate(rig, sc)
        if not run.success or len(run.t_s) < len(log.t_s):
            return None
        out = []
        for t in log.t_s:
            # frames are at k * step; a sample a little off the grid is read between two
            k = min(int(t / log.step_s), len(run.t_s) - 2)
            f = (t - run.t_s[k]) / (run.t_s[k + 1] - run.t_s[k])
            a, b = run.angles_rad[k], run.angles_rad[k + 1]
            out.append([p + f * (r - p) for p, r in zip(a, b)])
        return out

    def residuals(self, x):
        model = self.angles(x)
        if model is None:
            return None
        return [m - q for mrow, qrow in zip(model, self.log.angles_rad)
                for m, q in zip(mrow, qrow)]


def _cost(r) -> float:
    return 0.5 * math.fsum(v * v for v in r)


def fit_steps(rig: Rig, log: AngleLog, parameters: Sequence[str], *,
              max_iterations: int = MAX_ITERATIONS) -> Iterator[tuple[float, str]]:
    """Yield (fraction done, words) after each simulation; return the FitResult.

    Raises ValueError naming the argument on misuse (unknown parameter, a log of
    another link count).
    """
    paths = parameter_paths(rig, parameters)
    if len(log.angles_rad[0]) != rig.n_links:
        raise ValueError(f"log: it has {len(log.angles_rad[0])} angle column(s) and the rig "
                         f"{rig.n_links} link(s)")
    if not 1 <= max_iterations <= 200:
        raise ValueError(f"max_iterations: {max_iterations!r} must be from 1 to 200")
    swing = max(max(q[i] for q in log.angles_rad) - min(q[i] for q in log.angles_rad)
                for i in range(rig.n_links))
    if swing < MIN_SWING_RAD:
        raise ValueError(f"log: the logged angles move by {math.degrees(swing):.2g} deg at most: "
                         "a log with no motion cannot tell damping, friction or inertia")
    scales = _scales(rig, paths)
    model = _Model(rig, log, paths, scales)
    start = [_get(rig, p) for p in paths]
    x = [v / s for v, s in zip(start, scales)] + list(log.angles_rad[0]) + _initial_rates(log)
    k = len(paths)
    p = len(x)
    total = (max_iterations + 1) * (p + 1)

    def progress(words):
        return min(0.99, model.runs / total), words

    r = model.residuals(x)
    yield progress("the first run")
    if r is None:
        raise ValueError("log: the model cannot follow this log from its first samples (the "
                         "simulation failed); check the reference position and the units")
    cost = cost_start = _cost(r)
    lam, nu = None, 2.0
    converged, message, iteration = False, "", 0
    jac = None
    for iteration in range(1, max_iterations + 1):
        jac = []  # columns
        for j in range(p):
            h = FD_STEP * max(1.0, abs(x[j]))
            xj = list(x)
            xj[j] += h
            rj = model.residuals(xj)
            yield progress(f"iteration {iteration}: sensitivity {j + 1} of {p}")
            if rj is None:
                rj = r
            jac.append([(a - b) / h for a, b in zip(rj, r)])
        A = [[math.fsum(a * b for a, b in zip(ci, cj)) for cj in jac] for ci in jac]
        g = [math.fsum(a * b for a, b in zip(ci, r)) for ci in jac]
        # the residual is (nearly) orthogonal to every column of the Jacobian
        if max(abs(v) for v in g) <= GRADIENT_TOL * math.sqrt(2 * cost * max(
                A[i][i] for i in range(p))):
            converged, message = True, "the gradient vanished"
            break
        if lam is None:
            lam = 1e-3 * max(A[i][i] for i in range(p))
        while True:
            M = [[A[i][j] + (lam * max(A[i][i], 1e-300) if i == j else 0.0) for j in range(p)]
                 for i in range(p)]
            try:
                inv = inverse(M)
            except ValueError:
                lam *= nu
                nu *= 2
                continue
            step = [-math.fsum(a * b for a, b in zip(row, g)) for row in inv]
            trial = [xi + si for xi, si in zip(x, step)]
            for j in range(k):
                trial[j] = max(0.0, trial[j])
            step = [t - xi for t, xi in zip(trial, x)]
            small = math.sqrt(sum(s * s for s in step)) <= STEP_TOL * (
                math.sqrt(sum(xi * xi for xi in x)) + STEP_TOL)
            r_new = model.residuals(trial)
            yield progress(f"iteration {iteration}: trying a step")
            cost_new = _cost(r_new) if r_new is not None else math.inf
            predicted = 0.5 * math.fsum(s * (lam * max(A[i][i], 1e-300) * s - gi)
                                        for i, (s, gi) in enumerate(zip(step, g)))
            gain = (cost - cost_new) / predicted if predicted > 0 else -1.0
            if gain > 0:
                done = cost - cost_new <= COST_TOL * cost or small
                x, r, cost = trial, r_new, cost_new
                lam *= max(1.0 / 3.0, 1.0 - (2.0 * gain - 1.0) ** 3)
                nu = 2.0
                if done:
                    converged = True
                    message = "the last step changed the fit by less than its tolerance"
                break
            if small:
                converged, message = True, "no smaller step lowers the misfit"
                break
            lam *= nu
            nu *= 2.0
            if lam > 1e16:
                message = "the damping of the steps grew without a better fit"
                break
        if converged or message:
            break
    else:
        message = f"stopped after {max_iterations} iterations before the fit settled"
    values, q0, w0 = model.unpack(x)
    errors = _std_errors(jac, r, scales + [1.0] * (p - k), p) if jac else [math.nan] * p
    unknown = [path for path, e in zip(paths, errors) if not math.isfinite(e)]
    at_bound = [path for path, v, e in zip(paths, values, errors)
                if v == 0.0 and math.isfinite(e) and e > 0.0]
    if converged and unknown:
        converged = False
        message = (f"the log does not determine {', '.join(unknown)} (the fit's normal matrix "
                   "is singular): fit fewer numbers or log a run that shows them")
    elif converged and at_bound:
        converged = False
        message = (f"{', '.join(at_bound)} settled at its bound 0: the log does not show it; "
                   "leave it out of the fit")
    fitted = with_values(rig, paths, values)
    model_angles = model.angles(x)
    m = len(r)
    yield 1.0, "done"
    return FitResult(paths, tuple(start), tuple(values), tuple(errors[:k]), tuple(q0),
                     tuple(w0), math.sqrt(2 * cost_start / m), math.sqrt(2 * cost / m),
                     log.t_s, log.angles_rad, tuple(tuple(a) for a in model_angles), fitted,
                     converged, message, iteration, {"simulations": model.runs},
                     log.skipped_columns)


def _std_errors(jac, r, scales, p) -> list[float]:
    """sqrt of the diagonal of s^2 (J^T J)^-1, in the numbers' own units."""
    m = len(r)
    if m <= p:
        return [math.nan] * p
    A = [[math.fsum(a * b for a, b in zip(ci, cj)) for cj in jac] for ci in jac]
    try:
        cov = inverse(A)
    except ValueError:
        return [math.nan] * p
    s2 = math.fsum(v * v for v in r) / (m - p)
    return [math.sqrt(cov[i][i] * s2) * scales[i] if cov[i][i] >= 0 else math.nan
            for i in range(p)]


def fit(rig: Rig, log: AngleLog, parameters: Sequence[str], **options) -> FitResult:
    """The complete fit (see ``fit_steps``)."""
    run = fit_steps(rig, log, parameters, **options)
    while True:
        try:
            next(run)
        except StopIteration as stop:
            return stop.value


def fit_dict(res: FitResult) -> dict:
    """Plain data for JSON (the reply of ``shakestill fit --json``), without the samples."""
    return {
        "parameters": [{"path": p, "start": s, "value": v, "std_error": e}
                       for p, s, v, e in zip(res.parameters, res.start, res.values,
                                             res.std_errors)],
        "initial_angles_rad": list(res.initial_angles_rad),
        "initial_rates_rad_s": list(res.initial_rates_rad_s),
        "rms_start_rad": res.rms_start_rad,
        "rms_rad": res.rms_rad,
        "samples": len(res.t_s),
        "converged": res.converged,
        "message": res.message,
        "iterations": res.iterations,
        "simulations": res.work.get("simulations", 0),
        "skipped_columns": list(res.skipped_columns),
    }
