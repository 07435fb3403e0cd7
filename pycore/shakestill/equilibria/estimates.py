"""Closed-form estimates beside the exact values (always labelled as estimates).

Kapitza's averaging (Landau & Lifshitz, Mechanics, section 30): for a fast
pivot motion with mean square velocity <v^2>, the slow motion of a pendulum
with first moment s = m d and inertia J about the pivot sees the effective
potential

    U_eff(theta) = s g cos(theta) + (s^2 <v^2> / (2 J)) sin^2(theta)

(theta from the upward vertical). For a sine drive <v^2> = (A omega)^2 / 2,
which gives the familiar criterion (A omega)^2 > 2 g l_eq and the slow
frequency Omega^2 = (A omega)^2 / (2 l_eq^2) - g / l_eq.

Several links: each sway mode is a single pendulum of its own equivalent length
(module ``model.modes``; Acheson 1993), so the same criteria hold per mode. The
longest mode needs the most speed (the Kapitza minimum), the shortest loses the
upright position first as the stroke grows (the flutter limit), and the slow
sway estimates are per mode. The effective-potential estimates (barrier, release
angle, knock) treat the links as one rigid pendulum, all aligned: a rough guide.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ..model import drive as drv
from ..model.derived import Model, as_model
from ..model.rig import Rig

# q at which the Mathieu characteristic value b_1(q) = 0, from memory; tests
# check it against scipy.special.mathieu_b. Above A / l_eq = q / 2 the
# inverted position is lost even at infinite speed.
MATHIEU_B1_ZERO_Q = 0.9080463
_RMS_SAMPLES = 256  # phases used for the mean square pivot velocity


@dataclass(frozen=True)
class Estimates:
    l_eq_m: float
    rms_pivot_velocity_m_s: float
    kapitza_min_speed_rpm: float  # inverted needs more than this (estimate)
    inverted_slow_frequency_hz: float | None  # None where the estimate says unstable
    hanging_slow_frequency_hz: float
    max_stroke_estimate_m: float  # inverted lost above this stroke at any speed (sine form)
    barrier_J: float  # U_eff at its crest minus U_eff upright (0: no well)
    crest_angle_rad: float  # where U_eff peaks: releases below it recover (estimate)
    knock_estimate_rad_s: float  # rate step that just reaches the crest (estimate)
    mode_lengths_m: tuple[float, ...] = ()  # equivalent length per sway mode, longest first
    min_speed_mode: int = 1  # the mode (1-based, longest first) that sets the minimum speed
    max_stroke_mode: int = 1  # the mode that sets the flutter stroke limit
    inverted_sway_modes_hz: tuple[float | None, ...] = ()  # per mode (None: unstable)
    hanging_sway_modes_hz: tuple[float, ...] = ()

    def as_dict(self) -> dict:
        return {
            "l_eq_m": self.l_eq_m,
            "rms_pivot_velocity_m_s": self.rms_pivot_velocity_m_s,
            "kapitza_min_speed_rpm": self.kapitza_min_speed_rpm,
            "inverted_slow_frequency_hz": self.inverted_slow_frequency_hz,
            "hanging_slow_frequency_hz": self.hanging_slow_frequency_hz,
            "max_stroke_estimate_m": self.max_stroke_estimate_m,
            "effective_barrier_J": self.barrier_J,
            "release_angle_estimate_rad": self.crest_angle_rad,
            "knock_estimate_rad_s": self.knock_estimate_rad_s,
            "mode_lengths_m": list(self.mode_lengths_m),
            "min_speed_mode": self.min_speed_mode,
            "max_stroke_mode": self.max_stroke_mode,
            "inverted_sway_modes_hz": list(self.inverted_sway_modes_hz),
            "hanging_sway_modes_hz": list(self.hanging_sway_modes_hz),
        }


def rms_velocity_per_rad_s(rig: Rig) -> float:
    """sqrt(<(dy_p/dphi)^2>): the RMS pivot velocity per rad/s of drive speed."""
    if rig.drive.waveform == "sine":
        return rig.drive.stroke_m / 2.0 / math.sqrt(2.0)
    total = 0.0
    for k in range(_RMS_SAMPLES):
        v = drv.pivot(rig.drive, 2 * math.pi * k / _RMS_SAMPLES, 60.0 / (2 * math.pi)).v_m_s
        total += v * v
    return math.sqrt(total / _RMS_SAMPLES)


def _potential_terms(m: Model) -> tuple[float, float]:
    """(s g, s^2 <v^2> / (2 J)): U_eff = first cos(theta) + second sin^2(theta)."""
    rig, p = m.rig, m.properties
    s, J = p.first_moment_kg_m, p.inertia_about_pivot_kg_m2
    v2 = (rms_velocity_per_rad_s(rig) * 2 * math.pi * rig.drive.frequency_hz) ** 2
    return s * rig.g_m_s2, s * s * v2 / (2 * J)


def effective_potential_J(rig: Rig | Model, theta_rad: float) -> float:
    """Kapitza's averaged potential at angle theta from the upward vertical (J)."""
    weight, fast = _potential_terms(as_model(rig))
    return weight * math.cos(theta_rad) + fast * math.sin(theta_rad) ** 2


def _sway_hz(v2: float, g: float, length: float, sign: float) -> float | None:
    """Kapitza's slow sway of one mode: Omega^2 = <v^2> / l^2 + sign g / l (None if < 0)."""
    w2 = v2 / length ** 2 + sign * g / length
    return math.sqrt(w2) / (2 * math.pi) if w2 > 0 else None


def estimates(rig: Rig | Model) -> Estimates:
    m = as_model(rig)
    rig, p = m.rig, m.properties
    g = rig.g_m_s2
    lengths = m.modes.lengths_m  # longest first
    longest, shortest = lengths[0], lengths[-1]
    per_rad = rms_velocity_per_rad_s(rig)
    omega = 2 * math.pi * rig.drive.frequency_hz
    v2 = (per_rad * omega) ** 2
    # (A omega)^2 > 2 g l per mode: the longest mode needs the most speed
    min_omega = math.sqrt(g * longest) / per_rad if per_rad > 0 else math.inf
    inverted = tuple(_sway_hz(v2, g, length, -1.0) for length in lengths)
    hanging = tuple(_sway_hz(v2, g, length, 1.0) for length in lengths)
    weight, fast = _potential_terms(m)
    # dU/dtheta = sin(theta) (2 fast cos(theta) - weight): a crest where cos = weight / 2 fast.
    crest = math.acos(weight / (2 * fast)) if fast > weight / 2 else 0.0
    barrier = effective_potential_J(m, crest) - effective_potential_J(m, 0.0)
    return Estimates(
        l_eq_m=p.l_eq_m,
        rms_pivot_velocity_m_s=math.sqrt(v2),
        kapitza_min_speed_rpm=min_omega * 60 / (2 * math.pi),
        inverted_slow_frequency_hz=(None if None in inverted else min(inverted)),
        hanging_slow_frequency_hz=min(hanging),
        max_stroke_estimate_m=MATHIEU_B1_ZERO_Q * shortest,
        barrier_J=barrier,
        crest_angle_rad=crest,
        knock_estimate_rad_s=math.sqrt(2 * barrier / p.inertia_about_pivot_kg_m2),
        mode_lengths_m=lengths,
        min_speed_mode=1,
        max_stroke_mode=len(lengths),
        inverted_sway_modes_hz=inverted,
        hanging_sway_modes_hz=hanging,
    )
