"""Independent references for the Shakestill reference tests.

Everything here is built from the contract (shared/design/architecture.md:
angles from the upward vertical, effective gravity g + y_p'', joint damping on
relative angular velocity, the three waveforms) and from outside sources:
the Lagrangian of a planar chain of rigid links, scipy.integrate.solve_ivp
(DOP853), numpy.linalg and scipy.special.mathieu_a / mathieu_b. Nothing here
imports or mirrors the engine; the helpers read plain rig-file dicts.
"""
from __future__ import annotations

import math

import numpy as np
from scipy import special
from scipy.integrate import solve_ivp
from scipy.linalg import eigh
from scipy.optimize import brentq
from hypothesis import strategies as st

G_STANDARD = 9.80665  # m/s^2, standard gravity (CGPM 1901), the rig file's default


# ---------------------------------------------------------------- rig dicts

def link(length_m, rod_mass_kg=0.0, point_masses=(), extra_inertia_kg_m2=0.0,
         damping=0.0):
    """One link of a rig file v1 (point_masses as (mass_kg, at_m) pairs)."""
    return {
        "length_m": length_m,
        "rod_mass_kg": rod_mass_kg,
        "point_masses": [{"mass_kg": m, "at_m": s} for m, s in point_masses],
        "extra_inertia_kg_m2": extra_inertia_kg_m2,
        "joint_damping_N_m_s": damping,
        "joint_friction_N_m": 0.0,
    }


def rig(links, drive, limits=None, g=G_STANDARD, title="Reference rig"):
    """A complete rig file v1 dict."""
    data = {"format": "shakestill-rig", "version": 1, "title": title,
            "g_m_s2": g, "links": list(links), "drive": dict(drive)}
    data["limits"] = limits or {"speed_rpm": [10.0, 60000.0], "stroke_m": [0.0, 0.5]}
    return data


def sine(stroke_m, speed_rpm):
    return {"waveform": "sine", "stroke_m": stroke_m, "speed_rpm": speed_rpm}


def crank(stroke_m, rod_length_m, speed_rpm):
    return {"waveform": "crank", "stroke_m": stroke_m, "rod_length_m": rod_length_m,
            "speed_rpm": speed_rpm}


def samples(samples_m, speed_rpm, stroke_m=None):
    d = {"waveform": "samples", "samples_m": list(samples_m), "speed_rpm": speed_rpm}
    if stroke_m is not None:
        d["stroke_m"] = stroke_m
    return d


# ------------------------------------------------------- chain mechanics

def link_moments(lk):
    """Mass, first and second moment of one link about its own joint.

    Uniform rod about its end: m L^2 / 3 (any handbook of mass moments);
    extra inertia is about the link's own centre of mass and carries no mass,
    so it adds unchanged about any axis.
    """
    length = lk["length_m"]
    rod = lk.get("rod_mass_kg", 0.0)
    pms = lk.get("point_masses", [])
    m = rod + sum(p["mass_kg"] for p in pms)
    c = rod * length / 2 + sum(p["mass_kg"] * p["at_m"] for p in pms)
    i = (rod * length ** 2 / 3 + sum(p["mass_kg"] * p["at_m"] ** 2 for p in pms)
         + lk.get("extra_inertia_kg_m2", 0.0))
    return m, c, i


def chain_matrices(rig_data, equilibrium):
    """M, D, K of  M q'' + D q' + (g + y_p'') K q = 0  from the chain's Lagrangian.

    Link j's joint sits at the pivot plus sum_{i<j} L_i (sin th_i, cos th_i);
    with all links aligned (both equilibria) the cosines of relative angles are 1:
      M_jj = I_j + L_j^2 B_j,  M_ij = L_i (c_j + L_j B_j) for i < j,
    B_j = mass of the links beyond j. Potential G sum_j k_j cos th_j with
    k_j = c_j + L_j B_j gives K = -diag(k) up, +diag(k) down. Rayleigh
    dissipation 1/2 sum_j d_j (th_j' - th_{j-1}')^2 gives D.
    """
    links = rig_data["links"]
    n = len(links)
    mom = [link_moments(lk) for lk in links]
    lengths = [lk["length_m"] for lk in links]
    beyond = [sum(mom[k][0] for k in range(j + 1, n)) for j in range(n)]
    k = np.array([mom[j][1] + lengths[j] * beyond[j] for j in range(n)])
    mass = np.zeros((n, n))
    for j in range(n):
        mass[j, j] = mom[j][2] + lengths[j] ** 2 * beyond[j]
        for i in range(j):
            mass[i, j] = mass[j, i] = lengths[i] * k[j]
    damp = np.zeros((n, n))
    for j, lk in enumerate(links):
        d = lk.get("joint_damping_N_m_s", 0.0)
        e = np.zeros(n)
        e[j] = 1.0
        if j > 0:
            e[j - 1] = -1.0
        damp += d * np.outer(e, e)
    sign = {"inverted": -1.0, "hanging": 1.0}[equilibrium]
    return mass, damp, sign * np.diag(k)


