"""Nonlinear motion against outside references.

- scipy.integrate.solve_ivp (DOP853, rtol = atol = 1e-12) on a right-hand side
  written here from the Lagrangian by virtual work over mass elements (rods by
  2-point Gauss-Legendre, exact for a uniform rod's quadratic kinetic energy):
  nothing of the engine's equations is used.
- energy conservation with a still pivot and no losses (common practice, no source).
- dry friction: the amplitude of an oscillator with Coulomb torque T_f and
  stiffness k falls by 4 T_f / k per cycle (handbook formula for dry friction,
  e.g. Den Hartog, Mechanical Vibrations, sec. on Coulomb damping), and a link
  whose friction exceeds the gravity torque stays put (common practice, no source).
- Kapitza's effective potential (Landau & Lifshitz, Mechanics, sec. 30).
"""
from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import solve_ivp

import refsolvers as ref
import shakestill as ss
import shakestill as mo
from shakestill.motion.dynamics import phase_kinematics
from shakestill.motion.speed import ramp_profile

G = ref.G_STANDARD
GAUSS = ((0.5 - 0.5 / math.sqrt(3.0), 0.5), (0.5 + 0.5 / math.sqrt(3.0), 0.5))  # on [0, 1]


# ------------------------------------------------------------- independent equations

def elements(rig_data):
    """(link, distance from its joint, mass, drag constant) of every mass element."""
    rho = rig_data.get("air_density_kg_m3", 1.204)
    out = []
    for i, lk in enumerate(rig_data["links"]):
        rod, length = lk.get("rod_mass_kg", 0.0), lk["length_m"]
        out += [(i, x * length, w * rod, 0.0) for x, w in GAUSS if rod]
        out += [(i, p["at_m"], p["mass_kg"],
                 0.5 * rho * p.get("drag_coefficient", 0.0) * p.get("frontal_area_m2", 0.0))
                for p in lk.get("point_masses", [])]
    return out


def lagrange_rhs(rig_data, speed_of_t=None):
    """y' for y = (q, q') by virtual work: sum m J^T (a + g y_hat) + J_extra q'' = Q.

    Element e on link i at s from its joint sits at pivot + sum_k arm[e, k] u(q_k), with
    u = (sin, cos), arm[e, k] = L_k (k < i), s (k = i), 0 beyond; so its Jacobian is
    arm[e] * du/dq and its acceleration J q'' - sum_k arm[e, k] u(q_k) q_k'^2 + y_p'' y_hat.
    """
    links = rig_data["links"]
    n = len(links)
    lengths = np.array([lk["length_m"] for lk in links])
    extra = np.diag([lk.get("extra_inertia_kg_m2", 0.0) for lk in links])
    damp = [lk.get("joint_damping_N_m_s", 0.0) for lk in links]
    elems = elements(rig_data)
    arm = np.array([[lengths[k] if k < i else (s if k == i else 0.0) for k in range(n)]
                    for i, s, _, _ in elems])
    mass = np.array([m for _, _, m, _ in elems])
    drag = [(e, kappa) for e, (_, _, _, kappa) in enumerate(elems) if kappa]
    g = rig_data.get("g_m_s2", G)
    pivot = ref.Pivot(rig_data["drive"])

    def pivot_motion(t):
        if speed_of_t is None:
            _, v, a = pivot.kinematics(pivot.omega * t)
            return float(v), float(a)
        phase, omega, alpha = speed_of_t(t)
        _, dy, d2y = pivot.derivs(phase)
        return float(dy * omega), float(d2y * omega ** 2 + dy * alpha)

    def rhs(t, y):
        q, w = y[:n], y[n:]
        v_piv, a_piv = pivot_motion(t)
        jx, jy = arm * np.cos(q), -arm * np.sin(q)      # E x n: d(x, y)_e / d q_k
        ax = -(arm * np.sin(q)) @ (w * w)               # centripetal part of each a_e
        ay = -(arm * np.cos(q)) @ (w * w) + g + a_piv    # ... plus pivot and gravity
        M = extra + jx.T @ (mass[:, None] * jx) + jy.T @ (mass[:, None] * jy)
        f = -(jx.T @ (mass * ax) + jy.T @ (mass * ay))
        for e, kappa in drag:
            v = np.array([jx[e] @ w, jy[e] @ w + v_piv])
            force = -kappa * np.linalg.norm(v) * v
            f += jx[e] * force[0] + jy[e] * force[1]
        for j, d in enumerate(damp):                     # Rayleigh 1/2 d (q_j' - q_{j-1}')^2
            r = w[j] - (w[j - 1] if j else 0.0)
            f[j] -= d * r
            if j:
                f[j - 1] += d * r
        return np.concatenate([w, np.linalg.solve(M, f)])
    return rhs


