"""Closed-form estimates beside the exact values (always labelled as estimates).

Kapitza's averaging (Landau & Lifshitz, Mechanics, section 30): for a fast
pivot motion with mean square velocity <v^2>, the slow motion of a pendulum
with first moment s = m d and inertia J about the pivot sees the effective
potential

    U_eff(theta) = s g cos(theta) + (s^2 <v^2> / (2 J)) sin^2(theta)

(theta from the upward vertical). For a sine drive <v^2> = (A omega)^2 / 2,
which gives the familiar criterion (A omega)^2 > 2 g l_eq and the slow
frequency Omega^2 = (A omega)^2 / (2 l_eq^2) - g / l_eq. Several links are
treated as one rigid pendulum with all links aligned, which is a rough guide.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ..model import drive as drv
from ..model.properties import properties
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


def _potential_terms(rig: Rig) -> tuple[float, float]:
    """(s g, s^2 <v^2> / (2 J)): U_eff = first cos(theta) + second sin^2(theta)."""
    p = properties(rig)
    s, J = p.first_moment_kg_m, p.inertia_about_pivot_kg_m2
    v2 = (rms_velocity_per_rad_s(rig) * 2 * math.pi * rig.drive.frequency_hz) ** 2
    return s * rig.g_m_s2, s * s * v2 / (2 * J)


def effective_potential_J(rig: Rig, theta_rad: float) -> float:
    """Kapitza's averaged potential at angle theta from the upward vertical (J)."""
    weight, fast = _potential_terms(rig)
    return weight * math.cos(theta_rad) + fast * math.sin(theta_rad) ** 2


def estimates(rig: Rig) -> Estimates:
    p = properties(rig)
    l_eq, g = p.l_eq_m, rig.g_m_s2
    per_rad = rms_velocity_per_rad_s(rig)
    omega = 2 * math.pi * rig.drive.frequency_hz
    v2 = (per_rad * omega) ** 2
    min_omega = math.sqrt(g * l_eq) / per_rad if per_rad > 0 else math.inf
    inv2 = v2 / l_eq ** 2 - g / l_eq
    weight, fast = _potential_terms(rig)
    # dU/dtheta = sin(theta) (2 fast cos(theta) - weight): a crest where cos = weight / 2 fast.
    crest = math.acos(weight / (2 * fast)) if fast > weight / 2 else 0.0
    barrier = effective_potential_J(rig, crest) - effective_potential_J(rig, 0.0)
    return Estimates(
        l_eq_m=l_eq,
        rms_pivot_velocity_m_s=math.sqrt(v2),
        kapitza_min_speed_rpm=min_omega * 60 / (2 * math.pi),
        inverted_slow_frequency_hz=math.sqrt(inv2) / (2 * math.pi) if inv2 > 0 else None,
        hanging_slow_frequency_hz=math.sqrt(v2 / l_eq ** 2 + g / l_eq) / (2 * math.pi),
        max_stroke_estimate_m=MATHIEU_B1_ZERO_Q * l_eq,
        barrier_J=barrier,
        crest_angle_rad=crest,
        knock_estimate_rad_s=math.sqrt(2 * barrier / p.inertia_about_pivot_kg_m2),
    )
