"""Loads over a drive cycle: the force and power the drive must supply, link loads, rotation.

Newton for the whole pendulum (and for the part beyond each joint): the
force a joint passes on is the mass-weighted acceleration of what lies beyond
it plus its weight, less the air drag on it. With a_i the first moment each
angle carries (``linear.chain``) and u_i = (sin q_i, cos q_i),

    M_i r_com_i = M_i P_i + sum_{k >= i} a_k u_k     (links i and beyond),

so the pivot's reaction on the pendulum is R = M (g + y_p'') y_hat +
sum_i a_i u_i'' - F_drag and the drive force is R_y + m_carriage (g + y_p'').
The axial load in link i is the force at its joint along u_i (positive:
compression, as when it is held up inverted).

With the drive off vertical the pivot also accelerates sideways by x_p'', which adds
M x_p'' to R_x; the carriage (moving with the pivot) needs m_carriage (x_p'', g + y_p'').
Their sum F is split along the drive axis e = (sin a, cos a), the drive force F . e,
and across it, n = (cos a, -sin a): the sideways force the guide takes, F . n
(positive towards positive link angles). The power is F . v_pivot.
"""

from __future__ import annotations

import math
import sys
from dataclasses import replace

from ..model import drive as drv
from .dynamics import Model, Segment, accelerations, drag_forces, model, pivot_at, pivot_side_at
from .scenario import REFERENCES, Scenario
from .orbit import held_orbit
from .simulation import simulate
from ..model.safety import CAUTIONS
from ..model.rig import Rig
from .speed import RAD_S_PER_RPM
from .tolerance import run_seconds

POINTS_PER_CYCLE = 256  # samples per drive cycle: the crank's harmonics are resolved
ROTATION_TAIL_S = 1.0  # a link that turns fully in the last second of settling is rotating
MAX_CYCLES = 1000  # cycles averaged at most


def _stats(values) -> dict:
    n = len(values)
    peak = max(abs(v) for v in values)
    mean = math.fsum(values) / n
    if abs(mean) <= n * sys.float_info.epsilon * peak:  # within the samples' rounding: none
        mean = 0.0
    return {"peak": peak, "rms": math.sqrt(sum(v * v for v in values) / n),
            "mean": mean, "min": min(values), "max": max(values)}


def _second_derivative(q, w, qdd):
    """d^2/dt^2 of u(q) = (sin q, cos q)."""
    s, c = math.sin(q), math.cos(q)
    return c * qdd - s * w * w, -s * qdd - c * w * w


def cycle_forces(m: Model, seg: Segment, t: float, y, mode, carriage_kg: float,
                 axis_tilt_rad: float = 0.0) -> dict:
    """Forces at one instant of a motion (SI): drive force, reaction, axial loads, power,
    and off vertical the guide's sideways force (module docstring)."""
    n = m.n
    q, w = y[:n], y[n:]
    qdd = accelerations(m, seg, mode, t, y)[0]
    _, v_piv, a_piv = pivot_at(m, seg, t)
    _, vx_piv, ax_piv = pivot_side_at(m, seg, t)
    udd = [_second_derivative(q[k], w[k], qdd[k]) for k in range(n)]
    drag = drag_forces(m, q, w, v_piv, vx_piv) if m.drag else []
    axial, joint = [], []
    for i in range(n):
        beyond = sum(m.masses[i:])
        # M_i times joint i's acceleration and weight, plus sum_{k >= i} a_k u_k'' (the
        # masses beyond link k lie beyond joint i too, so a_k is the same seen from i)
        ax = beyond * sum(m.lengths[j] * udd[j][0] for j in range(i))
        if m.planar is not None:
            ax += beyond * ax_piv
        ay = beyond * (m.g + a_piv + sum(m.lengths[j] * udd[j][1] for j in range(i)))
        ax += sum(m.a[k] * udd[k][0] for k in range(i, n))
        ay += sum(m.a[k] * udd[k][1] for k in range(i, n))
        ax -= sum(fx for link, _, fx, _ in drag if link >= i)
        ay -= sum(fy for link, _, _, fy in drag if link >= i)
        joint.append((ax, ay))
        axial.append(ax * math.sin(q[i]) + ay * math.cos(q[i]))
    reaction = joint[0]
    force = reaction[1] + carriage_kg * (m.g + a_piv)
    extra = {}
    if m.planar is not None:  # split the pivot's whole force along and across the axis
        fx, fy = reaction[0] + carriage_kg * ax_piv, force
        sa, ca = math.sin(axis_tilt_rad), math.cos(axis_tilt_rad)
        force = fx * sa + fy * ca
        extra = {"guide_force_N": fx * ca - fy * sa, "power_W": fx * vx_piv + fy * v_piv}
    centripetal = math.hypot(sum(m.a[k] * w[k] ** 2 * math.sin(q[k]) for k in range(n)),
                             sum(m.a[k] * w[k] ** 2 * math.cos(q[k]) for k in range(n)))
    tip_vx = vx_piv + sum(m.lengths[k] * math.cos(q[k]) * w[k] for k in range(n))
    tip_vy = v_piv - sum(m.lengths[k] * math.sin(q[k]) * w[k] for k in range(n))
    return {"drive_force_N": force, "reaction_N": reaction, "axial_N": axial,
            "power_W": force * v_piv, "centripetal_N": centripetal,
            "tip_speed_m_s": math.hypot(tip_vx, tip_vy), "pivot_accel_m_s2": a_piv, **extra}