def scipy_states(rig_data, y0, times, speed_of_t=None):
    sol = solve_ivp(lagrange_rhs(rig_data, speed_of_t), (0.0, times[-1]), y0, method="DOP853",
                    rtol=1e-12, atol=1e-12, t_eval=times)
    assert sol.success, sol.message
    return sol.y.T


# ------------------------------------------------------------- rigs (invented)

ONE = [ref.link(0.25, 0.04, [(0.025, 0.24)], 0.0, 3e-4)]
TWO = [ref.link(0.20, 0.04, [(0.01, 0.20)], 2e-6, 1e-4), ref.link(0.15, 0.03, [(0.008, 0.12)], 0.0, 1e-4)]
THREE = [ref.link(0.12, 0.03, [(0.01, 0.12)], 0.0, 1e-4), ref.link(0.10, 0.02, [], 1e-6, 1e-4),
         ref.link(0.08, 0.015, [(0.005, 0.08)], 0.0, 5e-5)]
SAMPLES = [0.01 * math.cos(2 * math.pi * k / 12) + 0.002 * math.sin(4 * math.pi * k / 12)
           for k in range(12)]
DRIVES = {"sine": ref.sine(0.024, 2700.0), "crank": ref.crank(0.024, 0.08, 2700.0),
          "samples": ref.samples(SAMPLES, 2700.0)}
# The short three-link chain needs a shorter stroke to keep hanging stable (regular motion).
SHORT = {"sine": ref.sine(0.006, 2700.0), "crank": ref.crank(0.006, 0.08, 2700.0),
         "samples": ref.samples([0.3 * y for y in SAMPLES], 2700.0)}


def undamped(links):
    return [dict(lk, joint_damping_N_m_s=0.0) for lk in links]


CASES = [  # (name, links, drive, initial angles): bounded, regular motions over 50 cycles
    ("1 link inverted sine damped", ONE, "sine", [0.3]),
    ("1 link inverted crank undamped", undamped(ONE), "crank", [0.4]),
    ("1 link inverted samples damped", ONE, "samples", [-0.25]),
    ("2 links hanging sine damped", TWO, "sine", [math.pi - 0.3, math.pi - 0.1]),
    ("2 links hanging crank undamped", undamped(TWO), "crank", [math.pi + 0.2, math.pi]),
    ("2 links hanging samples damped", TWO, "samples", [math.pi - 0.2, math.pi + 0.2]),
    ("3 links hanging sine undamped", undamped(THREE), "sine short", [math.pi - 0.2] * 3),
    ("3 links hanging crank damped", THREE, "crank short", [math.pi + 0.1, math.pi - 0.1, math.pi]),
    ("3 links hanging samples undamped", undamped(THREE), "samples short",
     [math.pi - 0.15, math.pi, math.pi + 0.1]),
]
AGREE = 1e-6  # rad and rad/s: the bound for 50 regular cycles
CYCLES = 50


