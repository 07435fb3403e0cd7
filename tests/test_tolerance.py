"""Knock tolerance and the basin map against outside references.

- the edges found are checked by scipy.integrate.solve_ivp (DOP853) runs of
  an independently written single-link equation with a terminal event at
  the horizontal: 1 % below the edge recovers, 1 % above the first failure
  falls;
- in Kapitza's regime (small stroke, fast drive) the largest release angle
  and the basin approach the crest and the separatrix of the effective
  potential (Landau & Lifshitz, Mechanics, sec. 30), the error first order in
  A / l;
- the cell map against direct full simulations at sampled points (the
  agreement the map reports, C. S. Hsu, J. Appl. Mech. 47, 1980: cell mapping
  is exact away from the basin's edge, uncertain within a cell of it).
"""
from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import solve_ivp

import refsolvers as ref
import shakestill as ss
from shakestill.motion import basin as bs
from shakestill.motion import tolerance as tl

G = ref.G_STANDARD


def falls_scipy(data, theta0, rate0, run_s):
    """Whether the single link passes the horizontal within run_s (solve_ivp, 1e-10)."""
    lk = data["links"][0]
    m, s, j = ref.link_moments(lk)
    c = lk.get("joint_damping_N_m_s", 0.0)
    pivot = ref.Pivot(data["drive"])
    w = pivot.omega

    def rhs(t, y):
        accel = float(pivot.derivs(w * t)[2]) * w * w
        return [y[1], ((G + accel) * s * math.sin(y[0]) - c * y[1]) / j]

    def horizontal(t, y):
        return abs(y[0]) - math.pi / 2
    horizontal.terminal = True
    sol = solve_ivp(rhs, (0, run_s), [theta0, rate0], method="DOP853", rtol=1e-10, atol=1e-10,
                    events=horizontal)
    assert sol.status in (0, 1), sol.message
    return sol.status == 1


@pytest.fixture(scope="module")
def demo_tolerance():
    rig = ss.demo_rig()
    return rig, tl.tolerance(rig)


def test_demo_edges_hold_under_solve_ivp(demo_tolerance):
    rig, tol = demo_tolerance
    data = ss.demo_rig_dict()
    for edge in (tol.knock, tol.release):
        assert not edge.fragmented, edge.message  # a clean edge: the checks below apply
        assert edge.precision <= 0.01  # the 1 %
    run = tol.run_s
    assert abs(run - max(10.0, 20 / ss.stability(rig, "inverted").slow_frequency_hz)) < 1e-9
    # solve_ivp DOP853 1e-10: 1 % below the edge recovers, 1 % above the first failure falls
    assert not falls_scipy(data, 0.0, 0.99 * tol.max_knock_rad_s, run)
    assert falls_scipy(data, 0.0, 1.01 * tol.knock.failed_at, run)
    assert not falls_scipy(data, 0.99 * tol.max_release_angle_rad, 0.0, run)
    assert falls_scipy(data, 1.01 * tol.release.failed_at, 0.0, run)


def test_result_carries_the_estimates_labelled(demo_tolerance):
    rig, tol = demo_tolerance
    out = tol.as_dict()
    est = ss.estimates(rig)
    assert out["estimates"]["knock_rad_s"] == est.knock_estimate_rad_s
    assert out["estimates"]["release_angle_rad"] == est.crest_angle_rad
    assert "estimate" in out["estimates"]["note"]
    # The effective potential is a guide here (A / l_eq = 0.06): within 15 % (estimates.py)
    assert abs(out["max_knock_rad_s"] / est.knock_estimate_rad_s - 1) < 0.15
    assert abs(out["max_release_angle_rad"] / est.crest_angle_rad - 1) < 0.15


def kapitza_rig(eps, length=0.2):
    amp = eps * length
    omega = math.sqrt(6 * G * length) / amp  # (A w)^2 = 6 g l
    data = ref.rig([ref.link(length, 0.0, [(0.1, length)])],
                   ref.sine(2 * amp, omega * 60 / (2 * math.pi)))
    slow = (amp * omega / (2 * length)) ** 2  # U_eff / J = (g/l) cos X + slow sin^2 X
    return ss.rig_from_dict(data), slow


def test_release_edge_approaches_the_effective_potential_crest():
    # Landau & Lifshitz sec. 30: undamped, a release below the crest of U_eff recovers,
    # above it falls; the exact edge differs by O(A / l). Crest: cos X = g / (2 l slow).
    eps = 0.02
    rig, slow = kapitza_rig(eps)
    crest = math.acos(G / 0.2 / (2 * slow))
    run = tl.run_seconds(rig)
    edge = tl.run_to_end(tl.edge_steps(lambda x: tl.fall_steps(rig, x, 0.0, run), crest / 6,
                                       math.pi / 2))
    assert abs(edge.value / crest - 1) < 2 * eps, (edge.value, crest)  # first order in A / l


