"""Floquet stability of the inverted and hanging equilibria at one operating point.

One link: Hill's determinant (module ``hill``) after removing the viscous
damping by q = exp(-gamma t) u, gamma = c / (2 J). Several links: each sway
mode's where the modes are the chain exactly, else the chain's one-cycle
monodromy by the Taylor-series cycle in its sway-mode coordinates (``cycle``),
then its eigenvalues. Both check their own truncation at run time and say
in the result when it was not met.
"""

from __future__ import annotations

import cmath
import math
from dataclasses import dataclass, field

from ..numerics.hill import default_truncation, hill_trace, multipliers_from_trace
from ..numerics.linalg import eigvals
from ..numerics.magnus import GAUSS_NODES
from ..numerics.magnus import hill_trace as magnus_trace
from ..model.derived import Model, as_model
from ..model.rig import OutOfReach, Problem, Rig
from .cycle import (CYCLE_PHASE, DRIVE_SERIES_TOLERANCE, MAX_STEPS, chain_steps,
                    check_equilibrium, drive_nodes, modal_monodromy, operating)

UNDAMPED_TOLERANCE = 1e-9  # |rho| <= 1 + this counts as on the unit circle (undamped)
CONVERGENCE_TOLERANCE = 1e-8  # accepted change of the multipliers under refinement
# Magnus steps (sixth order) per DOP853 step (eighth) of a 2 x 2 trace: at the chart's crank
# steps one each left traces ~2e-8 to 9e-8 from solve_ivp's, 1.5 each ~1e-9 to 5e-9 (2026-12-04)
MAGNUS_STEP_RATIO = 1.5
MODAL_METHOD = "hill (sway modes)"
DECOUPLED = 1e-12  # modal damping coupling at round-off: the modes are the chain exactly
MAX_HILL_WORK = 4_000_000  # rows x band width^2 of one Hill determinant (about 2 s): a
# stroke of 1e5 pendulum lengths asked for 8,000 rows of a crank's band and half a minute


class HillTooLarge(OutOfReach):
    """Hill's determinant would exceed MAX_HILL_WORK; another exact method may still answer."""


@dataclass(frozen=True)
class Stability:
    """Floquet stability of one equilibrium at one operating point."""

    equilibrium: str
    speed_rpm: float
    stroke_m: float
    multipliers: tuple[complex, ...]
    max_multiplier: float
    stable: bool
    slow_frequency_hz: float | None  # the slowest sway mode; None when unstable
    margin: float  # < 0 stable, > 0 unstable; continuous, for root finding
    method: str  # "hill" or "monodromy"
    converged: bool = True
    error_estimate: float = 0.0
    message: str = ""
    work: dict = field(default_factory=dict, compare=False)
    sway_modes_hz: tuple[float, ...] | None = None  # one per link, ascending; None: unstable


@dataclass(frozen=True)
class Settings:
    """Numerical settings fixed for a scan, so every point is computed alike."""

    truncation: int | None = None  # Hill rows -R..R (one link)
    harmonics: int | None = None  # leading drive harmonics kept in Hill's determinant
    steps: int | None = None  # steps per cycle: a scan's Magnus cycles, or the chain's Taylor cycle
    method: str | None = None  # one link, unverified scan points: "hill" (default) or
    # "monodromy"; a verified point (verify=True) is always Hill's, which checks its truncation.
    # Several links: "modal" asks for the sway modes (Hill's determinants, or their 2 x 2
    # monodromies when ``steps`` is set) even with damping coupling the modes (a predictor
    # then); by default they are used where exact.
    # the chain's Taylor steps chosen per point when ``steps`` is not set (cycle.chain_steps)
    cycle_phase: float = CYCLE_PHASE
    drive_tolerance: float = DRIVE_SERIES_TOLERANCE

    def __post_init__(self):
        # once per scan, not per point: a zero here crashed inside Hill's determinant
        for name in ("truncation", "harmonics", "steps"):
            value = getattr(self, name)
            if value is not None and not (isinstance(value, int) and value >= 1):
                raise ValueError(f"settings.{name}: {value!r} must be a whole number of at "
                                 "least 1, or None to choose it")