@pytest.mark.parametrize("name,links,drive,angles", CASES, ids=[c[0] for c in CASES])
def test_trajectory_matches_solve_ivp(name, links, drive, angles):
    kind, _, short = drive.partition(" ")
    drive = (SHORT if short else DRIVES)[kind]
    data = ref.rig(links, drive)
    rig = ss.rig_from_dict(data)
    n = len(links)
    f = drive["speed_rpm"] / 60.0
    rates = [0.5 * (-1) ** i for i in range(n)]
    duration = CYCLES / f
    motion = ss_motion(rig, angles, rates, duration, frame_rate=7.0 * f)
    want = scipy_states(data, angles + rates, np.array(motion.t_s))
    got = np.array([q + w for q, w in zip(motion.angles_rad, motion.rates_rad_s)])
    assert motion.success
    err = np.abs(got - want).max()
    assert err < AGREE, f"{name}: largest difference {err:.3g}"  # solve_ivp DOP853 1e-12


def ss_motion(rig, angles, rates, duration, frame_rate, tol=1e-11, **kw):
    return mo.simulate(rig, mo.Scenario(duration_s=duration, angles_rad=tuple(angles),
                                        rates_rad_s=tuple(rates), frame_rate_hz=frame_rate,
                                        rtol=tol, atol=tol, **kw))


def test_air_drag_matches_solve_ivp():
    links = [dict(lk) for lk in TWO]
    links[1] = dict(links[1], point_masses=[{"mass_kg": 0.008, "at_m": 0.12,
                                             "drag_coefficient": 1.2, "frontal_area_m2": 4e-3}])
    data = ref.rig(links, DRIVES["crank"])
    rig = ss.rig_from_dict(data)
    angles, rates = [math.pi - 0.2, math.pi + 0.1], [1.0, -0.5]
    # |v| v has a kink where the mass's velocity passes zero, which blunts every error
    # estimator there: both solvers need tight tolerances (solve_ivp at 1e-10 is off by 1e-5).
    motion = ss_motion(rig, angles, rates, 50 / 45.0, frame_rate=315.0, tol=1e-12)
    want = scipy_states(data, angles + rates, np.array(motion.t_s))
    got = np.array([q + w for q, w in zip(motion.angles_rad, motion.rates_rad_s)])
    assert np.abs(got - want).max() < AGREE  # solve_ivp DOP853 1e-12, drag on a point mass
    no_drag = ss_motion(ss.rig_from_dict(ref.rig(TWO, DRIVES["crank"])), angles, rates,
                        50 / 45.0, frame_rate=315.0)
    assert np.abs(np.array(no_drag.angles_rad) - got[:, :2]).max() > 100 * AGREE  # drag acts


def test_speed_ramp_matches_solve_ivp():
    # A ramp 1500 -> 2700 rpm over 0.5 s from t = 0.2 s: phase = integral of the speed.
    data = ref.rig(ONE, DRIVES["crank"])
    rig = ss.rig_from_dict(data)
    w0, w1 = 2 * math.pi * 1500 / 60, 2 * math.pi * 2700 / 60
    ta, tb = 0.2, 0.7

    def speed(t):
        if t < ta:
            return w0 * t, w0, 0.0
        alpha = (w1 - w0) / (tb - ta)
        if t < tb:
            tau = t - ta
            return w0 * ta + w0 * tau + 0.5 * alpha * tau ** 2, w0 + alpha * tau, alpha
        return w0 * ta + 0.5 * (w0 + w1) * (tb - ta) + w1 * (t - tb), w1, 0.0

    profile = ramp_profile(1500.0, [(ta, tb - ta, 2700.0)])
    motion = ss_motion(rig, [0.0], [1.0], 1.2, frame_rate=400.0, profile=profile)
    want = scipy_states(data, [0.0, 1.0], np.array(motion.t_s), speed)
    got = np.array([q + w for q, w in zip(motion.angles_rad, motion.rates_rad_s)])
    assert np.abs(got - want).max() < AGREE  # solve_ivp DOP853 1e-12 with the phase integral
    assert motion.speed_rpm[0] == 1500.0 and abs(motion.speed_rpm[-1] - 2700.0) < 1e-9


