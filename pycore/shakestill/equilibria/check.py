"""The operating check: verdict, windows and margins for both equilibria.

``check(rig)`` returns plain data: the JSON of ``shakestill check --json``.
"""

from __future__ import annotations

from ..model import drive as drv
from .estimates import estimates
from .floquet import stability
from ..model.linear import EQUILIBRIA
from ..model.derived import Model, derive
from ..model.modes import STRONG_MIXING, damper_mixing
from ..model.rig import Rig
from .reach import require_in_reach
from .windows import window

G0 = 9.80665  # m/s^2 per "g" of acceleration (standard gravity)
CLOSE_TO_EDGE_PERCENT = 10.0  # less margin than this to any window end is called out


def _percent(op: float, end: float | None) -> float | None:
    return None if end is None or op == 0 else abs(end - op) / op * 100.0


def _equilibrium(model: Model, name: str) -> dict:
    rig = model.rig
    s = stability(model, name)
    speed = window(model, name, "speed", s)
    stroke = window(model, name, "stroke", s)
    op_speed, op_stroke = rig.drive.speed_rpm, rig.drive.stroke_m
    # both windows say "unstable at the operating point" when it is: say it once
    messages = list(dict.fromkeys(m for m in (s.message, speed.message, stroke.message) if m))
    return {
        "stable": s.stable,
        "max_multiplier": s.max_multiplier,
        "slow_frequency_hz": s.slow_frequency_hz,
        "sway_modes_hz": list(s.sway_modes_hz) if s.sway_modes_hz is not None else None,
        "speed_window_rpm": speed.interval if s.stable else None,
        "stroke_window_m": stroke.interval if s.stable else None,
        "multipliers": [[z.real, z.imag] for z in s.multipliers],
        "margins_percent": {
            "speed_down": _percent(op_speed, speed.low),
            "speed_up": _percent(op_speed, speed.high),
            "stroke_down": _percent(op_stroke, stroke.low),
            "stroke_up": _percent(op_stroke, stroke.high),
        },
        "window_ends": {
            "speed_low": _end_kind(speed.low, speed.low_is_edge),
            "speed_high": _end_kind(speed.high, speed.high_is_edge),
            "stroke_low": _end_kind(stroke.low, stroke.low_is_edge),
            "stroke_high": _end_kind(stroke.high, stroke.high_is_edge),
        },
        "method": s.method,
        "converged": s.converged,
        "error_estimate": s.error_estimate,
        "evaluations": 2 + speed.evaluations + stroke.evaluations,
        "scan": speed.resolution + "; " + stroke.resolution,
        "messages": messages,
    }


def _end_kind(value, is_edge: bool) -> str | None:
    if value is None:
        return None
    return "edge" if is_edge else "limit"


def check(rig: Rig) -> dict:
    """The operating check of a rig at its own speed and stroke."""
    model = derive(rig)  # once: everything below is handed this record
    require_in_reach(model)
    peak = drv.peak_accel_m_s2(rig.drive)
    props = model.properties
    result = {
        "title": rig.title,
        "speed_rpm": rig.drive.speed_rpm,
        "stroke_m": rig.drive.stroke_m,
        "waveform": rig.drive.waveform,
        "frequency_hz": rig.drive.frequency_hz,
        "peak_accel_m_s2": peak,
        "peak_accel_g": peak / G0,
        "limits": {"speed_rpm": list(rig.limits.speed_rpm),
                   "stroke_m": list(rig.limits.stroke_m)},
    }
    for name in EQUILIBRIA:
        result[name] = _equilibrium(model, name)
    result["estimates"] = estimates(model).as_dict()
    sway = model.modes
    result["modes"] = {
        "equivalent_lengths_m": list(sway.lengths_m),
        "shapes": [list(shape) for shape in sway.shapes],
        "damping_coupling": sway.coupling,
        "damper_mixing": damper_mixing(model.modes, model.rig.g_m_s2),
        "strong_mixing": STRONG_MIXING,
    }
    result["properties"] = {
        "total_mass_kg": props.total_mass_kg,
        "first_moment_kg_m": props.first_moment_kg_m,
        "inertia_about_pivot_kg_m2": props.inertia_about_pivot_kg_m2,
        "centre_of_mass_m": props.centre_of_mass_m,
        "l_eq_m": props.l_eq_m,
        "hanging_frequencies_hz": list(props.hanging_frequencies_hz),
    }
    result["converged"] = all(result[n]["converged"] for n in EQUILIBRIA)
    for name in EQUILIBRIA:
        margins = [v for v in result[name]["margins_percent"].values() if v is not None]
        nearest = min(margins) if result[name]["stable"] and margins else None
        result[name]["nearest_margin_percent"] = nearest
        result[name]["close_to_edge"] = nearest is not None and nearest < CLOSE_TO_EDGE_PERCENT
    return result
