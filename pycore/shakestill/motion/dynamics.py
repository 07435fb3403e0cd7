"""The chain's full nonlinear equations on the moving pivot, and what a state implies.

With absolute angles q from the upward vertical, G = g + y_p'' and the chain
coefficients of ``linear.chain`` (B, a, D), Lagrange's equations in the
pivot's frame read (linear.py gives their derivation)

    sum_j B_ij cos(q_i - q_j) q_j'' = G a_i sin q_i - sum_j B_ij sin(q_i - q_j) q_j'^2
                                      - (D q')_i + Q_i

Q holds the forces that are not in the Lagrangian:

- Coulomb friction at joint k on its relative rate r_k = q_k' - q_{k-1}'
  (q_{-1}' = 0, the base): a sliding joint carries the torque -T_k s_k with
  s_k the sign of r_k, which puts -T_k s_k on link k and +T_k s_k on link k-1.
  A stuck joint is the constraint r_k' = 0; its multiplier lambda_k is the
  torque the joint must hold (module ``motion`` decides stick and slip).
- quadratic air drag on point masses, F = -1/2 rho C_d A |v| v with v the
  mass's velocity in the lab (still air), projected on each angle.

With the drive off vertical (``drive.axis_tilt_deg``, ``drive.side_stroke_m``) the
pivot also moves sideways by x_p(t); its acceleration x_p'' adds - x_p'' a_i cos q_i
to the right-hand side (the fictitious force - m x_p'' of the pivot's frame, projected
on each angle), and the vertical motion is the waveform's times cos(tilt). A vertical
drive takes exactly the code it took before (``Model.planar`` is None).

A *mode* gives each joint 0 (stuck) or the sign (+1/-1) it slides with;
within a mode the equations are smooth. A *segment* is a stretch of time with
a constant drive angular acceleration: phase(t) = phase0 + omega0 tau +
alpha tau^2 / 2, tau = t - t0.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Callable

from ..numerics.linalg import solve
from ..model.linear import chain
from ..model.rig import Drive, Rig

PhaseKinematics = Callable[[float], tuple[float, float, float]]
# phase -> (y, dy, d2y, x, dx, d2x): both coordinates of the pivot and their phase derivatives
PlanarKinematics = Callable[[float], tuple[float, float, float, float, float, float]]


@dataclass(frozen=True)
class Segment:
    """The drive phase over a stretch of time with constant angular acceleration."""

    t0: float
    phase0: float
    omega0: float  # rad/s at t0
    alpha: float = 0.0  # rad/s^2

    def phase(self, t: float) -> float:
        tau = t - self.t0
        return self.phase0 + tau * (self.omega0 + 0.5 * self.alpha * tau)

    def omega(self, t: float) -> float:
        return self.omega0 + self.alpha * (t - self.t0)


@dataclass(frozen=True)
class Model:
    """Everything the right-hand side needs, in SI."""

    n: int
    lengths: tuple[float, ...]
    masses: tuple[float, ...]
    a: tuple[float, ...]  # first moment carried by each angle (kg m)
    B: tuple[tuple[float, ...], ...]  # coupling coefficients (kg m^2)
    D: tuple[tuple[float, ...], ...]  # damping matrix from the joint dampers
    friction: tuple[float, ...]  # Coulomb torque at each joint (N m)
    drag: tuple[tuple[int, float, float], ...]  # (link, at_m, 1/2 rho C_d A) per point mass
    g: float
    kinematics: PhaseKinematics = field(compare=False, repr=False)
    planar: PlanarKinematics | None = field(default=None, compare=False, repr=False)

    @property
    def total_mass(self) -> float:
        return sum(self.masses)


def phase_kinematics(drive: Drive) -> PhaseKinematics:
    """phase -> (y, dy/dphase, d2y/dphase2) in metres, the formulas of ``drive`` made fast.

    ``drive.pivot`` builds a record per call; the right-hand side calls this
    twelve times per step, so the same formulas are closed over their constants.
    """
    cos, sin, sqrt = math.cos, math.sin, math.sqrt
    if drive.waveform == "sine":
        amp = drive.stroke_m / 2.0

        def sine(phi):
            c, s = cos(phi), sin(phi)
            return amp * c, -amp * s, -amp * c
        return sine
    if drive.waveform == "crank":
        r, rod = drive.stroke_m / 2.0, drive.rod_length_m
        r2, r4 = r * r, r ** 4

        def crank(phi):
            c, s = cos(phi), sin(phi)
            u = sqrt(rod * rod - r2 * s * s)
            return (r * c + u - rod, -r * s - r2 * s * c / u,
                    -r * c - r2 * (c * c - s * s) / u - r4 * s * s * c * c / (u * u * u))
        return crank
    scale = drive.stroke_m / drive.samples_stroke_m
    values = drive.samples_m
    count = len(values)
    mean = scale * sum(values) / count
    terms = []
    for k in range(1, count // 2 + 1):
        ck = scale * 2.0 / count * sum(v * math.cos(2 * math.pi * k * j / count)
                                       for j, v in enumerate(values))
        sk = scale * 2.0 / count * sum(v * math.sin(2 * math.pi * k * j / count)
                                       for j, v in enumerate(values))
        if 2 * k == count:  # the Nyquist term: a half-weight cosine (architecture.md)
            ck, sk = ck / 2.0, 0.0
        terms.append((k, ck, sk))

    def samples(phi):
        c1, s1 = cos(phi), sin(phi)
        c, s = 1.0, 0.0
        y, dy, d2y = mean, 0.0, 0.0
        for k, a, b in terms:  # cos(k phi), sin(k phi) by rotation: two products per term
            c, s = c * c1 - s * s1, s * c1 + c * s1
            y += a * c + b * s
            dy += k * (b * c - a * s)
            d2y -= k * k * (a * c + b * s)
        return y, dy, d2y
    return samples


def model(rig: Rig) -> Model:
    ch = chain(rig)
    half_rho = 0.5 * rig.air_density_kg_m3
    drag = tuple((i, p.at_m, half_rho * p.drag_coefficient * p.frontal_area_m2)
                 for i, link in enumerate(rig.links) for p in link.point_masses
                 if p.drag_coefficient > 0 and p.frontal_area_m2 > 0 and half_rho > 0)
    vertical, planar = path_kinematics(rig.drive)
    return Model(rig.n_links, ch.length_m, ch.mass_kg, ch.a_kg_m, ch.coupling, ch.damping,
                 ch.friction_N_m, drag, rig.g_m_s2, vertical, planar)


def path_kinematics(drive: Drive) -> tuple[PhaseKinematics, PlanarKinematics | None]:
    """The pivot's vertical kinematics, and both coordinates when its path is off vertical.

    The waveform's displacement s moves the pivot by s (sin a, cos a), a = axis tilt;
    the side motion adds x = (side_stroke / 2) cos(phase + side_phase).
    """
    base = phase_kinematics(drive)
    if not drive.off_vertical:
        return base, None
    tilt = math.radians(drive.axis_tilt_deg)
    ca, sa = math.cos(tilt), math.sin(tilt)
    half, lead = drive.side_stroke_m / 2.0, math.radians(drive.side_phase_deg)
    cos, sin = math.cos, math.sin

    def planar(phi):
        y, dy, d2y = base(phi)
        c, s = cos(phi + lead), sin(phi + lead)
        return (ca * y, ca * dy, ca * d2y,
                sa * y + half * c, sa * dy - half * s, sa * d2y - half * c)

    def vertical(phi):
        return planar(phi)[:3]
    return vertical, planar


def pivot_at(m: Model, seg: Segment, t: float) -> tuple[float, float, float]:
    """Pivot height, velocity and acceleration at time t (m, m/s, m/s^2)."""
    om = seg.omega(t)
    y, dy, d2y = m.kinematics(seg.phase(t))
    return y, dy * om, d2y * om * om + dy * seg.alpha


def pivot_side_at(m: Model, seg: Segment, t: float) -> tuple[float, float, float]:
    """Pivot's sideways position, velocity and acceleration at time t (0 on a vertical path)."""
    if m.planar is None:
        return 0.0, 0.0, 0.0
    om = seg.omega(t)
    _, _, _, x, dx, d2x = m.planar(seg.phase(t))
    return x, dx * om, d2x * om * om + dx * seg.alpha


