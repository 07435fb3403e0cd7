"""Derived properties of a rig, with all links aligned (as in either equilibrium)."""

from __future__ import annotations

import math
from dataclasses import dataclass

from .linear import Chain, chain
from .modes import Modes, modes_of
from .rig import OutOfReach, Problem, Rig


@dataclass(frozen=True)
class RigProperties:
    total_mass_kg: float
    link_mass_kg: tuple[float, ...]
    link_inertia_about_joint_kg_m2: tuple[float, ...]
    first_moment_kg_m: float  # of the whole pendulum about the pivot
    inertia_about_pivot_kg_m2: float
    centre_of_mass_m: float  # distance from the pivot
    l_eq_m: float  # equivalent simple-pendulum length I_p / (m d)
    hanging_frequencies_hz: tuple[float, ...]  # small oscillations, fixed pivot, lowest first

    @property
    def hanging_frequency_hz(self) -> float:
        return self.hanging_frequencies_hz[0]


def properties(rig: Rig) -> RigProperties:
    """The rig's mass properties and fixed-pivot frequencies."""
    ch = chain(rig)
    try:
        sway = modes_of(ch)
    except (ArithmeticError, ValueError) as exc:  # M not positive definite, a mode of no length
        raise OutOfReach([Problem("links", f"outside what this method can resolve: the "
                                           f"chain's own frequencies could not be found ({exc})")]
                         ) from None
    return properties_of(rig, ch, sway)


def properties_of(rig: Rig, ch: Chain, sway: Modes) -> RigProperties:
    """Properties from the rig's already derived chain and sway modes (``derived.derive``
    calls this). Hanging with the pivot fixed, each mode is a simple pendulum of its
    equivalent length L: omega^2 = g / L, slowest (longest) first."""
    n = rig.n_links
    offsets = [sum(ch.length_m[:i]) for i in range(n)]  # each joint's distance from the pivot
    moment = sum(ch.first_moment_kg_m[i] + ch.mass_kg[i] * offsets[i] for i in range(n))
    inertia = sum(ch.inertia_kg_m2[i] + 2 * offsets[i] * ch.first_moment_kg_m[i]
                  + ch.mass_kg[i] * offsets[i] ** 2 for i in range(n))
    total = sum(ch.mass_kg)
    w2 = [rig.g_m_s2 / length for length in sway.lengths_m]
    return RigProperties(
        total_mass_kg=total,
        link_mass_kg=ch.mass_kg,
        link_inertia_about_joint_kg_m2=ch.inertia_kg_m2,
        first_moment_kg_m=moment,
        inertia_about_pivot_kg_m2=inertia,
        centre_of_mass_m=moment / total,
        l_eq_m=inertia / moment,
        hanging_frequencies_hz=tuple(math.sqrt(max(w, 0.0)) / (2 * math.pi) for w in w2),
    )
