"""A drive off vertical (issue 15): rig fields, the held orbit, its lean, against outside references.

References: scipy.optimize.fsolve shooting over scipy.integrate.solve_ivp (DOP853) on
a planar chain written here from its Lagrangian (virtual work, numpy), the
monodromy from its variational equations; Landau & Lifshitz, Mechanics, sec. 30
(effective potential of a rapidly vibrated pendulum, and its problem on a
horizontally vibrated pivot).
"""

from __future__ import annotations

import json
import math
from dataclasses import replace

import numpy as np
import pytest
from scipy.integrate import solve_ivp
from scipy.optimize import fsolve

import refsolvers as ref
import shakestill as ss
from shakestill.equilibria.check import check as vertical_check
from shakestill.motion.lean import check as tilt_check
from shakestill.motion.orbit import held_orbit, solve_orbit

G = ref.G_STANDARD
RIG_LIMITS = {"speed_rpm": [300.0, 3600.0], "stroke_m": [0.0, 0.036]}  # a bench rig's (the
# reference rigs' 10-60000 rpm makes the vertical windows' scan slow)


def tilted(data, tilt=None, side=None, phase=None):
    d = json.loads(json.dumps(data))
    for key, v in (("axis_tilt_deg", tilt), ("side_stroke_m", side), ("side_phase_deg", phase)):
        if v is not None:
            d["drive"][key] = v
    return d


# ------------------------------------------------------------------ rig file


def test_tilt_fields_round_trip_and_default_off():
    base = ref.rig([ref.link(0.25, 0.04, [(0.025, 0.24)], 0.0, 3e-4)], ref.sine(0.024, 2700.0),
                   RIG_LIMITS)
    data = tilted(base, 1.25, 0.001, -30.0)
    data["limits"]["max_lean_deg"] = 4.0
    assert ss.rig_to_dict(ss.rig_from_dict(data)) == data  # common practice, no source
    rig = ss.rig_from_dict(tilted(base, "0.5 deg"))
    assert rig.drive.axis_tilt_deg == 0.5  # a unit string reads as given
    # no tilt fields: the check is exactly today's (the vertical code path is untouched)
    plain = ss.rig_from_dict(base)
    assert json.dumps(tilt_check(plain)) == json.dumps(vertical_check(plain))


@pytest.mark.parametrize("key,value,fragment", [
    ("axis_tilt_deg", 91.0, "-90 to 90 deg"), ("axis_tilt_deg", "a lot", "not a number"),
    ("side_stroke_m", -0.001, "at least 0"), ("side_phase_deg", float("nan"), "finite")])
def test_bad_tilt_fields_are_named(key, value, fragment):
    data = tilted(ref.rig([ref.link(0.2, 0.05)], ref.sine(0.02, 2000.0)))
    data["drive"][key] = value
    with pytest.raises(ss.RigError) as err:
        ss.rig_from_dict(data)
    assert [p.path for p in err.value.problems] == [f"drive.{key}"]
    assert fragment in err.value.problems[0].message


# ------------------------------------------------------------- scipy reference