def properties(rig_data):
    """Mass properties with all links aligned, and the lowest hanging frequency."""
    links = rig_data["links"]
    mom = [link_moments(lk) for lk in links]
    offset, first, inertia = 0.0, 0.0, 0.0
    for lk, (m, c, i) in zip(links, mom):
        first += m * offset + c
        inertia += i + 2 * c * offset + m * offset ** 2  # parallel-axis theorem
        offset += lk["length_m"]
    mass, _, k = chain_matrices(rig_data, "hanging")
    g = rig_data.get("g_m_s2", G_STANDARD)
    w2 = eigh(g * k, mass, eigvals_only=True)
    return {
        "total_mass_kg": sum(m for m, _, _ in mom),
        "link_mass_kg": tuple(m for m, _, _ in mom),
        "first_moment_kg_m": first,
        "inertia_about_pivot_kg_m2": inertia,
        "l_eq_m": inertia / first,
        "hanging_frequency_hz": math.sqrt(min(w2)) / (2 * math.pi),
    }


# ------------------------------------------------------------ pivot motion

class Pivot:
    """Pivot height and its time derivatives from the contract's waveforms."""

    def __init__(self, drive, speed_rpm=None, stroke_m=None):
        self.kind = drive["waveform"]
        self.omega = 2 * math.pi * (speed_rpm if speed_rpm is not None
                                    else drive["speed_rpm"]) / 60.0
        if self.kind == "samples":
            ys = np.asarray(drive["samples_m"], dtype=float)
            given = drive.get("stroke_m")
            ref = given if given is not None else float(ys.max() - ys.min())
            if stroke_m is not None:
                ys = ys * (stroke_m / ref)
            self._fourier(ys)
        else:
            self.r = (stroke_m if stroke_m is not None else drive["stroke_m"]) / 2
            self.rod = drive.get("rod_length_m")

    def _fourier(self, ys):
        # Trigonometric interpolant of N equally spaced samples (phase 2 pi k / N):
        # y = Y0 + sum 2 Re(Y_n e^{i n phi}) + [N even] Y_{N/2} cos(N phi / 2).
        n = len(ys)
        coef = np.fft.rfft(ys) / n
        weight = np.full(len(coef), 2.0)
        weight[0] = 1.0
        if n % 2 == 0:
            weight[-1] = 1.0  # the Nyquist term is a half-weight cosine
            coef[-1] = coef[-1].real
        self.harm = np.arange(len(coef))
        self.coef = coef * weight

    def derivs(self, phi):
        """(y, dy/dphi, d2y/dphi2) at phase phi (scalar or array)."""
        phi = np.asarray(phi, dtype=float)
        if self.kind == "sine":
            r = self.r
            return r * np.cos(phi), -r * np.sin(phi), -r * np.cos(phi)
        if self.kind == "crank":
            # Exact slider-crank, differentiated by hand:
            # S = sqrt(l^2 - r^2 sin^2), S' = -r^2 sin cos / S.
            r, l = self.r, self.rod
            s, c = np.sin(phi), np.cos(phi)
            big_s = np.sqrt(l * l - r * r * s * s)
            y = r * c + big_s - l
            dy = -r * s - r * r * s * c / big_s
            d2y = (-r * c - r * r * (c * c - s * s) / big_s
                   - r ** 4 * s * s * c * c / big_s ** 3)
            return y, dy, d2y
        e = np.exp(1j * np.multiply.outer(phi, self.harm))
        y = (e * self.coef).real.sum(axis=-1)
        dy = (e * self.coef * 1j * self.harm).real.sum(axis=-1)
        d2y = (e * self.coef * -(self.harm ** 2)).real.sum(axis=-1)
        return y, dy, d2y

    def kinematics(self, phi):
        """(y_m, v_m_s, a_m_s2) at phase phi."""
        y, dy, d2y = self.derivs(phi)
        return y, self.omega * dy, self.omega ** 2 * d2y

    def accel(self, t):
        return self.omega ** 2 * self.derivs(self.omega * t)[2]