def loads(rig: Rig, *, equilibrium: str = "inverted", knock_rad_s: float = 0.0,
          angles_rad=None, rates_rad_s=None, settle_s: float | None = None, cycles: int = 1,
          points_per_cycle: int = POINTS_PER_CYCLE) -> dict:
    """Loads over ``cycles`` drive cycles at the operating point, after ``settle_s``.

    The default is the pendulum at rest in ``equilibrium`` (an exact periodic motion: no
    settling needed). A knock (first link, rad/s) or a given start runs max(10 s, 20 slow
    periods) first, so the window shows where the motion went: back to rest, a swing, or a
    rotation.
    """
    if equilibrium not in REFERENCES:
        raise ValueError(f"equilibrium: {equilibrium!r} is not one of {tuple(REFERENCES)}")
    if not (isinstance(cycles, int) and 1 <= cycles <= MAX_CYCLES):
        raise ValueError(f"cycles: {cycles!r} must be a whole number from 1 to {MAX_CYCLES}")
    if not (isinstance(points_per_cycle, int) and 8 <= points_per_cycle <= 4096):
        raise ValueError(f"points_per_cycle: {points_per_cycle!r} must be from 8 to 4096")
    n, f = rig.n_links, rig.drive.frequency_hz
    disturbed = knock_rad_s != 0 or angles_rad is not None or rates_rad_s is not None
    angles = tuple(angles_rad) if angles_rad is not None else (REFERENCES[equilibrium],) * n
    rates = tuple(rates_rad_s) if rates_rad_s is not None else (0.0,) * n
    held = _held_start(rig, equilibrium, angles_rad is None and rates_rad_s is None)
    if held:  # off vertical the periodic motion at rest is the held orbit, not the position
        angles, rates = held[:n], held[n:]
    elif held is not None and not disturbed:
        disturbed = True  # no held orbit: show where the motion goes from the position
    rates = (rates[0] + knock_rad_s,) + rates[1:]
    if settle_s is None:
        settle_s = run_seconds(rig) if disturbed else 0.0
    settle_cycles = math.ceil(settle_s * f - 1e-9)
    tail = min(settle_cycles, math.ceil(ROTATION_TAIL_S * f))  # rotating at the end?
    head = settle_cycles - tail
    m = model(rig)
    events, ok, message = [], True, ""
    if head:  # settle without frames, then carry on from where it got to (phase 0 again)
        first = simulate(rig, Scenario(duration_s=head / f, angles_rad=angles, rates_rad_s=rates,
                                       frame_rate_hz=0.0, strobe_phase_rad=None,
                                       reference=equilibrium), chain_model=m)
        angles, rates = first.end_state[:n], first.end_state[n:]
        events, ok, message = list(first.events), first.success, first.message
    motion = simulate(rig, Scenario(duration_s=(tail + cycles) / f, angles_rad=angles,
                                    rates_rad_s=rates, frame_rate_hz=points_per_cycle * f,
                                    strobe_phase_rad=None, reference=equilibrium), chain_model=m)
    events += [replace(e, t_s=e.t_s + head / f) for e in motion.events]
    seg = Segment(0.0, 0.0, rig.drive.speed_rpm * RAD_S_PER_RPM)
    first_frame = tail * points_per_cycle
    window = range(first_frame, min(first_frame + cycles * points_per_cycle, len(motion.t_s)))
    tilt = math.radians(rig.drive.axis_tilt_deg)
    rows = [cycle_forces(m, seg, motion.t_s[k], motion.angles_rad[k] + motion.rates_rad_s[k],
                         motion.modes[k], rig.drive.carriage_mass_kg, tilt) for k in window]
    force = [r["drive_force_N"] for r in rows]
    power = [r["power_W"] for r in rows]
    axial = [[r["axial_N"][i] for r in rows] for i in range(n)]
    rotating = any(t >= 1.0 for t in motion.turns)
    peak_accel = drv.peak_accel_m_s2(rig.drive)
    result = {
        "speed_rpm": rig.drive.speed_rpm, "stroke_m": rig.drive.stroke_m,
        "frequency_hz": f, "equilibrium": equilibrium,
        "state": "rotating" if rotating else ("moving" if disturbed else
                                              "held orbit" if held else "at rest"),
        "settle_s": settle_cycles / f, "cycles": cycles,
        "total_mass_kg": m.total_mass, "carriage_mass_kg": rig.drive.carriage_mass_kg,
        "weight_N": (m.total_mass + rig.drive.carriage_mass_kg) * rig.g_m_s2,
        "drive_force_N": _stats(force),
        "pivot_reaction_N": {"vertical": _stats([r["reaction_N"][1] for r in rows]),
                             "horizontal": _stats([r["reaction_N"][0] for r in rows])},
        "power_W": _stats(power),
        "peak_accel_m_s2": peak_accel,
        "links": [{"link": i + 1, "max_compression_N": max(0.0, max(axial[i])),
                   "max_tension_N": max(0.0, -min(axial[i]))} for i in range(n)],
        "rotation": None,
        "events": [e.as_dict() for e in events],
        "samples": {"phase_rad": [2 * math.pi * (k - first_frame) / points_per_cycle
                                  for k in window],
                    "drive_force_N": force, "power_W": power, "axial_N": axial},
        "success": ok and motion.success, "message": message or motion.message,
    }
    if rotating:
        result["rotation"] = {"turns": list(motion.turns),
                              "tip_speed_m_s": max(r["tip_speed_m_s"] for r in rows),
                              "centripetal_load_N": max(r["centripetal_N"] for r in rows)}
    if m.planar is not None:
        guide = [r["guide_force_N"] for r in rows]
        result["guide_force_N"] = _stats(guide)
        result["samples"]["guide_force_N"] = guide
        result["axis_tilt_deg"] = rig.drive.axis_tilt_deg
    result["flags"] = _flags(rig, result["drive_force_N"]["peak"], result["power_W"]["peak"],
                             peak_accel)
    result["cautions"] = list(CAUTIONS)
    return result


def _held_start(rig: Rig, equilibrium: str, at_rest: bool):
    """The held orbit's state at phase 0 for a drive off vertical started at rest; () when
    it has none; None for a vertical drive or a given start."""
    if not rig.drive.off_vertical or not at_rest:
        return None
    orbit = held_orbit(rig, equilibrium)
    return orbit.start if orbit.found else ()


def _flags(rig: Rig, force: float, power: float, accel: float) -> list[dict]:
    out = []
    for key, value, unit, what in (("max_force_N", force, "N", "peak drive force"),
                                   ("max_power_W", power, "W", "peak drive power"),
                                   ("max_accel_m_s2", accel, "m/s^2", "peak pivot acceleration")):
        limit = getattr(rig.limits, key)
        if limit is None:
            continue
        over = value > limit
        out.append({"limit": key, "limit_value": limit, "value": value, "exceeded": over,
                    "margin_percent": (limit - value) / limit * 100.0,
                    "message": f"{what} {value:.4g} {unit} "
                               + (f"EXCEEDS the limit of {limit:.4g} {unit}" if over else
                                  f"is within the limit of {limit:.4g} {unit}")})
    return out