def planar_reference(data):
    """y' of the chain on a pivot moving in 2-D: virtual work with each link's mass,
    first and second moment (refsolvers.link_moments), pivot (s sin a + x_side, s cos a)."""
    links = data["links"]
    n = len(links)
    mom = [ref.link_moments(lk) for lk in links]
    L = [lk["length_m"] for lk in links]
    damp = [lk.get("joint_damping_N_m_s", 0.0) for lk in links]
    g = data.get("g_m_s2", G)
    d = data["drive"]
    pivot = ref.Pivot(d)
    tilt = math.radians(d.get("axis_tilt_deg", 0.0))
    half, lead = d.get("side_stroke_m", 0.0) / 2, math.radians(d.get("side_phase_deg", 0.0))

    def rhs(t, y):
        q, w = y[:n], y[n:]
        phi = pivot.omega * t
        s2 = pivot.omega ** 2 * float(pivot.derivs(phi)[2])
        field = np.array([s2 * math.sin(tilt) - half * pivot.omega ** 2 * math.cos(phi + lead),
                          s2 * math.cos(tilt) + g])  # pivot acceleration plus gravity
        u = np.array([np.sin(q), np.cos(q)])    # unit vector along each link
        du = np.array([np.cos(q), -np.sin(q)])  # d u / d q
        M = np.zeros((n, n), dtype=y.dtype)
        f = np.zeros(n, dtype=y.dtype)
        for k, (m, c, inertia) in enumerate(mom):
            # link k's element at s: pivot + sum_{j<k} L_j u_j + s u_k; integrals of 1, s, s^2
            # over its mass are m, c, I, so each product of two terms picks one of them
            def coef(a, b):
                return (m, c, inertia)[(a == k) + (b == k)]

            def lever(j):
                return L[j] if j < k else 1.0
            for i in range(k + 1):
                for j in range(k + 1):
                    M[i, j] += coef(i, j) * lever(i) * lever(j) * (du[:, i] @ du[:, j])
                f[i] -= coef(i, -1) * lever(i) * (du[:, i] @ field)
                for j in range(k + 1):  # centripetal parts of the element's acceleration
                    f[i] += coef(i, j) * lever(i) * lever(j) * (du[:, i] @ u[:, j]) * w[j] ** 2
        for j, dj in enumerate(damp):
            r = w[j] - (w[j - 1] if j else 0.0)
            f[j] -= dj * r
            if j:
                f[j - 1] += dj * r
        return np.concatenate([w, np.linalg.solve(M, f)])
    return rhs, 2 * math.pi / pivot.omega


def reference_orbit(data, start):
    """scipy.optimize.fsolve shooting over scipy.integrate.solve_ivp (DOP853, 1e-13), then
    the monodromy from the variational equations (Jacobian of the reference's right-hand
    side taken column by column by the complex step, to round-off)."""
    rhs, period = planar_reference(data)
    size = len(start)

    def flow(x):
        sol = solve_ivp(rhs, (0, period), x, method="DOP853", rtol=1e-13, atol=1e-13)
        return sol.y[:, -1]
    x = fsolve(lambda x: flow(x) - x, start, xtol=1e-13)

    def variational(t, z):
        y, phi = z[:size], z[size:].reshape(size, size)
        jac = np.array([rhs(t, y + 1e-20j * e).imag / 1e-20 for e in np.eye(size)]).T
        return np.concatenate([rhs(t, y), (jac @ phi).ravel()])
    z = solve_ivp(variational, (0, period), np.concatenate([x, np.eye(size).ravel()]),
                  method="DOP853", rtol=1e-13, atol=1e-13).y[:, -1]
    return x, np.linalg.eigvals(z[size:].reshape(size, size))


THREE = [ref.link(0.12, 0.03, [(0.01, 0.12)], 0.0, 1e-4), ref.link(0.10, 0.02, [], 1e-6, 1e-4),
         ref.link(0.08, 0.015, [(0.005, 0.08)], 0.0, 5e-5)]
ORBIT_CASES = [  # (links, drive, equilibrium, tilt, side stroke, side phase)
    ([ref.link(0.25, 0.04, [(0.025, 0.24)], 0.0, 3e-4)], ref.crank(0.024, 0.08, 2700.0),
     "inverted", 2.0, 0.0, 0.0),
    ([ref.link(0.20, 0.04, [(0.01, 0.20)], 2e-6, 1e-4), ref.link(0.15, 0.03, [(0.008, 0.12)], 0.0, 1e-4)],
     ref.sine(0.024, 2700.0), "hanging", 3.0, 0.002, 40.0),
    (THREE, ref.sine(0.006, 2700.0), "hanging", -2.0, 0.0, 0.0),
]


@pytest.mark.parametrize("links,drive,eq,tilt,side,phase", ORBIT_CASES,
                         ids=["1 link inverted crank", "2 links hanging ellipse", "3 links hanging"])