# --------------------------------------------------------------- monodromy

def monodromy(rig_data, equilibrium, speed_rpm=None, stroke_m=None,
              rtol=1e-12, atol=1e-12, method="DOP853"):
    """One-cycle monodromy of the linearised chain, state (q, q'), t from phase 0.

    scipy.integrate.solve_ivp on the 2N x 2N fundamental matrix.
    """
    mass, damp, stiff = chain_matrices(rig_data, equilibrium)
    n = mass.shape[0]
    g = rig_data.get("g_m_s2", G_STANDARD)
    piv = Pivot(rig_data["drive"], speed_rpm, stroke_m)
    md = np.linalg.solve(mass, damp)
    mk = np.linalg.solve(mass, stiff)

    def rhs(t, x):
        x = x.reshape(2 * n, 2 * n)
        q, p = x[:n], x[n:]
        accel = -md @ p - (g + float(piv.accel(t))) * (mk @ q)
        return np.concatenate([p, accel]).ravel()

    period = 2 * math.pi / piv.omega
    sol = solve_ivp(rhs, (0.0, period), np.eye(2 * n).ravel(), method=method,
                    rtol=rtol, atol=atol)
    assert sol.success, sol.message
    return sol.y[:, -1].reshape(2 * n, 2 * n)



# --------------------------------------------------------------- speed ramp