def test_phase_kinematics_match_drive_module():
    # The fast per-waveform closures against ss.pivot and the reference Pivot (refsolvers).
    for name, d in DRIVES.items():
        rig = ss.rig_from_dict(ref.rig(ONE, d))
        kin = phase_kinematics(rig.drive)
        other = ref.Pivot(d)
        for phi in np.linspace(0, 2 * math.pi, 37):
            got = kin(phi)
            p = ss.pivot(rig.drive, phi, 60 / (2 * math.pi))
            want = [float(x) for x in other.derivs(phi)]
            assert np.allclose(got, (p.y_m, p.v_m_s, p.a_m_s2), rtol=0, atol=1e-14), name
            assert np.allclose(got, want, rtol=0, atol=1e-13), name


# ------------------------------------------------------------- invariants and limits

@pytest.mark.parametrize("links", [ONE, TWO, THREE], ids=["1 link", "2 links", "3 links"])
def test_energy_is_conserved_without_drive_or_losses(links):
    # Still pivot (stroke 0), no damping: E = T + V stays put (common practice, no source).
    data = ref.rig(undamped(links), ref.sine(0.0, 600.0))
    rig = ss.rig_from_dict(data)
    n = len(links)
    motion = ss_motion(rig, [2.0 - 0.3 * i for i in range(n)], [3.0] * n, 5.0, frame_rate=50.0)
    energy = np.array(motion.energy_J)
    scale = np.abs(energy).max()
    assert np.abs(energy - energy[0]).max() < 1e-9 * scale  # relative 1e-9
    # and the engine's energy is the Lagrangian's: T from the mass matrix, V from heights
    q, w = np.array(motion.angles_rad[7]), np.array(motion.rates_rad_s[7])
    assert abs(reference_energy(data, q, w) - energy[7]) < 1e-12 * scale


def reference_energy(data, q, w):
    n = len(q)
    total = 0.5 * sum(lk.get("extra_inertia_kg_m2", 0.0) * w[i] ** 2
                      for i, lk in enumerate(data["links"]))
    lengths = [lk["length_m"] for lk in data["links"]]
    for i, s, m, _ in elements(data):
        arm = [lengths[k] if k < i else (s if k == i else 0.0) for k in range(n)]
        vx = sum(a * math.cos(q[k]) * w[k] for k, a in enumerate(arm))
        vy = -sum(a * math.sin(q[k]) * w[k] for k, a in enumerate(arm))
        height = sum(a * math.cos(q[k]) for k, a in enumerate(arm))
        total += 0.5 * m * (vx * vx + vy * vy) + m * G * height
    return total


def friction_rig(friction, stroke=0.0, length=0.3, mass=0.1):
    data = ref.rig([dict(ref.link(length, 0.0, [(mass, length)]), joint_friction_N_m=friction)],
                   ref.sine(stroke, 600.0))
    return ss.rig_from_dict(data)


def test_link_sticks_when_friction_exceeds_gravity_torque():
    # Common practice, no source: static friction above m g d sin(theta) holds the link.
    theta = 0.5
    torque = 0.1 * G * 0.3 * math.sin(theta)
    held = mo.simulate(friction_rig(1.05 * torque), mo.Scenario(
        duration_s=2.0, angles_rad=(theta,), frame_rate_hz=20.0))
    assert max(abs(q[0] - theta) for q in held.angles_rad) < 1e-12  # no motion at all
    assert [e.kind for e in held.events] == ["stick"] and held.events[0].t_s == 0.0
    slips = mo.simulate(friction_rig(0.95 * torque), mo.Scenario(
        duration_s=0.5, angles_rad=(theta,), frame_rate_hz=20.0))
    assert slips.angles_rad[-1][0] - theta > 0.05  # just below: it falls away
    # a knock frees a held link; it slides and is held again where m g d |sin q| <= T_f
    strong = 0.2
    knocked = mo.simulate(friction_rig(strong), mo.Scenario(
        duration_s=2.0, angles_rad=(theta,), knocks=(mo.Knock(1.0, 3.0),), frame_rate_hz=20.0))
    kinds = [e.kind for e in knocked.events]
    assert kinds[:2] == ["stick", "knock"] and kinds[-1] == "stick"
    end = knocked.end_state[0]
    assert abs(end - theta) > 1.0 and 0.1 * G * 0.3 * abs(math.sin(end)) <= strong


