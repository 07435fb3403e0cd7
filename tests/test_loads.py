"""Loads over a drive cycle against Newton's laws worked independently.

- at rest relative to a sine-driven pivot, the pendulum and carriage need
  (m_total + m_carriage)(g + y_p''): peak (m_total + m_c)(g + A omega^2) with
  A = stroke / 2, mean the weight, power averaging to zero (common practice,
  no source: Newton's second law for a rigid body moving with the pivot);
- in a periodic steady state the pivot force averaged over its period equals
  the total weight (common practice: momentum balance);
- along any motion, the pivot reaction is sum m_e a_e + M g y_hat over the
  mass elements, with the accelerations from the independent virtual-work
  equations of test_motion (scipy/numpy, nothing of the engine's loads);
- a freely turning pendulum's tip speed at the bottom is L w0 and its
  centripetal load m L w0^2 (common practice, no source).
"""
from __future__ import annotations

import math

import numpy as np

import refsolvers as ref
import shakestill as ss
from shakestill.motion.loads import loads
from test_motion import TWO, elements, lagrange_rhs

G = ref.G_STANDARD


def tip_rig(stroke, rpm, damping=0.0, carriage=0.0, limits=None):
    data = ref.rig([ref.link(0.2, 0.0, [(0.1, 0.2)], 0.0, damping)], ref.sine(stroke, rpm))
    data["drive"]["carriage_mass_kg"] = carriage
    if limits:
        data["limits"].update(limits)
    return ss.rig_from_dict(data)


def test_at_rest_needs_total_mass_times_g_plus_a_omega_squared():
    stroke, rpm, carriage = 0.02, 2400.0, 0.35
    rig = tip_rig(stroke, rpm, carriage=carriage)
    out = loads(rig)
    omega = 2 * math.pi * rpm / 60
    total = 0.1 + carriage
    peak = total * ((stroke / 2) * omega ** 2 + G)  # at the bottom of the stroke, phase pi
    assert abs(out["drive_force_N"]["peak"] / peak - 1) < 1e-9  # Newton, 1e-9 relative
    assert abs(out["drive_force_N"]["mean"] / (total * G) - 1) < 1e-9
    assert abs(out["power_W"]["mean"]) < 1e-9 * out["power_W"]["peak"]
    assert out["state"] == "at rest" and out["rotation"] is None


def test_link_axial_loads_at_rest_are_the_mass_beyond_times_g_plus_accel():
    # Two links held up inverted on a sine drive: link i carries M_i (g + y_p''), M_i the
    # mass from its joint outward (common practice, no source); compression when positive.
    rig = ss.rig_from_dict(ref.rig(TWO, ref.sine(0.015, 3000.0)))
    out = loads(rig)
    accel = 0.0075 * (2 * math.pi * 50) ** 2
    masses = [lk["rod_mass_kg"] + sum(p["mass_kg"] for p in lk["point_masses"]) for lk in TWO]
    for i, link in enumerate(out["links"]):
        beyond = sum(masses[i:])
        assert abs(link["max_compression_N"] / (beyond * (G + accel)) - 1) < 1e-9
        assert abs(link["max_tension_N"] / (beyond * (accel - G)) - 1) < 1e-9


def test_periodic_steady_state_averages_to_the_weight():
    # Hanging tip pendulum driven at about twice its natural frequency: parametric
    # resonance grows and saturates into a motion of period two drive cycles.
    rig = tip_rig(0.03, 132.0, damping=2e-3)
    out = loads(rig, equilibrium="hanging", angles_rad=(math.pi - 0.05,), settle_s=60.0,
                cycles=2)
    swing = max(abs(x) for x in out["samples"]["axial_N"][0])
    assert out["pivot_reaction_N"]["horizontal"]["peak"] > 0.05 * swing  # it does swing
    weight = 0.1 * G
    # momentum balance, to 1e-4 of the weight (the transient left after 60 s is ~1e-6 rad)
    assert abs(out["pivot_reaction_N"]["vertical"]["mean"] / weight - 1) < 1e-4
    assert abs(out["pivot_reaction_N"]["horizontal"]["mean"]) < 1e-4 * weight