def modes_decouple(model: Rig | Model) -> bool:
    """True where the sway modes are the chain exactly: no damping, or damping whose modal
    coupling is at round-off (Acheson 1993); then each mode's Hill determinant is exact."""
    m = as_model(model)
    return not m.damped or m.modes.coupling <= DECOUPLED


def _summarise(m: Model, equilibrium: str, rhos, margin: float, method: str, **extra):
    rig = m.rig
    biggest = max(rhos, key=abs)
    max_mult = abs(biggest)
    if m.damped:
        stable = margin < 0
    else:
        stable = margin < 0 or max_mult <= 1.0 + UNDAMPED_TOLERANCE
    sway = sway_frequencies_hz(rhos, rig.drive.frequency_hz) if stable else None
    return Stability(equilibrium, rig.drive.speed_rpm, rig.drive.stroke_m, tuple(rhos),
                     max_mult, stable, sway[0] if sway else None, margin, method, **extra,
                     sway_modes_hz=sway)


def sway_frequencies_hz(rhos, frequency_hz: float) -> tuple[float, ...]:
    """One slow sway frequency per mode, ascending: nu f with nu = |arg rho| / (2 pi).

    The 2N multipliers come in N pairs of equal |arg| (conjugates, or two real ones of one
    sign near an edge with damping), so every other one of the sorted angles is a mode.
    """
    nus = sorted(abs(cmath.phase(r)) / (2 * math.pi) for r in rhos)
    return tuple(nu * frequency_hz for nu in nus[::2])


# ----------------------------------------------------------------------------- one link


@dataclass(frozen=True)
class HillForm:
    """u'' + (theta0 + sum theta_n e^{2inz}) u = 0, z = omega t / 2, and q = e^{-gamma t} u."""

    theta0: float
    theta: tuple[complex, ...]
    decay: float  # exp(-gamma T) over one cycle
    gamma_T: float


def hill_form(model: Rig | Model, equilibrium: str, harmonics: int | None = None) -> HillForm:
    """Map the single link's linear equation to Hill's form at the rig's operating point."""
    m = as_model(model)
    lin = m.of(equilibrium).linear
    return _hill_form_of(m, lin.M[0][0], lin.D[0][0], lin.K[0][0], harmonics)


def mode_forms(model: Rig | Model, equilibrium: str,
               harmonics: int | None = None) -> tuple[HillForm, ...]:
    """Each sway mode's Hill form: z'' + c_i z' + (g + y_p'') (-/+ 1 / L_i) z = 0 in the
    modal coordinates of ``model.modes`` (X^T M X = I), the sign of K's about the
    equilibrium (negative upright). The chain's damping enters by its modal diagonal only."""
    m = as_model(model)
    sign = -1.0 if equilibrium == "inverted" else 1.0
    return tuple(_hill_form_of(m, 1.0, c, sign / length, harmonics)
                 for length, c in zip(m.modes.lengths_m, m.modes.damping))


def _hill_form_of(m: Model, J: float, c: float, k: float, harmonics: int | None) -> HillForm:
    """J q'' + c q' + k (g + y_p'') q = 0 in Hill's form."""
    rig = m.rig
    omega = 2 * math.pi * rig.drive.frequency_hz
    gamma = c / (2 * J)
    h = m.harmonics
    theta0 = 4.0 / omega ** 2 * (k / J * rig.g_m_s2 - gamma * gamma)
    theta = tuple(2.0 * k / J * complex(a, -b) for a, b in zip(h.cos_m, h.sin_m))[:harmonics]
    if all(t.imag == 0.0 for t in theta):
        theta = tuple(t.real for t in theta)
    gamma_T = gamma / rig.drive.frequency_hz
    return HillForm(theta0, theta, math.exp(-gamma_T), gamma_T)


