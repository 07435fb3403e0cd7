"""The pendulum chain's mass properties and its equations linearised about each equilibrium.

Angles are absolute, from the upward vertical. With G(t) = g + y_p''(t) the
full equations are (Lagrange, pivot frame)

    sum_j B_ij cos(q_i - q_j) q_j'' + sum_j B_ij sin(q_i - q_j) q_j'^2
        - G a_i sin q_i + (D q')_i = 0,

where B_ii = J_i + L_i^2 m_beyond_i, B_ij = L_min(i,j) a_max(i,j), and
a_i = s_i + L_i m_beyond_i is the first moment that link i's angle carries.
Linearised: M q'' + D q' + G K q = 0 with M = B, K = -diag(a) about inverted
(all links up) and K = +diag(a) about hanging (all down).
"""

from __future__ import annotations

from dataclasses import dataclass

from .rig import Rig

EQUILIBRIA = ("inverted", "hanging")


@dataclass(frozen=True)
class Chain:
    """Mass properties of each link and the chain's coupling coefficients (SI)."""

    length_m: tuple[float, ...]
    mass_kg: tuple[float, ...]
    first_moment_kg_m: tuple[float, ...]  # s_i about the link's own joint
    inertia_kg_m2: tuple[float, ...]  # J_i about the link's own joint
    a_kg_m: tuple[float, ...]  # s_i + L_i * (mass of the links beyond)
    coupling: tuple[tuple[float, ...], ...]  # B_ij
    damping: tuple[tuple[float, ...], ...]  # D_ij from the joint dampers
    friction_N_m: tuple[float, ...]  # Coulomb torque at each joint


@dataclass(frozen=True)
class LinearModel:
    """M q'' + D q' + (g + y_p''(t)) K q = 0 about one equilibrium."""

    equilibrium: str
    M: tuple[tuple[float, ...], ...]
    D: tuple[tuple[float, ...], ...]
    K: tuple[tuple[float, ...], ...]


def chain(rig: Rig) -> Chain:
    n = rig.n_links
    lengths, masses, moments, inertias = [], [], [], []
    for link in rig.links:
        L, rod = link.length_m, link.rod_mass_kg
        lengths.append(L)
        masses.append(rod + sum(p.mass_kg for p in link.point_masses))
        moments.append(rod * L / 2 + sum(p.mass_kg * p.at_m for p in link.point_masses))
        inertias.append(rod * L * L / 3 + sum(p.mass_kg * p.at_m ** 2 for p in link.point_masses)
                        + link.extra_inertia_kg_m2)
    beyond = [sum(masses[k] for k in range(i + 1, n)) for i in range(n)]
    a = [moments[i] + lengths[i] * beyond[i] for i in range(n)]
    coupling = [[0.0] * n for _ in range(n)]
    for i in range(n):
        coupling[i][i] = inertias[i] + lengths[i] ** 2 * beyond[i]
        for j in range(i + 1, n):
            coupling[i][j] = coupling[j][i] = lengths[i] * a[j]
    # Joint k's damper acts on q_k' - q_{k-1}' (joint 0 against the base).
    c = [link.joint_damping_N_m_s for link in rig.links]
    damping = [[0.0] * n for _ in range(n)]
    for k in range(n):
        damping[k][k] += c[k]
        if k > 0:
            damping[k - 1][k - 1] += c[k]
            damping[k][k - 1] -= c[k]
            damping[k - 1][k] -= c[k]
    return Chain(tuple(lengths), tuple(masses), tuple(moments), tuple(inertias), tuple(a),
                 _freeze(coupling), _freeze(damping),
                 tuple(link.joint_friction_N_m for link in rig.links))


def linear_model(ch: Chain, equilibrium: str) -> LinearModel:
    """M, D, K of the chain linearised about ``"inverted"`` or ``"hanging"``.

    They depend on the links alone, not on the drive: an analysis derives them once
    (``derived.derive``) and moves its operating point without touching them.
    """
    if equilibrium not in EQUILIBRIA:
        raise ValueError(f"equilibrium: {equilibrium!r} is not one of {EQUILIBRIA}")
    n = len(ch.a_kg_m)
    sign = -1.0 if equilibrium == "inverted" else 1.0
    K = [[sign * ch.a_kg_m[i] if i == j else 0.0 for j in range(n)] for i in range(n)]
    return LinearModel(equilibrium, ch.coupling, ch.damping, _freeze(K))


def linearise(rig: Rig, equilibrium: str) -> LinearModel:
    """M, D, K of the rig's chain about ``equilibrium`` (see ``linear_model``)."""
    return linear_model(chain(rig), equilibrium)


def _freeze(rows) -> tuple[tuple[float, ...], ...]:
    return tuple(tuple(float(x) for x in row) for row in rows)