def ramp_growths(rig_data, equilibrium, a_rpm, b_rpm, rates, phases=8, rtol=1e-12):
    """Growth through a linear speed ramp from a_rpm to b_rpm (drive phase 0 at a_rpm), one
    per rate (rpm/s), as the run-up defines it: the largest singular value (numpy.linalg.svd)
    of the transfer matrix from any of `phases` instants i * min(60 / a, T / 2) / phases after
    the start to any of `phases` instants j * min(60 / b, T / 2) / phases before the end
    (T the ramp's duration), in the norm sum_i z_i^2 + (z_i' / W_i)^2 of the sway modes
    q = X z (scipy.linalg.eigh(K, M): X^T M X = I, kappa_i its eigenvalues) with
    W_i^2 = g |kappa_i| + kappa_i^2 w^2 <(dy/dphi)^2> at each instant's speed w (Kapitza's
    averaged drive, Landau & Lifshitz sec. 30; the mean by scipy.integrate.quad).

    The pivot: y_p(t) = y(phi(t)), phi = w_a t + alpha t^2 / 2, so
    y_p'' = y''(phi) phi'^2 + y'(phi) alpha (chain rule). Every rate is integrated at once
    by scipy.integrate.solve_ivp (DOP853) in a time scaled to each ramp's own segments:
    first cycle, middle, last cycle.
    """
    from scipy.integrate import quad
    rates = np.asarray(rates, dtype=float)
    mass, damp, stiff = chain_matrices(rig_data, equilibrium)
    n = mass.shape[0]
    g = rig_data.get("g_m_s2", G_STANDARD)
    piv = Pivot(rig_data["drive"])
    md, mk = np.linalg.solve(mass, damp), np.linalg.solve(mass, stiff)
    kappa, modes = eigh(stiff, mass)
    to_modes = modes.T @ mass  # X^-1
    slope2 = quad(lambda p: float(piv.derivs(p)[1]) ** 2, 0, 2 * math.pi, limit=200,
                  epsabs=0, epsrel=1e-13)[0] / (2 * math.pi)
    sign = 1.0 if b_rpm >= a_rpm else -1.0
    w_a = 2 * math.pi * a_rpm / 60
    alpha = sign * 2 * math.pi * rates / 60
    duration = abs(b_rpm - a_rpm) / rates
    first = np.minimum(60 / a_rpm, duration / 2) / phases
    last = np.minimum(60 / b_rpm, duration / 2) / phases
    size = 2 * n
    k = len(rates)

    def segment(t0, t1, start, count):
        span = t1 - t0

        def rhs(sig, x):
            t = t0 + sig * span
            phi = w_a * t + alpha * t * t / 2
            _, dy, d2y = piv.derivs(phi)
            gt = g + (w_a + alpha * t) ** 2 * d2y + alpha * dy
            x = x.reshape(k, size, size)
            q, p = x[:, :n], x[:, n:]
            acc = -np.einsum("ij,rjc->ric", md, p) - gt[:, None, None] * np.einsum(
                "ij,rjc->ric", mk, q)
            return (span[:, None, None] * np.concatenate([p, acc], axis=1)).ravel()
        sol = solve_ivp(rhs, (0.0, 1.0), start.ravel(), method="DOP853", rtol=rtol,
                        atol=1e-12 * rtol, t_eval=np.linspace(0.0, 1.0, count))
        assert sol.success, sol.message
        return sol.y.T.reshape(count, k, size, size)

    eye = np.broadcast_to(np.eye(size), (k, size, size)).copy()
    head = segment(np.zeros(k), (phases - 1) * first, eye, phases)  # at i * first
    core = segment((phases - 1) * first, duration - (phases - 1) * last, head[-1], 2)
    tail = segment(duration - (phases - 1) * last, duration, core[-1], phases)[::-1]  # j

    def size_map(t, inverse):  # per ramp: the state (q, q') -> (z, z' / W) at time t
        w = w_a + alpha * t
        freq = np.sqrt(g * np.abs(kappa)[None, :] + kappa[None, :] ** 2 * (w ** 2)[:, None]
                       * slope2)
        out = np.zeros((k, size, size))
        for r in range(k):
            if inverse:
                out[r] = np.block([[modes, np.zeros((n, n))],
                                   [np.zeros((n, n)), modes @ np.diag(freq[r])]])
            else:
                out[r] = np.block([[to_modes, np.zeros((n, n))],
                                   [np.zeros((n, n)), np.diag(1 / freq[r]) @ to_modes]])
        return out

    growth = np.zeros(k)
    for i in range(phases):
        back = np.linalg.inv(head[i]) @ size_map(i * first, True)
        for j in range(phases):
            fwd = size_map(duration - j * last, False) @ tail[j]
            growth = np.maximum(growth, np.linalg.svd(fwd @ back, compute_uv=False)[:, 0])
    return growth

def hill_trace_by_integration(theta0, theta):
    """Trace of the pi-periodic monodromy of Hill's equation u'' + (theta0 + sum_k 2 Re(theta_k
    e^{2ikz})) u = 0 by scipy.integrate.solve_ivp (DOP853, rtol = atol = 1e-13)."""
    def p(z):
        return theta0 + sum(2 * (c * np.exp(2j * (k + 1) * z)).real for k, c in enumerate(theta))

    def rhs(z, y):
        return [y[1], -p(z) * y[0], y[3], -p(z) * y[2]]

    sol = solve_ivp(rhs, (0, math.pi), [1, 0, 0, 1], method="DOP853", rtol=1e-13, atol=1e-13)
    return sol.y[0, -1] + sol.y[3, -1]


def liouville_det(rig_data, equilibrium, speed_rpm=None):
    """det(monodromy) = exp(-integral of trace(M^-1 D) over one cycle) (Liouville's formula)."""
    mass, damp, _ = chain_matrices(rig_data, equilibrium)
    rpm = speed_rpm if speed_rpm is not None else rig_data["drive"]["speed_rpm"]
    return math.exp(-np.trace(np.linalg.solve(mass, damp)) * 60.0 / rpm)


def multipliers(phi):
    return np.linalg.eigvals(np.asarray(phi, dtype=float))


def same_multipliers(got, want, rel):
    """Largest mismatch of two multiplier sets, matched greedily, relative to max(1, |want|)."""
    got = list(got)
    worst = 0.0
    for w in sorted(want, key=abs, reverse=True):
        j = min(range(len(got)), key=lambda i: abs(got[i] - w))
        worst = max(worst, abs(got[j] - w) / max(1.0, abs(w)))
        got.pop(j)
    return worst


# ------------------------------------------------------------------ Mathieu