def relative_rates(w) -> list[float]:
    """r_k = q_k' - q_{k-1}' at each joint (the base does not turn)."""
    return [w[0]] + [w[k] - w[k - 1] for k in range(1, len(w))]


def drag_forces(m: Model, q, w, v_pivot: float,
                vx_pivot: float = 0.0) -> list[tuple[int, float, float, float]]:
    """(link, at_m, F_x, F_y) of air drag on each point mass that has it (N)."""
    out = []
    for i, at, kappa in m.drag:
        vx = vx_pivot + sum(m.lengths[k] * math.cos(q[k]) * w[k] for k in range(i)) + at * math.cos(q[i]) * w[i]
        vy = v_pivot - sum(m.lengths[k] * math.sin(q[k]) * w[k] for k in range(i)) \
            - at * math.sin(q[i]) * w[i]
        speed = math.hypot(vx, vy)
        out.append((i, at, -kappa * speed * vx, -kappa * speed * vy))
    return out


def drag_torques(m: Model, q, w, v_pivot: float, vx_pivot: float = 0.0) -> list[float]:
    """Generalised forces of air drag on the point masses (N m per angle)."""
    out = [0.0] * m.n
    for i, at, fx, fy in drag_forces(m, q, w, v_pivot, vx_pivot):
        for k in range(i + 1):
            arm = m.lengths[k] if k < i else at
            out[k] += arm * (math.cos(q[k]) * fx - math.sin(q[k]) * fy)
    return out