def test_coulomb_friction_loses_four_tf_over_k_per_cycle():
    # Den Hartog's dry-friction decay: each half swing loses 2 T_f / k, a cycle 4 T_f / k,
    # for a small-angle hanging pendulum with k = m g d. Nonlinearity of sin at 0.08 rad
    # changes this by about theta^2 / 12 ~ 5e-4 relative; tolerance 2e-3 of the loss.
    k = 0.1 * G * 0.3
    friction = 0.03 * k * 0.08
    rig = friction_rig(friction)
    motion = mo.simulate(rig, mo.Scenario(duration_s=12.0, angles_rad=(math.pi - 0.08,),
                                          reference="hanging", frame_rate_hz=20000.0,
                                          rtol=1e-12, atol=1e-12))
    dev = np.array([q[0] - math.pi for q in motion.angles_rad])
    peaks = [abs(dev[i]) for i in range(1, len(dev) - 1)
             if abs(dev[i]) >= abs(dev[i - 1]) and abs(dev[i]) > abs(dev[i + 1])
             and abs(dev[i]) > 2 * friction / k]
    losses = [a - b for a, b in zip(peaks, peaks[2:])]  # one full cycle apart
    assert len(losses) >= 10
    for loss in losses:
        assert abs(loss / (4 * friction / k) - 1) < 2e-3, loss
    sticks = [e for e in motion.events if e.kind == "stick"]
    assert len(sticks) == 1  # and it ends held, within T_f / k of hanging
    assert abs(motion.end_state[0] - math.pi) <= friction / k * (1 + 1e-6)
    assert motion.end_state[1] == 0.0


def test_slow_motion_follows_kapitza_effective_potential():
    # Landau & Lifshitz, Mechanics, sec. 30: for a tip mass on a massless rod (l_eq = l)
    # and y_p = A cos(w t), the slow angle X obeys
    #   X'' = (g / l) sin X - (A w / (2 l))^2 sin 2X,
    # with the fast part xi = (A / l) sin X cos(w t) on top. At drive phase pi/2, xi = 0.
    # The averaging is first order in eps = A / l: the error must shrink in proportion.
    length, x0 = 0.2, 0.5
    errors = []
    for eps in (0.02, 0.01):
        amp = eps * length
        omega = math.sqrt(6 * G * length) / amp  # (A w)^2 = 6 g l: well inside Kapitza's region
        data = ref.rig([ref.link(length, 0.0, [(0.1, length)])],
                       ref.sine(2 * amp, omega * 60 / (2 * math.pi)))
        rig = ss.rig_from_dict(data)
        slow = (amp * omega / (2 * length)) ** 2
        period = 2 * math.pi / math.sqrt(2 * slow - G / length)
        start = x0 + eps * math.sin(x0)  # theta = X + xi at phase 0
        motion = mo.simulate(rig, mo.Scenario(duration_s=2 * period, angles_rad=(start,),
                                              strobe_phase_rad=math.pi / 2, frame_rate_hz=0))
        times = np.array(motion.strobe_t_s)
        sol = solve_ivp(lambda t, y: [y[1], G / length * math.sin(y[0]) - slow * math.sin(2 * y[0])],
                        (0, times[-1]), [x0, 0.0], method="DOP853", rtol=1e-12, atol=1e-12,
                        t_eval=times)
        got = np.array([q[0] for q in motion.strobe_angles_rad])
        errors.append(np.abs(got - sol.y[0]).max())
        assert errors[-1] < 3 * eps * x0, (eps, errors[-1])  # first order in A / l
    assert 1.6 < errors[0] / errors[1] < 4.5, errors  # halving eps at least about halves it


# ------------------------------------------------------------- front ends

