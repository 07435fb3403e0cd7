"""The rig's model, derived once per analysis and handed down.

``derive(rig)`` builds one frozen record of everything that follows from the
rig's numbers: the chain's mass properties, its sway modes, each
equilibrium's linear model (M, D, K and the first-order matrices M^-1 K and
M^-1 D with their fastest rates) and the drive's harmonics at the operating
point. The analyses take the record instead of the rig; moving the operating
point along a scan (``Model.at``) replaces the drive and its harmonics only,
since the links do not change.
"""

from __future__ import annotations

from dataclasses import dataclass

from ..numerics.linalg import inverse, matmul
from ..numerics.symeig import generalized_eigh
from . import drive as drv
from .linear import EQUILIBRIA, Chain, LinearModel, chain, linear_model
from .modes import Modes, modes_of
from .properties import RigProperties, properties_of
from .rig import MIN_LINK_M, OutOfReach, Problem, Rig, swapped, with_operating_point

Matrix = tuple[tuple[float, ...], ...]


@dataclass(frozen=True)
class EquilibriumModel:
    """One equilibrium's linear model in the forms the analyses use."""

    linear: LinearModel
    B: Matrix  # M^-1 K
    C: Matrix  # M^-1 D
    stiffness_rate: float  # max |eig B|: the fastest stiffness rate per unit of g + y_p''
    damping_rate: float  # max |eig C| (0 without dampers)
    # The sway-mode coordinates q = X z (X^T M X = I): z'' + X^T D X z' + G diag(kappa) z = 0
    modal_basis: Matrix = ()  # X, a mode per column
    modal_stiffness: tuple[float, ...] = ()  # kappa = diag(X^T K X)
    modal_damping: Matrix = ()  # X^T D X


@dataclass(frozen=True)
class Model:
    """Everything derived from a rig once: hand this down instead of the rig."""

    rig: Rig
    chain: Chain
    properties: RigProperties
    modes: Modes
    inverted: EquilibriumModel
    hanging: EquilibriumModel
    harmonics: drv.Harmonics  # of d2y/dphi2 at the operating stroke
    damped: bool  # some joint has a damper

    def of(self, equilibrium: str) -> EquilibriumModel:
        if equilibrium == "inverted":
            return self.inverted
        if equilibrium == "hanging":
            return self.hanging
        raise ValueError(f"equilibrium: {equilibrium!r} is not one of {EQUILIBRIA}")

    def at(self, speed_rpm: float | None = None, stroke_m: float | None = None) -> "Model":
        """The same model at another operating point (the links' part is shared)."""
        rig = with_operating_point(self.rig, speed_rpm=speed_rpm, stroke_m=stroke_m)
        if rig is self.rig:
            return self
        if rig.drive.stroke_m == self.rig.drive.stroke_m:  # the cycle's shape is speed-free
            return swapped(self, rig=rig)
        return swapped(self, rig=rig, harmonics=drv.harmonics(rig.drive))


def _freeze(rows) -> Matrix:
    return tuple(tuple(float(x) for x in row) for row in rows)


def _equilibrium(ch: Chain, name: str, sway: Modes, damped: bool) -> EquilibriumModel:
    lin = linear_model(ch, name)
    m_inv = inverse([list(r) for r in lin.M])
    B = matmul(m_inv, [list(r) for r in lin.K])
    C = matmul(m_inv, [list(r) for r in lin.D])
    # eig(M^-1 K) = -/+ 1 / (each mode's length): the modes already hold them. eig(M^-1 D)
    # is that of the symmetric-definite pencil (D, M): real, and found by Cholesky and
    # Jacobi, which converge for any scale of numbers (general QR failed at 2e-226 N m s).
    stiff = 1.0 / min(sway.lengths_m)
    damp = max(abs(v) for v in generalized_eigh(lin.D, lin.M)[0]) if damped else 0.0
    kappa, X = generalized_eigh([list(r) for r in lin.K], [list(r) for r in lin.M])
    n = len(kappa)
    modal_d = [[sum(X[a][i] * lin.D[a][b] * X[b][j] for a in range(n) for b in range(n))
                for j in range(n)] for i in range(n)]
    return EquilibriumModel(lin, _freeze(B), _freeze(C), stiff, damp, _freeze(X),
                            tuple(float(k) for k in kappa), _freeze(modal_d))


def derive(rig: Rig) -> Model:
    """The rig's model: mass properties, modes, both equilibria's linear models and the
    drive's harmonics at the operating point."""
    ch = chain(rig)
    damped = any(link.joint_damping_N_m_s > 0 for link in rig.links)
    try:
        sway = modes_of(ch)
        inverted, hanging = (_equilibrium(ch, name, sway, damped) for name in EQUILIBRIA)
    except (ArithmeticError, ValueError) as exc:  # M not positive definite, a mode of no length
        raise OutOfReach([Problem("links", "outside what this method can resolve: the "
                                           f"chain's linear model could not be formed ({exc})")]
                         ) from None
    shortest = min(sway.lengths_m)
    if not shortest >= MIN_LINK_M:  # a mass at (or a hair from) its joint: no pendulum
        raise OutOfReach([Problem("links", "outside what this method can resolve: the "
                                  f"shortest sway mode is a pendulum {shortest:.3g} m long, "
                                  f"under {MIN_LINK_M:g} m (is a mass sitting at its joint?)")])
    return Model(rig, ch, properties_of(rig, ch, sway), sway, inverted, hanging,
                 drv.harmonics(rig.drive), damped)


def as_model(rig_or_model: Rig | Model) -> Model:
    """A Model as given, or derived from a Rig (public entry points take either)."""
    return rig_or_model if isinstance(rig_or_model, Model) else derive(rig_or_model)