def _forces(m: Model, seg: Segment, mode, t: float, y):
    """Mass matrix and right-hand side of M q'' = f at one state."""
    n = m.n
    q, w = y[:n], y[n:]
    _, v, acc = pivot_at(m, seg, t)
    G = m.g + acc
    M = [[m.B[i][j] * math.cos(q[i] - q[j]) for j in range(n)] for i in range(n)]
    f = [G * m.a[i] * math.sin(q[i])
         - sum(m.B[i][j] * math.sin(q[i] - q[j]) * w[j] * w[j] for j in range(n))
         - sum(m.D[i][j] * w[j] for j in range(n)) for i in range(n)]
    for k, torque in enumerate(m.friction):
        if torque > 0 and mode[k] != 0:
            f[k] -= torque * mode[k]
            if k > 0:
                f[k - 1] += torque * mode[k]
    if m.planar is not None:
        _, vx, ax = pivot_side_at(m, seg, t)
        f = [fi - ax * m.a[i] * math.cos(q[i]) for i, fi in enumerate(f)]
    else:
        vx = 0.0
    if m.drag:
        f = [a + b for a, b in zip(f, drag_torques(m, q, w, v, vx))]
    return M, f


def accelerations(m: Model, seg: Segment, mode, t: float, y) -> tuple[list, list]:
    """(q'', lambda): angular accelerations and each joint's holding torque (0 if not stuck).

    lambda_k is the torque a stuck joint k applies to keep r_k' = 0 (on link k,
    with the opposite on link k-1).
    """
    n = m.n
    M, f = _forces(m, seg, mode, t, y)
    stuck = [k for k in range(n) if mode[k] == 0]
    if not stuck:
        return solve(M, f), [0.0] * n
    size = n + len(stuck)
    aug = [row + [0.0] * len(stuck) for row in M] + [[0.0] * size for _ in stuck]
    for c, k in enumerate(stuck):  # M q'' - lambda_k e_k = f and e_k . q'' = 0
        aug[k][n + c], aug[n + c][k] = -1.0, 1.0
        if k > 0:
            aug[k - 1][n + c], aug[n + c][k - 1] = 1.0, -1.0
    sol = solve(aug, f + [0.0] * len(stuck))
    lam = [0.0] * n
    for c, k in enumerate(stuck):
        lam[k] = sol[n + c]
    return sol[:n], lam


def rhs(m: Model, seg: Segment, mode) -> Callable[[float, list], list]:
    """The right-hand side y' = F(t, y), y = (q, q'), for one segment and mode."""
    n, kin, g = m.n, m.kinematics, m.g
    t0, ph0, om0, al = seg.t0, seg.phase0, seg.omega0, seg.alpha
    if m.planar is not None:
        if 0 not in mode and not m.drag:
            return planar_rhs(m, seg, mode)
    elif n == 1 and mode[0] != 0 and not m.drag:  # the common case, written out
        sin = math.sin
        inv, a0, c0 = 1.0 / m.B[0][0], m.a[0], m.D[0][0]
        slide = -m.friction[0] * mode[0]

        def one_link(t, y):
            tau = t - t0
            om = om0 + al * tau
            _, dy, d2y = kin(ph0 + tau * (om0 + 0.5 * al * tau))
            q, w = y
            return [w, ((g + d2y * om * om + dy * al) * a0 * sin(q) - c0 * w + slide) * inv]
        return one_link
    elif 0 not in mode and not m.drag:
        return _chain_rhs(m, seg, mode)

    def general(t, y):
        return list(y[n:]) + accelerations(m, seg, mode, t, y)[0]
    return general


def _sliding_torques(m: Model, mode) -> list[float]:
    """Constant joint torques of the sliding joints: -T_k s_k on link k, +T_k s_k on k-1."""
    slide = [0.0] * m.n
    for k, torque in enumerate(m.friction):
        if torque > 0:
            slide[k] -= torque * mode[k]
            if k > 0:
                slide[k - 1] += torque * mode[k]
    return slide