def test_basin_map_matches_the_effective_separatrix():
    # Landau & Lifshitz sec. 30: the slow motion keeps E = X'^2 / 2 + U_eff(X) / J; starts
    # inside the separatrix (E below the crest's, |X| below the crest) recover. Cell
    # mapping must agree wherever E is more than 10 % away from the separatrix.
    eps = 0.02
    rig, slow = kapitza_rig(eps)
    crest = math.acos(G / 0.2 / (2 * slow))

    def energy(x, w):
        return 0.5 * w * w + G / 0.2 * math.cos(x) + slow * math.sin(x) ** 2

    top = energy(crest, 0.0)
    fractions, last = [], None
    for fraction, last in bs.basin_steps(rig, size=21, validate=0):
        fractions.append(fraction)
    assert fractions == sorted(fractions) and fractions[-1] == 1.0 and last.complete
    compared = wrong = 0
    for j, w in enumerate(last.rates_rad_s):
        for i, x in enumerate(last.angles_rad):
            e = energy(x, w)
            if abs(e / top - 1) < 0.1 or abs(abs(x) / crest - 1) < 0.1:
                continue
            compared += 1
            wrong += last.recovered[j][i] != (e < top and abs(x) < crest)
    assert compared > 250 and wrong == 0, (wrong, compared)


def test_demo_map_agrees_with_full_simulations():
    # Direct simulation of each sampled start is the reference of the cell map; away from
    # the edge they must agree, at the edge (a grid neighbour disagrees) most of the time.
    rig = ss.demo_rig()
    steps = bs.basin_steps(rig, size=25, validate=24)
    fraction, first = next(steps)
    assert not first.complete and any(v is None for row in first.recovered for v in row)
    last = None
    for fraction, last in steps:
        pass
    v = last.validation
    assert last.complete and len(v["points"]) == 24
    assert v["interior_agreement"] == 1.0, v["points"]
    assert v["edge_agreement"] >= 0.75, v["points"]
    # the map is symmetric under (angle, rate) -> -(angle, rate): the drive is vertical
    grid = np.array([[bool(x) for x in row] for row in last.recovered])
    assert (grid == grid[::-1, ::-1]).all()
    assert grid[12, 12]  # the inverted position at rest recovers


def test_unstable_inverted_position_tolerates_nothing():
    data = ss.demo_rig_dict()
    data["drive"]["speed_rpm"] = 900.0  # below Kapitza's edge for this rig (~1600 rpm)
    rig = ss.rig_from_dict(data)
    tol = tl.tolerance(rig)
    assert not ss.stability(rig, "inverted").stable  # the premise (Floquet)
    assert tol.max_knock_rad_s == 0.0 and tol.max_release_angle_rad == 0.0
    assert "unstable" in tol.message


def test_cli_tolerance_json_with_map(demo_tolerance, monkeypatch, capsys):
    import json
    from test_motion import run_cli
    _, tol = demo_tolerance
    assert run_cli(monkeypatch, ["tolerance", "--json", "--map", "--size", "9",
                                 "--validate", "2"]) == 0
    out = json.loads(capsys.readouterr().out)
    # the same search as the API's (deterministic), and the estimate beside it
    assert out["max_knock_rad_s"] == tol.max_knock_rad_s
    assert out["max_release_angle_rad"] == tol.max_release_angle_rad
    assert out["estimates"]["knock_rad_s"] == ss.estimates(ss.demo_rig()).knock_estimate_rad_s
    basin = out["basin"]
    assert len(basin["recovered"]) == 9 and basin["complete"]
    assert basin["validation"]["agreement"] is not None
    assert run_cli(monkeypatch, ["tolerance", "--size", "2"]) == 2
    assert "--size" in capsys.readouterr().err


def test_bridge_basin_job_steps_and_cancels(monkeypatch):
    from shakestill import bridge
    rig = ss.demo_rig_dict()
    start = bridge.call({"op": "motion_job_start", "kind": "basin", "rig": rig, "size": 9,
                         "validate": 4})
    assert start["ok"], start
    fractions, reply = [], None
    for _ in range(1000):
        reply = bridge.call({"op": "motion_job_step", "job": start["job"], "budget_ms": 50})
        assert reply["ok"], reply
        fractions.append(reply["fraction"])
        if reply["done"]:
            break
    assert reply["done"] and len(fractions) > 2 and fractions == sorted(fractions)
    assert reply["svg"].startswith("<svg") and reply["basin"]["complete"]
    assert len(reply["basin"]["validation"]["points"]) == 4
    # the same map as the API gives in one go (the job only adds pauses)
    direct = bs.basin_map(ss.demo_rig(), size=9, validate=4)
    assert reply["basin"]["recovered"] == [list(r) for r in direct.recovered]
    job = bridge.call({"op": "motion_job_start", "kind": "tolerance", "rig": rig})["job"]
    step = bridge.call({"op": "motion_job_step", "job": job, "budget_ms": 1})
    assert step["ok"] and not step["done"] and 0 <= step["fraction"] < 1
    assert bridge.call({"op": "motion_job_cancel", "job": job})["cancelled"] is True
    gone = bridge.call({"op": "motion_job_step", "job": job})
    assert not gone["ok"] and gone["problems"][0]["path"] == "job"
