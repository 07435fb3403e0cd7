"""The chain's sway modes: the generalised eigenvectors of (K, M) about either equilibrium.

Linearised about either equilibrium, M q'' + D q' + (g + y_p'') K q = 0 with one
K = -/+ diag(a) carrying gravity and drive alike. With q = X z, X^T M X = I and
X^T diag(a) X = diag(lambda), each mode obeys z'' + (g + y_p'') (-/+ lambda) z = 0:
a single pendulum of equivalent length 1/lambda (Acheson, Proc. R. Soc. Lond. A
443 (1993) 239). Exactly so when the damping is a combination of M and K; the
joint dampers' off-diagonal part in modal coordinates (``coupling``) says how
far a rig is from that.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ..numerics.symeig import generalized_eigh
from .linear import Chain, chain
from .rig import Rig


@dataclass(frozen=True)
class Modes:
    """Sway modes, longest equivalent length (slowest, most pendulum-like) first."""

    lengths_m: tuple[float, ...]  # equivalent single-pendulum length of each mode
    shapes: tuple[tuple[float, ...], ...]  # link angles per mode, largest +1
    damping: tuple[float, ...]  # modal damping (X^T D X)_ii, 1/s with X^T M X = I
    coupling: float  # largest |(X^T D X)_ij| / sqrt(ii jj), i != j; 0: modes decouple
    cross_damping: tuple[tuple[float, ...], ...] = ()  # the whole X^T D X, 1/s

    @property
    def count(self) -> int:
        return len(self.lengths_m)


def modes(rig: Rig) -> Modes:
    """The rig's sway modes (the same about upright and hanging: only K's sign differs)."""
    return modes_of(chain(rig))


def modes_of(ch: Chain) -> Modes:
    """Sway modes from the rig's already derived chain (``derived.derive`` calls this)."""
    n = len(ch.a_kg_m)
    stiff = [[ch.a_kg_m[i] if i == j else 0.0 for j in range(n)] for i in range(n)]
    lams, x = generalized_eigh(stiff, [list(r) for r in ch.coupling])
    order = list(range(n))  # lambdas ascending: lengths descending
    cols = [[x[i][k] for i in range(n)] for k in order]
    d = ch.damping
    modal_d = [[sum(ci[a] * d[a][b] * cj[b] for a in range(n) for b in range(n)) for cj in cols]
               for ci in cols]
    coupling = 0.0
    for i in range(n):
        for j in range(n):
            if i != j and modal_d[i][j] != 0.0:
                coupling = max(coupling, abs(modal_d[i][j]) / math.sqrt(
                    max(modal_d[i][i] * modal_d[j][j], 1e-300)))
    shapes = []
    for col in cols:
        big = max(col, key=abs)
        shapes.append(tuple(c / big for c in col))
    return Modes(lengths_m=tuple(1.0 / lams[k] for k in order), shapes=tuple(shapes),
                 damping=tuple(modal_d[k][k] for k in range(n)), coupling=coupling,
                 cross_damping=tuple(tuple(row) for row in modal_d))


# Joint dampers that mix two sway modes by more than this leave the modes no predictor of
# the chain: the cross damping of two modes against the gap between their hanging rates,
# |(X^T D X)_ij| / |w_i - w_j| with w = sqrt(g / L) (first-order mixing of two oscillators
# coupled through their velocities). On 97 random damped two- and three-link chains
# (2026-12-05, 15,440 chart points against solve_ivp) the modes lost tongues, whole
# principal ones at |rho| up to 1.1, in 7 of the 13 chains mixed by 1.27 or more, and in
# none mixed by 1.23 or less: this bound leaves a factor 2.5. Such a chart walks the chain
# exactly (about 4.5 s for 120 rows of three links, against 0.6 s by the modes).
STRONG_MIXING = 0.5


def damper_mixing(modes: Modes, g: float) -> float:
    """How far the joint dampers mix the sway modes (see STRONG_MIXING); 0 for one link."""
    rates = [math.sqrt(g / length) for length in modes.lengths_m]
    worst = 0.0
    for i in range(len(rates)):
        for j in range(i + 1, len(rates)):
            cross = abs(modes.cross_damping[i][j])
            gap = abs(rates[i] - rates[j])
            if cross > 0.0:
                worst = max(worst, cross / gap if gap > 0.0 else math.inf)
    return worst