def run_cli(monkeypatch, argv):
    """cli.main with a parser holding only the motion commands (as cli.py will add them)."""
    from shakestill import cli
    return cli.main(argv)


def test_cli_simulate_frames_match_solve_ivp(tmp_path, monkeypatch, capsys):
    data = ref.rig(ONE, DRIVES["sine"])
    path = tmp_path / "rig.json"
    path.write_text(__import__("json").dumps(data))
    out = tmp_path / "motion.csv"
    code = run_cli(monkeypatch, ["simulate", str(path), "--duration", "0.5s", "--angle", "0.2rad",
                                 "--knock", "100ms:2rad/s", "--fps", "200", "--rtol", "1e-11",
                                 "-o", str(out), "--svg", str(tmp_path / "m.svg")])
    assert code == 0
    rows = np.loadtxt(out, delimiter=",", skiprows=1)
    t, y_piv, q, x1, y1 = rows[:, 0], rows[:, 2], rows[:, 3], rows[:, 5], rows[:, 6]
    # solve_ivp on the independent equations, the knock as a rate step at 0.1 s
    rhs = lagrange_rhs(data)
    a = solve_ivp(rhs, (0, 0.1), [0.2, 0.0], method="DOP853", rtol=1e-12, atol=1e-12,
                  dense_output=True)
    b = solve_ivp(rhs, (0.1, 0.5), a.y[:, -1] + [0.0, 2.0], method="DOP853", rtol=1e-12,
                  atol=1e-12, dense_output=True)
    want = np.array([a.sol(x)[0] if x < 0.1 else b.sol(x)[0] for x in t])
    assert np.abs(q - want).max() < AGREE  # solve_ivp DOP853 1e-12
    pivot = ref.Pivot(data["drive"])
    assert np.abs(y_piv - pivot.kinematics(pivot.omega * t)[0]).max() < 1e-11  # 10 digits
    assert np.abs(x1 - 0.25 * np.sin(q)).max() < 1e-8  # link end: L sin q, y_p + L cos q
    assert np.abs(y1 - (y_piv + 0.25 * np.cos(q))).max() < 1e-8
    assert "knock" in capsys.readouterr().out and (tmp_path / "m.svg").read_text().startswith("<svg")


@pytest.mark.parametrize("argv,option,fragment", [
    (["--knock", "2s:3furlongs"], "--knock", "furlongs"),
    (["--knock", "9s:1rad/s"], "--knock", "between 0 and 5"),
    (["--knock", "1s:1rad/s:2"], "--knock", "from 1 to 1"),
    (["--ramp", "1s:2s"], "--ramp", "AT:OVER:TO"),
    (["--ramp", "2s:1s:100rpm", "--ramp", "1s:1s:stop"], "--ramp", "starts at 1 s"),
    (["--duration=-1s"], "--duration", "above 0"),
    (["--angle", "3 parsecs"], "--angle", "parsecs"),
    (["--set", "1s:1deg,2deg"], "--set", "1 comma-separated"),
    (["--speed-table", "/nonexistent.csv"], "--speed-table", "cannot be read"),
], ids=lambda v: v if isinstance(v, str) else " ".join(v))
def test_cli_bad_options_are_named(monkeypatch, capsys, argv, option, fragment):
    code = run_cli(monkeypatch, ["simulate"] + argv)
    err = capsys.readouterr().err
    assert code == 2 and option in err and fragment in err and "Traceback" not in err


def test_cli_speed_table_is_the_ramp(tmp_path, monkeypatch, capsys):
    # A measured table with the same knots as a ramp gives the same motion (to round-off).
    table = tmp_path / "speed.csv"
    table.write_text("time,speed\n0s,2700rpm\n0.2s,2700rpm\n0.5s,1800rpm\n")
    a, b = tmp_path / "a.csv", tmp_path / "b.csv"
    assert run_cli(monkeypatch, ["simulate", "--knock", "0s:1rad/s", "--duration", "1s",
                                 "--speed-table", str(table), "-o", str(a)]) == 0
    assert run_cli(monkeypatch, ["simulate", "--knock", "0s:1rad/s", "--duration", "1s",
                                 "--ramp", "0.2s:0.3s:1800rpm", "-o", str(b)]) == 0
    ra, rb = np.loadtxt(a, delimiter=",", skiprows=1), np.loadtxt(b, delimiter=",", skiprows=1)
    assert np.abs(ra - rb).max() < 1e-12 and abs(ra[-1, 1] - 1800) < 1e-9