def test_pivot_reaction_matches_virtual_work_accelerations():
    # A knocked two-link arm on a crank: at each sample, R = sum_e m_e a_e + M g y_hat with
    # a_e = J_e q'' + J_e-dot q' + y_p'' y_hat and q'' from test_motion's equations.
    data = ref.rig(TWO, ref.crank(0.02, 0.08, 2400.0))
    rig = ss.rig_from_dict(data)
    out = loads(rig, equilibrium="hanging", knock_rad_s=4.0, settle_s=0.5, cycles=1,
                points_per_cycle=64)
    import shakestill as mo
    f = 40.0
    run = mo.simulate(rig, mo.Scenario(duration_s=21 / f, angles_rad=(math.pi,) * 2,
                                       rates_rad_s=(4.0, 0.0), frame_rate_hz=64 * f,
                                       reference="hanging"))
    rhs = lagrange_rhs(data)
    pivot = ref.Pivot(data["drive"])
    lengths = [lk["length_m"] for lk in TWO]
    elems = elements(data)
    worst = 0.0
    for k in range(64):
        idx = 20 * 64 + k
        t = run.t_s[idx]
        q, w = np.array(run.angles_rad[idx]), np.array(run.rates_rad_s[idx])
        qdd = rhs(t, np.concatenate([q, w]))[2:]
        a_piv = float(pivot.accel(t))
        fy = 0.0
        for i, s, m, _ in elems:
            arm = [lengths[j] if j < i else (s if j == i else 0.0) for j in range(2)]
            ay = sum(a * (-math.sin(q[j]) * qdd[j] - math.cos(q[j]) * w[j] ** 2)
                     for j, a in enumerate(arm))
            fy += m * (ay + a_piv + G)
        worst = max(worst, abs(out["samples"]["drive_force_N"][k] - fy) / abs(fy))
    assert worst < 1e-6  # relative, per sample


def test_free_rotation_tip_speed_and_centripetal_load():
    # Still pivot, no losses, knocked at the bottom with w0 above 2 sqrt(g / L): it turns
    # for ever; at the bottom the tip moves at L w0 and needs m L w0^2 toward the pivot.
    rig = tip_rig(0.0, 600.0)
    w0 = 2.5 * math.sqrt(G / 0.2)
    out = loads(rig, equilibrium="hanging", knock_rad_s=w0, settle_s=1.0, cycles=20,
                points_per_cycle=2048)
    assert out["state"] == "rotating" and out["rotation"]["turns"][0] > 1
    assert abs(out["rotation"]["tip_speed_m_s"] / (0.2 * w0) - 1) < 1e-5  # sampled peak
    assert abs(out["rotation"]["centripetal_load_N"] / (0.1 * 0.2 * w0 ** 2) - 1) < 1e-5


def test_limit_flags():
    rig = tip_rig(0.02, 2400.0, limits={"max_force_N": 50.0, "max_power_W": 1e4,
                                        "max_accel_m_s2": 100.0})
    out = loads(rig)
    flags = {f["limit"]: f for f in out["flags"]}
    assert flags["max_force_N"]["exceeded"]  # peak about 64 N (first test's formula)
    assert not flags["max_power_W"]["exceeded"]
    accel = 0.01 * (2 * math.pi * 40) ** 2  # A omega^2 = 632 m/s^2 > 100
    assert flags["max_accel_m_s2"]["exceeded"] and abs(flags["max_accel_m_s2"]["value"] / accel - 1) < 1e-9
    assert any("Local codes" in c for c in out["cautions"])


def test_cli_and_bridge_loads(monkeypatch, capsys, tmp_path):
    import json
    from shakestill import bridge
    from test_motion import run_cli
    data = ref.rig([ref.link(0.2, 0.0, [(0.1, 0.2)])], ref.sine(0.02, 2400.0))
    data["drive"]["carriage_mass_kg"] = 0.35
    path = tmp_path / "rig.json"
    path.write_text(json.dumps(data))
    peak = 0.45 * (0.01 * (2 * math.pi * 40) ** 2 + G)  # (m + m_c)(g + A w^2), Newton
    assert run_cli(monkeypatch, ["loads", str(path), "--json", "--svg",
                                 str(tmp_path / "l.svg")]) == 0
    out = json.loads(capsys.readouterr().out)
    assert abs(out["drive_force_N"]["peak"] / peak - 1) < 1e-9
    assert (tmp_path / "l.svg").read_text().startswith("<svg")
    assert run_cli(monkeypatch, ["loads", str(path)]) == 0
    text = capsys.readouterr().out
    assert f"peak {peak:.4g} N" in text and "Safety:" in text
    reply = bridge.call({"op": "loads", "rig": data, "cycles": 2})
    assert reply["ok"] and abs(reply["result"]["drive_force_N"]["peak"] / peak - 1) < 1e-9
    bad = bridge.call({"op": "loads", "rig": data, "cycles": 0, "knock_rad_s": "3 m"})
    assert {p["path"] for p in bad["problems"]} == {"cycles", "knock_rad_s"}