def _hill_stability(m: Model, equilibrium: str, settings: Settings, verify: bool, *,
                    modal: bool = False) -> Stability:
    """One link by its Hill determinant, or several by each sway mode's (``modal``)."""
    forms = (mode_forms(m, equilibrium, settings.harmonics) if modal else
             (hill_form(m, equilibrium, settings.harmonics),))
    margins, rhos, rows = [], [], 0
    error, converged, message = 0.0, True, ""
    for form in forms:
        R = max(settings.truncation or default_truncation(form.theta0, form.theta),
                len(form.theta))
        if (2 * R + 1) * (2 * len(form.theta) + 1) ** 2 > MAX_HILL_WORK:
            raise HillTooLarge([Problem("drive.stroke_m", "outside what this method can resolve: "
                                      f"Hill's determinant would need {R} rows at a stroke of "
                                      f"{m.rig.drive.stroke_m:g} m, "
                                      f"{m.rig.drive.stroke_m / m.properties.l_eq_m:.3g} times "
                                      "the pendulum's equivalent length")])
        trace = hill_trace(form.theta0, form.theta, R)
        if verify:
            finer = hill_trace(form.theta0, form.theta, R + max(4, R // 2))
            change = abs(finer - trace)
            error = max(error, change)
            if change > CONVERGENCE_TOLERANCE * max(1.0, abs(trace)) and converged:
                converged = False
                message = (f"Hill determinant not converged at {R} rows: the trace changed "
                           f"by {change:.2g} when refined")
            trace = finer
        margins.append(abs(trace) - 2.0 * math.cosh(form.gamma_T))
        rhos.extend(multipliers_from_trace(trace, form.decay))
        rows = max(rows, R)
    return _summarise(m, equilibrium, rhos, max(margins), MODAL_METHOD if modal else "hill",
                      converged=converged, error_estimate=error, message=message,
                      work={"truncation": rows, "harmonics": len(forms[0].theta)})


def _rk_trace_stability(m: Model, equilibrium: str, settings: Settings, *,
                        modal: bool) -> Stability:
    """One link (or each sway mode, ``modal``) by the trace of its 2 x 2 monodromy, judged
    like Hill's trace (same margin), for scans of drives with many harmonics, where a fixed
    cycle is cheaper than the band LU. The damping is taken out (u = exp(gamma t) q) and the
    cycle of u'' + (kappa G(t) - gamma^2) u = 0 is the sixth-order Magnus step (``magnus``),
    MAGNUS_STEP_RATIO of them per RK step: traces to ~1e-9 (the chart's crank rows), in a
    third of DOP853's time (tests/test_magnus.py holds them to solve_ivp)."""
    n = settings.steps  # a scan's RK steps (lines.scan_settings), the same at every point
    steps = math.ceil(MAGNUS_STEP_RATIO * n)
    if modal:
        sign = -1.0 if equilibrium == "inverted" else 1.0
        forms = [(sign / length, c) for length, c in zip(m.modes.lengths_m, m.modes.damping)]
    else:
        lin = m.of(equilibrium).linear
        forms = [(lin.K[0][0] / lin.M[0][0], lin.D[0][0] / lin.M[0][0])]
    accel, w2, g = drive_nodes(m.rig, steps, GAUSS_NODES)
    period = 1.0 / m.rig.drive.frequency_hz
    margins, rhos = [], []
    for kappa, c in forms:
        gamma = 0.5 * c  # p = kappa (g + w2 a) - gamma^2
        trace = magnus_trace(accel, period, steps, scale=kappa * w2,
                             offset=kappa * g - gamma * gamma)
        gamma_T = gamma * period
        margins.append(abs(trace) - 2.0 * math.cosh(gamma_T))
        rhos.extend(multipliers_from_trace(trace, math.exp(-gamma_T)))
    return _summarise(m, equilibrium, rhos, max(margins), MODAL_METHOD if modal else "monodromy",
                      work={"steps": n})


# ----------------------------------------------------------------------------- several links


def _multi_margin(m: Model, rhos) -> float:
    biggest = max(abs(r) for r in rhos)
    if not math.isfinite(biggest) or biggest == 0:
        return math.inf if not math.isfinite(biggest) else -math.inf
    tol = 0.0 if m.damped else UNDAMPED_TOLERANCE
    return math.log(biggest) - tol


def _chain_stability(m: Model, equilibrium: str, settings: Settings, verify: bool) -> Stability:
    """Several links coupled by their dampers: the chain's monodromy, then its eigenvalues."""
    n = settings.steps or chain_steps(m, equilibrium, cycle_phase=settings.cycle_phase,
                                      drive_tolerance=settings.drive_tolerance)
    rhos = eigvals(modal_monodromy(m, equilibrium, n))
    error, converged, message = 0.0, True, ""
    if verify:
        finer_n = min(MAX_STEPS * 2, n + max(8, n // 2))
        finer = eigvals(modal_monodromy(m, equilibrium, finer_n))
        error = _set_distance(rhos, finer)
        scale = max(1.0, max(abs(r) for r in finer))
        converged = error <= CONVERGENCE_TOLERANCE * scale
        if not converged:
            message = (f"monodromy not converged at {n} steps per cycle: the multipliers "
                       f"moved by {error:.2g} when refined")
        rhos, n = finer, finer_n
    return _summarise(m, equilibrium, rhos, _multi_margin(m, rhos), "monodromy",
                      converged=converged, error_estimate=error, message=message,
                      work={"steps": n})


def _set_distance(a, b) -> float:
    """Largest distance from a multiplier in ``a`` to its nearest in ``b``."""
    return max(min(abs(x - y) for y in b) for x in a)


# ----------------------------------------------------------------------------- entry point


def stability(rig: Rig | Model, equilibrium: str, speed_rpm: float | None = None,
              stroke_m: float | None = None, *, settings: Settings | None = None,
              verify: bool = True) -> Stability:
    """Floquet multipliers and verdict for ``equilibrium`` ("inverted" or "hanging").

    Parameters
    ----------
    speed_rpm, stroke_m : float, optional
        Evaluate at another operating point than the rig's own.
    settings : Settings, optional
        Fixed truncation / steps (scans fix them once for every point).
    verify : bool
        Refine once and report the change as ``error_estimate`` / ``converged``.
    """
    check_equilibrium(equilibrium)
    m = operating(as_model(rig), speed_rpm, stroke_m)
    rig = m.rig
    settings = settings or Settings()
    if settings.method not in (None, "hill", "monodromy", "modal"):
        raise ValueError(f"settings.method: {settings.method!r} is not 'hill', 'monodromy' "
                         "or 'modal'")
    try:
        if settings.method in ("monodromy", "modal") and settings.steps and not verify and \
                (rig.n_links == 1 or settings.method == "modal"):
            return _rk_trace_stability(m, equilibrium, settings, modal=rig.n_links > 1)
        if rig.n_links == 1:
            return _hill_stability(m, equilibrium, settings, verify)
        if settings.method == "modal":
            return _hill_stability(m, equilibrium, settings, verify, modal=True)
        if settings.method is None and modes_decouple(m):
            try:
                return _hill_stability(m, equilibrium, settings, verify, modal=True)
            except HillTooLarge:  # a crank near its dead point: the modes' band is too wide,
                pass  # the chain's RK monodromy (the modes' own choice) still answers
        return _chain_stability(m, equilibrium, settings, verify)
    except ArithmeticError as exc:  # eigenvalues that did not converge, an overflow
        raise OutOfReach([Problem("links", f"outside what this method can resolve at "
                                           f"{rig.drive.speed_rpm:g} rpm and a stroke of "
                                           f"{rig.drive.stroke_m:g} m: {exc}")]) from None