def test_cli_run_up_from_rest_follows_the_ramp_formula(tmp_path, monkeypatch):
    # --start-speed 0 with a ramp over 0.5 s to 1800 rpm: the written speed is 3600 t rpm on
    # the ramp (linear ramp: common practice, no source) and 1800 rpm after it, to 1e-9.
    out = tmp_path / "up.csv"
    assert run_cli(monkeypatch, ["simulate", "--hanging", "--duration", "1s", "--start-speed",
                                 "0rpm", "--ramp", "0s:0.5s:1800rpm", "-o", str(out)]) == 0
    rows = np.loadtxt(out, delimiter=",", skiprows=1)
    t, rpm = rows[:, 0], rows[:, 1]
    want = np.where(t < 0.5, 3600.0 * t, 1800.0)
    assert np.abs(rpm - want).max() < 1e-9 * 1800


def test_bridge_simulate_frames(monkeypatch):
    from shakestill import bridge
    data = ref.rig(TWO, DRIVES["crank"])
    reply = bridge.call({"op": "simulate", "rig": data, "duration_s": "0.3 s",
                         "angles_rad": [math.pi - 0.2, math.pi], "reference": "hanging",
                         "knocks": [{"t_s": "0.1 s", "rate_rad_s": "90 deg/s", "link": 2}],
                         "frame_rate_hz": 100})
    assert reply["ok"], reply
    frames = reply["frames"]
    q = np.array(frames["angles_rad"])
    x, y = np.array(frames["x_m"]), np.array(frames["y_m"])
    pivot = ref.Pivot(data["drive"])
    t = np.array(frames["t_s"])
    assert np.abs(y[:, 0] - pivot.kinematics(pivot.omega * t)[0]).max() < 1e-12
    assert np.abs(x[:, 2] - (0.20 * np.sin(q[:, 0]) + 0.15 * np.sin(q[:, 1]))).max() < 1e-12
    assert [e["link"] for e in reply["events"] if e["kind"] == "knock"] == [2]
    # the knock is a step of pi/2 rad/s in link 2's rate (units: deg/s in the request)
    sol = solve_ivp(lagrange_rhs(data), (0, 0.1), [math.pi - 0.2, math.pi, 0.0, 0.0],
                    method="DOP853", rtol=1e-12, atol=1e-12)
    after = sol.y[:, -1] + [0, 0, 0, math.pi / 2]
    sol2 = solve_ivp(lagrange_rhs(data), (0.1, 0.3), after, method="DOP853", rtol=1e-12,
                     atol=1e-12)
    assert np.abs(q[-1] - sol2.y[:2, -1]).max() < 1e-6  # solve_ivp DOP853 1e-12 (default tol)
    bad = bridge.call({"op": "simulate", "rig": data, "knocks": [{"t_s": "1 furlong"}]})
    paths = {p["path"] for p in bad["problems"]}
    assert not bad["ok"] and {"knocks[0].t_s", "knocks[0].rate_rad_s"} <= paths