def planar_rhs(m: Model, seg: Segment, mode):
    """1 to 3 links on a pivot moving off vertical, nothing stuck, no drag."""
    kin, g = m.planar, m.g
    t0, ph0, om0, al = seg.t0, seg.phase0, seg.omega0, seg.alpha
    field_rhs = planar_field_rhs(m, _sliding_torques(m, mode))

    def tilted_rhs(t, y):
        tau = t - t0
        om = om0 + al * tau
        _, dy, d2y, _, dx, d2x = kin(ph0 + tau * (om0 + 0.5 * al * tau))
        return field_rhs(g + d2y * om * om + dy * al, d2x * om * om + dx * al, y)
    return tilted_rhs


def planar_field_rhs(m: Model, slide=None, *, sin=math.sin, cos=math.cos):
    """(G, X, y) -> y' with G = g + y_p'' and X = x_p'' the pivot frame's field, no drag.

    ``sin``/``cos`` may be ``cmath``'s, so that a complex-step derivative runs through
    the same equations (``orbit`` takes the monodromy that way).
    """
    n, B, D, a = m.n, m.B, m.D, m.a
    slide = slide or [0.0] * n
    idx = range(n)

    def field_rhs(G, X, y):
        w = y[n:]
        s = [sin(x) for x in y[:n]]
        c = [cos(x) for x in y[:n]]
        f = [a[i] * (G * s[i] - X * c[i]) + slide[i]
             - sum(B[i][j] * (s[i] * c[j] - c[i] * s[j]) * w[j] * w[j] + D[i][j] * w[j]
                   for j in idx) for i in idx]
        if n == 1:
            return [w[0], f[0] / B[0][0]]
        M = [[B[i][j] * (c[i] * c[j] + s[i] * s[j]) for j in idx] for i in idx]
        return list(w) + _solve_spd(M, f)
    return field_rhs


def _chain_rhs(m: Model, seg: Segment, mode):
    """Two or three links, nothing stuck, no drag: the equations with sines of sums
    expanded (n sines and cosines per call) and the small solve written out."""
    n, kin, g = m.n, m.kinematics, m.g
    t0, ph0, om0, al = seg.t0, seg.phase0, seg.omega0, seg.alpha
    B, D, a = m.B, m.D, m.a
    sin, cos = math.sin, math.cos
    slide = _sliding_torques(m, mode)
    idx = range(n)

    def chain_rhs(t, y):
        tau = t - t0
        om = om0 + al * tau
        _, dy, d2y = kin(ph0 + tau * (om0 + 0.5 * al * tau))
        G = g + d2y * om * om + dy * al
        w = y[n:]
        s = [sin(x) for x in y[:n]]
        c = [cos(x) for x in y[:n]]
        w2 = [x * x for x in w]
        f = [G * a[i] * s[i] + slide[i]
             - sum(B[i][j] * (s[i] * c[j] - c[i] * s[j]) * w2[j] + D[i][j] * w[j] for j in idx)
             for i in idx]
        M = [[B[i][j] * (c[i] * c[j] + s[i] * s[j]) for j in idx] for i in idx]
        return list(w) + _solve_spd(M, f)
    return chain_rhs


def _solve_spd(M, f) -> list[float]:
    """M x = f for a symmetric positive definite 2 x 2 or 3 x 3 mass matrix (Cramer)."""
    if len(f) == 2:
        (a, b), (_, d) = M
        det = a * d - b * b
        return [(d * f[0] - b * f[1]) / det, (a * f[1] - b * f[0]) / det]
    (a, b, c), (_, d, e), (_, _, k) = M
    A0, A1, A2 = d * k - e * e, c * e - b * k, b * e - c * d  # first row of the adjugate
    B1, B2, C2 = a * k - c * c, b * c - a * e, a * d - b * b
    det = a * A0 + b * A1 + c * A2
    x, y, z = f
    return [(A0 * x + A1 * y + A2 * z) / det, (A1 * x + B1 * y + B2 * z) / det,
            (A2 * x + B2 * y + C2 * z) / det]


def energy_J(m: Model, y) -> float:
    """Kinetic energy relative to the pivot plus g-potential above it (J).

    Conserved with a still pivot and no damping, friction or drag.
    """
    n = m.n
    q, w = y[:n], y[n:]
    kinetic = 0.5 * sum(m.B[i][j] * math.cos(q[i] - q[j]) * w[i] * w[j]
                        for i in range(n) for j in range(n))
    return kinetic + m.g * sum(a * math.cos(x) for a, x in zip(m.a, q))


def points_m(m: Model, q, y_pivot: float, x_pivot: float = 0.0) -> list[tuple[float, float]]:
    """Lab positions of the pivot, each further joint and the chain's tip (m)."""
    x, y = x_pivot, y_pivot
    out = [(x, y)]
    for length, angle in zip(m.lengths, q):
        x += length * math.sin(angle)
        y += length * math.cos(angle)
        out.append((x, y))
    return out