def test_orbit_and_multipliers_match_scipy_shooting(links, drive, eq, tilt, side, phase):
    data = tilted(ref.rig(links, drive), tilt, side, phase)
    orbit = held_orbit(ss.rig_from_dict(data), eq)
    assert orbit.found and orbit.converged, orbit.message
    x, rhos = reference_orbit(data, np.array(orbit.start) + 1e-3)
    assert np.abs(np.array(orbit.start) - x).max() < 1e-8  # scipy fsolve + solve_ivp DOP853
    assert ref.same_multipliers(orbit.multipliers, rhos, 1e-8)  # scipy variational monodromy


# ------------------------------------------------------------- effective potential


def one_link(length, stroke, rpm, tilt, damping=2e-5):
    """A point mass on a light rod (l_eq = length), mass 0.05 kg."""
    return ss.rig_from_dict(tilted(ref.rig([ref.link(length, 0.0, [(0.05, length)], 0.0, damping)],
                                           ref.sine(stroke, rpm)), tilt))


@pytest.mark.parametrize("eq", ["inverted", "hanging"])
def test_small_tilt_lean_follows_the_effective_potential(eq):
    """lean / tilt -> kappa / (kappa - 1) inverted, kappa / (kappa + 1) hanging as a/l -> 0,
    kappa = (A omega)^2 / (2 g l): derived here from the effective potential of Landau &
    Lifshitz, Mechanics, sec. 30, U_eff = m g l cos q + m (A omega)^2 sin^2(q - tilt) / 4."""
    kappa, tilt, length = 2.0, 0.2, 0.3
    errors = []
    for a_over_l in (0.02, 0.01):
        amp = a_over_l * length
        omega = math.sqrt(kappa * 2 * G * length) / amp
        orbit = held_orbit(one_link(length, 2 * amp, omega * 60 / (2 * math.pi), tilt), eq)
        want = kappa / (kappa - 1) if eq == "inverted" else kappa / (kappa + 1)
        errors.append(abs(math.degrees(orbit.lean_rad[0]) / tilt - want) / want)
    assert errors[0] < 0.02 and errors[1] < 0.6 * errors[0]  # within 2%, and converging


def test_horizontal_vibration_hanging_angle_of_landau_lifshitz():
    """Pivot vibrating horizontally (tilt 90 deg): cos(theta) = 2 g l / (a omega)^2 from the
    downward vertical (Landau & Lifshitz, Mechanics, sec. 30, problem), a the amplitude;
    the averaging's error shrinks as a/l -> 0."""
    length, ratio = 0.3, 3.0  # (a omega)^2 = ratio * 2 g l
    errors = []
    for a_over_l in (0.02, 0.01):
        amp = a_over_l * length
        omega = math.sqrt(ratio * 2 * G * length) / amp
        rig = one_link(length, 2 * amp, omega * 60 / (2 * math.pi), 90.0)
        # the tilted branch: continue from a start near the predicted angle
        want = math.acos(1.0 / ratio)
        orbit = solve_orbit(rig, "hanging", start=[math.pi + want, 0.0])
        assert orbit.found and orbit.stable
        errors.append(abs(abs(orbit.lean_rad[0]) - want))
    assert errors[0] < 0.01 and errors[1] < 0.6 * errors[0]  # rad; converging as a/l -> 0