def mathieu_aq(l_eq, g, stroke_m, speed_rpm, equilibrium):
    """Map q'' -+ (g + y_p'')/l_eq q = 0, y_p = A cos(w t), onto y'' + (a - 2 q cos 2z) y = 0.

    z = w t / 2 gives a = +-4 g / (l_eq w^2) (+ hanging, - inverted) and
    |q| = 2 A / l_eq = stroke / l_eq; the sign of q is a shift of z by pi/2.
    """
    w = 2 * math.pi * speed_rpm / 60.0
    sign = 1.0 if equilibrium == "hanging" else -1.0
    return sign * 4 * g / (l_eq * w * w), stroke_m / l_eq


def char_values(q, count=8):
    """[a_0, b_1, a_1, b_2, a_2, ...] (scipy.special.mathieu_a / mathieu_b), ascending for q > 0."""
    out = []
    for k in range(count):
        out.append(special.mathieu_a(k, q))
        out.append(special.mathieu_b(k + 1, q))
    return out


def transition_q_error(a, q, count=10):
    """Relative distance in q from (a, q) to the nearest Mathieu transition curve a_n(q) or
    b_n(q) (scipy.special), found by scipy.optimize.brentq along q within 1e-3 of q: how far
    a point traced as an edge at fixed a (fixed speed) lies from the true edge. inf if no
    curve crosses a there."""
    curves = [lambda x, n=n: special.mathieu_a(n, x) - a for n in range(count)]
    curves += [lambda x, n=n: special.mathieu_b(n, x) - a for n in range(1, count)]
    best = math.inf
    lo, hi = q * (1 - 1e-3), q * (1 + 1e-3)
    for f in curves:
        if f(lo) * f(hi) <= 0:
            root = brentq(f, lo, hi, xtol=1e-15 * q, rtol=4 * np.finfo(float).eps)
            best = min(best, abs(root / q - 1))
    return best


def char_value_tridiagonal(kind, order, q, size=60):
    """Characteristic value from the recurrences of DLMF 28.4 (a numpy cross-check of scipy)."""
    if kind == "a" and order % 2 == 0:
        diag = [(2.0 * m) ** 2 for m in range(size)]
        off = [q * math.sqrt(2.0)] + [q] * (size - 2)
        pos = order // 2
    elif kind == "a":
        diag = [(2.0 * m + 1) ** 2 for m in range(size)]
        diag[0] += q
        off = [q] * (size - 1)
        pos = order // 2
    elif order % 2 == 1:
        diag = [(2.0 * m + 1) ** 2 for m in range(size)]
        diag[0] -= q
        off = [q] * (size - 1)
        pos = order // 2
    else:
        diag = [(2.0 * m + 2) ** 2 for m in range(size)]
        off = [q] * (size - 1)
        pos = order // 2 - 1
    mat = np.diag(diag) + np.diag(off, 1) + np.diag(off, -1)
    return float(np.sort(np.linalg.eigvalsh(mat))[pos])