def test_bridge_simulate_job_gives_the_one_call_reply(monkeypatch):
    # The job runs the same simulation in pieces: its final frames equal the one-call op's.
    from shakestill import bridge
    request = {"rig": ss.demo_rig_dict(), "duration_s": 4, "knocks": [{"t_s": 0, "rate_rad_s": 3}]}
    whole = bridge.call({"op": "simulate", **request})
    job = bridge.call({"op": "motion_job_start", "kind": "simulate", **request})["job"]
    fractions = []
    while True:
        step = bridge.call({"op": "motion_job_step", "job": job, "budget_ms": 20})
        fractions.append(step["fraction"])
        if step["done"]:
            break
    assert len(fractions) > 2 and fractions == sorted(fractions)
    assert step["frames"] == whole["frames"] and step["events"] == whole["events"]
    # and the motion is the API's, which matches solve_ivp above: 4 s, the knock at 0
    direct = mo.simulate(ss.demo_rig(), mo.Scenario(duration_s=4, rates_rad_s=(3.0,)))
    assert np.allclose(whole["frames"]["angles_rad"], direct.angles_rad, rtol=0, atol=1e-15)


def test_bridge_ramp_from_a_start_speed_by_rate(monkeypatch):
    # start_rpm sets the speed until the first ramp; a ramp may give its rate instead of its time.
    from shakestill import bridge
    base = {"op": "simulate", "rig": ss.demo_rig_dict(), "duration_s": "0.6 s", "frame_rate_hz": 200,
            "reference": "hanging", "angles_rad": ["170 deg"]}
    by_rate = bridge.call({**base, "start_rpm": "0 rpm",
                           "ramps": [{"at_s": "0.1 s", "rate_rpm_s": "6000 rpm/s", "to_rpm": 2700}]})
    assert by_rate["ok"], by_rate
    t, v = by_rate["frames"]["t_s"], by_rate["frames"]["speed_rpm"]
    for ti, vi in zip(t, v):  # the ramp formula v = rate (t - delay), held at the ends (common practice)
        assert vi == pytest.approx(min(2700.0, max(0.0, 6000.0 * (ti - 0.1))), rel=1e-12, abs=1e-9)
    assert v[-1] == pytest.approx(2700.0, rel=1e-12)  # the rig's speed at the end (rad/s round trip)
    # once per cycle on a ramp from rest: phase = alpha (t - 0.1)^2 / 2 = 2 pi k (common practice)
    alpha = 6000.0 * 2 * math.pi / 60
    strobe = [s for s in by_rate["strobe"]["t_s"] if s < 0.55]
    want = [0.0] + [0.1 + math.sqrt(4 * math.pi * k / alpha)
                    for k in range(1, 100) if 0.1 + math.sqrt(4 * math.pi * k / alpha) < 0.55]
    assert len(strobe) == len(want) > 10
    assert np.abs(np.array(strobe) - want).max() < 1e-12
    # the same ramp by its time, (2700 - 0) / 6000 = 0.45 s: the same run
    by_time = bridge.call({**base, "start_rpm": 0,
                           "ramps": [{"at_s": 0.1, "over_s": 0.45, "to_rpm": "2700 rpm"}]})
    assert np.abs(np.array(by_time["frames"]["angles_rad"])
                  - np.array(by_rate["frames"]["angles_rad"])).max() < 1e-12
    # start_rpm alone: that speed throughout
    slow = bridge.call({**base, "start_rpm": "600 rpm"})
    assert set(slow["frames"]["speed_rpm"]) == {600.0}
    bad = bridge.call({**base, "start_rpm": "-5 rpm",
                       "ramps": [{"at_s": "-1", "rate_rpm_s": "fast", "to_rpm": 0},
                                 {"at_s": 1, "over_s": 1, "rate_rpm_s": 10, "to_rpm": 0}]})
    problems = {p["path"]: p["message"] for p in bad["problems"]}
    assert not bad["ok"] and set(problems) == {"start_rpm", "ramps[0].at_s", "ramps[0].rate_rpm_s",
                                               "ramps[1]"}
    assert "'fast'" in problems["ramps[0].rate_rpm_s"] and "rpm/s" in problems["ramps[0].rate_rpm_s"]
    assert "at least 0" in problems["start_rpm"]
    mixed = bridge.call({**base, "start_rpm": 0, "speed_table": {"t_s": [0], "speed_rpm": [100]}})
    assert [p["path"] for p in mixed["problems"]] == ["start_rpm"]