def test_vertical_orbit_is_the_equilibrium_with_its_floquet_multipliers():
    """Tilt 0 (given): the orbit is the equilibrium and the check keeps today's numbers
    (Hill's determinant, scipy-checked in test_ref_monodromy); the orbit's own multipliers
    agree with them to 1e-8 (common practice, no source)."""
    data = tilted(ref.rig([ref.link(0.25, 0.04, [(0.025, 0.24)], 0.0, 3e-4)],
                          ref.crank(0.024, 0.08, 2700.0), RIG_LIMITS), 0.0)
    rig = ss.rig_from_dict(data)
    res = tilt_check(rig)
    plain = vertical_check(rig)
    for eq in ("inverted", "hanging"):
        assert res[eq]["lean_deg"] == [0.0] or abs(res[eq]["lean_deg"][0]) < 1e-10
        for key in ("multipliers", "speed_window_rpm", "stroke_window_m", "stable"):
            assert res[eq][key] == plain[eq][key]
        orbit = held_orbit(rig, eq)
        want = [complex(*z) for z in plain[eq]["multipliers"]]
        assert ref.same_multipliers(orbit.multipliers, want, 1e-8)
    assert res["tilt_tolerance_deg"] > 0


def test_cli_check_json_with_tilt_option(tmp_path, monkeypatch, capsys):
    """``check --json --tilt``: the lean equals the held orbit's (same engine, the CLI adds only
    the option; common practice, no source), and a bad --tilt is named."""
    from shakestill import cli
    data = ref.rig([ref.link(0.25, 0.04, [(0.025, 0.24)], 0.0, 3e-4)], ref.sine(0.024, 2700.0),
                   RIG_LIMITS)
    path = tmp_path / "rig.json"
    path.write_text(json.dumps(data))
    monkeypatch.setattr("sys.argv", ["shakestill", "check", str(path), "--json", "--tilt", "1"])
    assert cli.main() in (0, None)
    out = json.loads(capsys.readouterr().out)
    orbit = held_orbit(ss.rig_from_dict(tilted(data, 1.0)), "inverted")
    assert abs(out["inverted"]["lean_deg"][0] - math.degrees(orbit.lean_rad[0])) < 1e-9
    assert 0 < out["tilt_tolerance_deg"] < 90
    monkeypatch.setattr("sys.argv", ["shakestill", "check", str(path), "--tilt", "95"])
    assert cli.main() != 0
    assert "--tilt" in capsys.readouterr().err


def test_orbit_speed_window_edge_is_where_scipy_loses_the_orbit():
    """Tilted 2 deg, the inverted orbit's low speed end is a fold: the held orbit merges with
    an unstable one and vanishes. At 0.1% above the check's edge scipy.optimize.fsolve over
    solve_ivp (DOP853, 1e-12) finds a periodic orbit that is stable (variational monodromy,
    largest |multiplier| < 1); at 0.1% below it finds none from starts all over the leaning
    range (its residual stays above 1e-6). The edge's own precision is 1e-4 (lean.EDGE_RTOL)."""
    import warnings
    data = tilted(ref.rig([ref.link(0.25, 0.04, [(0.025, 0.24)], 0.0, 3e-4)],
                          ref.crank(0.024, 0.08, 2700.0), RIG_LIMITS), 2.0)
    inv = tilt_check(ss.rig_from_dict(data))["inverted"]
    assert inv["window_ends"]["speed_low"] == "edge"
    edge = inv["speed_window_rpm"][0]
    above = json.loads(json.dumps(data))
    above["drive"]["speed_rpm"] = edge * 1.001
    def misser(d):
        rhs, period = planar_reference(d)
        return lambda x: solve_ivp(rhs, (0, period), x, method="DOP853", rtol=1e-12,
                                   atol=1e-12).y[:, -1] - x
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # near a fold fsolve's last steps are slow: the
        x, rhos = reference_orbit(above, np.array([0.3, 0.0]))  # residual says it is there
    assert np.abs(misser(above)(x)).max() < 1e-9
    assert np.abs(rhos).max() < 1.0
    below = json.loads(json.dumps(data))
    below["drive"]["speed_rpm"] = edge * 0.999
    miss = misser(below)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # fsolve warns that it makes no progress: the point
        for q0 in (0.1, 0.2, 0.3, 0.4, 0.5, 0.7):
            found = fsolve(miss, [q0, 0.0], xtol=1e-12)
            assert np.abs(miss(found)).max() > 1e-6