def mathieu_band(a, q):
    """Index k of the stable band a_k(q) < a < b_{k+1}(q) holding (a, q), or None."""
    vals = char_values(abs(q))
    for k in range(len(vals) // 2):
        if vals[2 * k] < a < vals[2 * k + 1]:
            return k
        if a <= vals[2 * k + 1]:
            return None
    raise ValueError("a beyond the tabulated bands")


def _band_curves(k):
    return (lambda q: special.mathieu_a(k, q)), (lambda q: special.mathieu_b(k + 1, q))


def speed_window(l_eq, g, stroke_m, speed_rpm, equilibrium, limits):
    """Reference speed window (rpm) of an undamped single link on a sine drive.

    q is fixed by the stroke; a = +-4 g / (l_eq w^2) moves monotonically with
    speed, so each side ends where a meets a bound of its band, or at the limit.
    """
    a, q = mathieu_aq(l_eq, g, stroke_m, speed_rpm, equilibrium)
    k = mathieu_band(a, q)
    if k is None:
        return None
    lo_curve, hi_curve = _band_curves(k)
    sign = 1.0 if equilibrium == "hanging" else -1.0

    def rpm_at(value):  # speed at which a equals value, None if never
        if sign * value <= 0:
            return None
        return 60.0 / (2 * math.pi) * math.sqrt(sign * 4 * g / (l_eq * value))

    edges = [rpm_at(lo_curve(q)), rpm_at(hi_curve(q))]
    lower = [e for e in edges if e is not None and e < speed_rpm]
    upper = [e for e in edges if e is not None and e > speed_rpm]
    lo = max(lower + [limits[0]])
    hi = min(upper + [limits[1]])
    return [lo, hi]


def stroke_window(l_eq, g, stroke_m, speed_rpm, equilibrium, limits, step=1e-3):
    """Reference stroke window (m) of an undamped single link on a sine drive.

    a is fixed by the speed; q = stroke / l_eq moves; each side ends at the first
    crossing of a band bound met moving away (scanned, then scipy.optimize.brentq).
    """
    a, q0 = mathieu_aq(l_eq, g, stroke_m, speed_rpm, equilibrium)
    k = mathieu_band(a, q0)
    if k is None:
        return None
    curves = _band_curves(k)

    def first_edge(q_end):
        qs = np.linspace(q0, q_end, max(2, int(abs(q_end - q0) / step) + 1))
        for qa, qb in zip(qs[:-1], qs[1:]):
            for f in curves:
                fa, fb = f(qa) - a, f(qb) - a
                if fa == 0.0 or fa * fb < 0:
                    return brentq(lambda x: f(x) - a, qa, qb, xtol=1e-15, rtol=1e-15)
        return None

    lo_lim, hi_lim = limits[0] / l_eq, limits[1] / l_eq
    lo = first_edge(lo_lim)
    hi = first_edge(hi_lim)
    return [(lo if lo is not None else lo_lim) * l_eq,
            (hi if hi is not None else hi_lim) * l_eq]


# ------------------------------------- hypothesis strategies: valid rig files

st_lengths = st.floats(0.01, 2.0)
st_masses = st.floats(1e-3, 5.0)


@st.composite
def st_link(draw):
    length = draw(st_lengths)
    # positions and small numbers stay inside the rig file's reach (model/rig.py REACH):
    # a denormal is refused by name, not analysed
    at = st.one_of(st.just(0.0), st.floats(1e-6, 1.0))
    points = draw(st.lists(st.tuples(st.floats(1e-4, 2.0), at), max_size=3))
    return link(
        length,
        draw(st_masses),
        [(m, frac * length) for m, frac in points],
        draw(st.one_of(st.just(0.0), st.floats(1e-9, 1e-2))),
        draw(st.one_of(st.just(0.0), st.floats(1e-9, 1e-2))),
    )


@st.composite
def st_drive(draw):
    kind = draw(st.sampled_from(["sine", "crank", "samples"]))
    rpm = draw(st.floats(300.0, 3600.0))
    stroke = draw(st.floats(1e-3, 0.04))
    if kind == "sine":
        return sine(stroke, rpm)
    if kind == "crank":
        return crank(stroke, draw(st.floats(0.05, 0.5)), rpm)  # 2 l above the stroke limit
    values = draw(st.lists(st.floats(-0.02, 0.02), min_size=8, max_size=80))
    if max(values) - min(values) < 1e-4:  # a flat waveform has no stroke
        values[0] += 1e-3
    return samples(values, rpm)


@st.composite
def st_rig(draw, max_links=3):
    chain = draw(st.lists(st_link(), min_size=1, max_size=max_links))
    return rig(chain, draw(st_drive()),
               limits={"speed_rpm": [100.0, 6000.0], "stroke_m": [0.0, 0.08]},
               g=draw(st.one_of(st.just(G_STANDARD), st.floats(1.0, 25.0))),
               title=draw(st.text(max_size=30)))


def chart_points(c, rng, count):
    """(row, speed, equilibrium, held by the chart) at ``count`` random speeds (log-uniform)
    of random rows but the first, both equilibria; points within 1e-6 of one of the row's
    edges are skipped. For checking a chart's verdicts against the monodromy above."""
    for _ in range(count):
        row = rng.choice(c.rows[1:])
        x = row.speed_min * (row.speed_max / row.speed_min) ** rng.random()
        for eq in ("inverted", "hanging"):
            if any(abs(x - e.x) < 1e-6 * x for e in row.edges[eq]):
                continue
            yield row, x, eq, any(a <= x <= b for a, b in row.stable_intervals(eq))
