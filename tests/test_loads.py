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

import copy
import math

import numpy as np
import pytest

import refsolvers as ref
import shakestill as ss
from shakestill.motion.loads import loads
from shakestill.render.motion_report import loads_text
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


def test_mean_power_at_rest_is_zero_not_rounding_noise():
    # Over whole cycles a drive that only shakes a body at rest does no net work (energy of a
    # periodic motion with nothing dissipated; common practice, no source): the mean is 0 W,
    # not the 1e-14 W that summing 256 samples of +-100 W leaves, and the words say 0 W.
    for rpm in (2400.0, 2700.0, 3100.0):
        out = loads(tip_rig(0.02, rpm, carriage=0.35))
        assert out["power_W"]["peak"] > 10.0 and out["power_W"]["mean"] == 0.0
    assert "mean 0 W" in loads_text(out)


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


def newton_at_rest(stroke, rpm, mass, carriage, k=0.0, cycles=1, points=64):
    """Per sample (drive phase 2 pi j / points) of a pendulum held at rest on a sine pivot
    y_p = (stroke/2) cos(phase): drive force (m + m_c)(g + y_p'') + k |y_p'| y_p' (Newton's
    second law for a rigid body moving with the pivot, plus the drag equation
    F = 1/2 rho C_d A v^2 against the motion: common practice, no source) and power F y_p'."""
    omega, half = 2 * math.pi * rpm / 60, stroke / 2
    phase = 2 * math.pi * np.arange(cycles * points) / points
    v, a = -half * omega * np.sin(phase), -half * omega ** 2 * np.cos(phase)
    force = (mass + carriage) * (G + a) + k * np.abs(v) * v
    return phase, force, force * v


def stats(x):
    """peak, rms, mean, min, max of samples, by numpy."""
    x = np.asarray(x, dtype=float)
    return {"peak": np.max(np.abs(x)), "rms": np.sqrt(np.mean(x * x)), "mean": np.mean(x),
            "min": np.min(x), "max": np.max(x)}


def test_every_sample_and_statistic_at_rest_follows_newton():
    # Two cycles of 64 samples: each sample of the drive force, power and pivot reaction, and
    # peak/rms/mean/min/max over them, against Newton (newton_at_rest) and numpy's statistics
    # of the same samples, 1e-9 relative to the largest value.
    stroke, rpm, carriage = 0.02, 2400.0, 0.35
    out = loads(tip_rig(stroke, rpm, carriage=carriage), cycles=2, points_per_cycle=64)
    phase, force, power = newton_at_rest(stroke, rpm, 0.1, carriage, cycles=2)
    assert np.allclose(out["samples"]["phase_rad"], phase, rtol=0, atol=1e-12)
    for got, want in ((out["samples"]["drive_force_N"], force), (out["samples"]["power_W"], power)):
        scale = np.max(np.abs(want))
        assert len(got) == 128 and np.max(np.abs(np.array(got) - want)) < 1e-9 * scale
    for key, want in (("drive_force_N", force), ("power_W", power)):
        ref_stats, scale = stats(want), np.max(np.abs(want))
        for name, value in out[key].items():
            assert abs(value - ref_stats[name]) < 1e-9 * scale, (key, name)
    vertical = force - carriage * (G - 0.01 * (2 * math.pi * 40) ** 2 * np.cos(phase))
    ref_stats = stats(vertical)
    for name, value in out["pivot_reaction_N"]["vertical"].items():
        assert abs(value - ref_stats[name]) < 1e-9 * ref_stats["peak"], name
    assert all(abs(v) < 1e-12 for v in out["pivot_reaction_N"]["horizontal"].values())
    # the echo of the rig and run: inputs, weight (m + m_c) g, peak y_p'' = A omega^2
    assert (out["speed_rpm"], out["stroke_m"], out["frequency_hz"]) == (rpm, stroke, 40.0)
    assert (out["equilibrium"], out["cycles"], out["settle_s"]) == ("inverted", 2, 0.0)
    assert out["total_mass_kg"] == pytest.approx(0.1, rel=1e-12)
    assert out["carriage_mass_kg"] == carriage
    assert out["weight_N"] == pytest.approx((0.1 + carriage) * G, rel=1e-12)
    assert out["peak_accel_m_s2"] == pytest.approx(0.01 * (2 * math.pi * 40) ** 2, rel=1e-12)
    assert out["success"] and out["events"] == [] and out["flags"] == []
    assert "guide_force_N" not in out and "axis_tilt_deg" not in out


def test_air_drag_at_rest_adds_the_drag_equation_to_the_drive_force():
    # A bob with C_d A = 0.5 * 0.01 m^2 in air of 1.2 kg/m^3, held up at rest: the drag on it
    # is vertical (no torque), so it stays at rest and the drive must add 1/2 rho C_d A |v| v
    # (drag equation) to Newton's force, sample by sample; 1e-9 of the peak.
    data = ref.rig([ref.link(0.2, 0.0, [(0.1, 0.2)])], ref.sine(0.04, 3000.0))
    data["links"][0]["point_masses"][0].update(drag_coefficient=0.5, frontal_area_m2=0.01)
    data["air_density_kg_m3"] = 1.2
    out = loads(ss.rig_from_dict(data), points_per_cycle=64)
    k = 0.5 * 1.2 * 0.5 * 0.01
    _, force, power = newton_at_rest(0.04, 3000.0, 0.1, 0.0, k=k)
    _, plain, _ = newton_at_rest(0.04, 3000.0, 0.1, 0.0)
    assert np.max(np.abs(force - plain)) > 1e-4 * np.max(np.abs(plain))  # drag shows
    got = np.array(out["samples"]["drive_force_N"])
    assert np.max(np.abs(got - force)) < 1e-9 * np.max(np.abs(force))
    got = np.array(out["samples"]["power_W"])
    assert np.max(np.abs(got - power)) < 1e-9 * np.max(np.abs(power))
    # the axial load of the link carries the drag too: its peak compression is the force's max
    assert out["links"][0]["max_compression_N"] == pytest.approx(np.max(force), rel=1e-9)


def test_limit_flags_give_value_margin_and_words():
    # margin = (limit - value) / limit in per cent (common practice, no source), the value
    # being the peak the same reply reports; a limit not given raises no flag.
    rig = tip_rig(0.02, 2400.0, limits={"max_force_N": 50.0, "max_power_W": 1e4,
                                        "max_accel_m_s2": 700.0})
    out = loads(rig)
    flags = {f["limit"]: f for f in out["flags"]}
    assert set(flags) == {"max_force_N", "max_power_W", "max_accel_m_s2"}
    accel = 0.01 * (2 * math.pi * 40) ** 2  # A omega^2 = 631.7 m/s^2, below 700
    assert flags["max_accel_m_s2"]["message"] == (f"peak pivot acceleration {accel:.4g} m/s^2 "
                                                  "is within the limit of 700 m/s^2")
    assert len(out["samples"]["drive_force_N"]) == 256  # the documented default per cycle
    force, power = out["drive_force_N"]["peak"], out["power_W"]["peak"]
    assert flags["max_force_N"]["value"] == force and flags["max_power_W"]["value"] == power
    assert flags["max_force_N"]["limit_value"] == 50.0
    assert flags["max_force_N"]["margin_percent"] == pytest.approx((50.0 - force) / 50.0 * 100,
                                                                   rel=1e-12)
    assert flags["max_power_W"]["margin_percent"] == pytest.approx((1e4 - power) / 1e4 * 100,
                                                                   rel=1e-12)
    assert flags["max_force_N"]["message"] == (f"peak drive force {force:.4g} N EXCEEDS the "
                                               "limit of 50 N")
    assert flags["max_power_W"]["message"] == (f"peak drive power {power:.4g} W is within the "
                                               "limit of 1e+04 W")
    assert not flags["max_power_W"]["exceeded"]
    at = loads(tip_rig(0.02, 2400.0, limits={"max_force_N": force}))["flags"][0]
    assert not at["exceeded"] and at["margin_percent"] == 0.0  # at the limit is not over it
    # the force limit not given: the later limits still flag (A omega^2 as above)
    later = loads(tip_rig(0.02, 2400.0, limits={"max_accel_m_s2": 600.0}))["flags"]
    assert [(f["limit"], f["exceeded"]) for f in later] == [("max_accel_m_s2", True)]
    assert later[0]["value"] == pytest.approx(accel, rel=1e-12)


@pytest.mark.parametrize("options, words", [
    ({"equilibrium": "sideways"}, "equilibrium: 'sideways' is not one of ('inverted', 'hanging')"),
    ({"cycles": 0}, "cycles: 0 must be a whole number from 1 to 1000"),
    ({"cycles": 1001}, "cycles: 1001 must be a whole number from 1 to 1000"),
    ({"cycles": 2.0}, "cycles: 2.0 must be a whole number from 1 to 1000"),
    ({"points_per_cycle": 7}, "points_per_cycle: 7 must be from 8 to 4096"),
    ({"points_per_cycle": 4097}, "points_per_cycle: 4097 must be from 8 to 4096"),
    ({"points_per_cycle": 64.0}, "points_per_cycle: 64.0 must be from 8 to 4096"),
])
def test_bad_options_name_the_field_and_what_is_allowed(options, words):
    with pytest.raises(ValueError) as info:
        loads(tip_rig(0.02, 2400.0), **options)
    assert str(info.value) == words


def test_the_ends_of_the_allowed_options_are_accepted():
    # 1 and 1000 cycles, 8 and 4096 points are allowed (the messages above): one cycle of 8
    # samples and one of 4096 still follow Newton (newton_at_rest), 1e-9 of the peak.
    for points in (8, 4096):
        out = loads(tip_rig(0.02, 2400.0), points_per_cycle=points)
        _, force, _ = newton_at_rest(0.02, 2400.0, 0.1, 0.0, points=points)
        got = np.array(out["samples"]["drive_force_N"])
        assert len(got) == points and np.max(np.abs(got - force)) < 1e-9 * np.max(force)
    assert len(loads(tip_rig(0.0, 600.0), cycles=1000, points_per_cycle=8)
               ["samples"]["drive_force_N"]) == 8000


def test_a_knock_that_dies_away_is_moving_and_the_settling_time_is_whole_cycles():
    # A damped hanging tip pendulum knocked at 1 rad/s: after 0.5 s (20 whole cycles of the
    # 40 Hz drive) it still swings but does not turn over ("moving", no rotation); 0.51 s
    # rounds up to 21 cycles, 0.525 s (whole cycles: the window starts at drive phase 0).
    rig = tip_rig(0.002, 2400.0, damping=1e-3)
    out = loads(rig, equilibrium="hanging", knock_rad_s=1.0, settle_s=0.5, points_per_cycle=16)
    assert out["state"] == "moving" and out["rotation"] is None
    assert out["settle_s"] == 0.5
    late = loads(rig, equilibrium="hanging", knock_rad_s=1.0, settle_s=0.51, points_per_cycle=16)
    assert late["settle_s"] == pytest.approx(21 / 40, rel=1e-12)
    assert out["pivot_reaction_N"]["horizontal"]["peak"] > 1e-3  # it swings


def test_every_load_off_vertical_with_drag_is_newton_on_the_reported_motion():
    # Two links (rods and bobs, tests' TWO) knocked on a sine drive tilted 3 deg with a side
    # stroke, a carriage, and air drag on the second bob. From the run's own frames (the same
    # start, 512 per cycle), each mass element's acceleration is the pivot's (the rig file's
    # path, as test_tilt_motion's pivot) plus sum_j arm_j u_j'' with q'' by central differences
    # of the reported rates (numpy.gradient, O(h^2) ~ 3e-5); the force at joint i is Newton's
    # sum m_e (a_e + g y_hat) over the elements beyond it, less the drag equation's
    # -1/2 rho C_d A |v| v on them. Drive force and guide force are the whole pivot force plus
    # m_c (a_p + g y_hat) along the axis (sin a, cos a) and across it (cos a, -sin a), power
    # that force times the pivot velocity, axial loads the joint forces along u_i; every
    # sample to 1e-4 of its largest value.
    tilt, side, lead, stroke, rpm, carriage = 3.0, 0.002, 30.0, 0.012, 2700.0, 0.2
    data = ref.rig(copy.deepcopy(TWO), ref.sine(stroke, rpm))  # TWO is shared: not in place
    data["links"][1]["point_masses"][0].update(drag_coefficient=1.0, frontal_area_m2=0.02)
    data["drive"].update(axis_tilt_deg=tilt, side_stroke_m=side, side_phase_deg=lead,
                         carriage_mass_kg=carriage)
    rig = ss.rig_from_dict(data)
    start, rates, points, f = (math.pi + 0.1, math.pi), (3.0, 0.0), 512, rpm / 60
    out = loads(rig, equilibrium="hanging", angles_rad=start, rates_rad_s=rates, settle_s=0.1,
                points_per_cycle=points)  # settles ceil(0.1 * 45) = 5 whole cycles
    run = ss.simulate(rig, ss.Scenario(duration_s=6 / f, angles_rad=start, rates_rad_s=rates,
                                       frame_rate_hz=points * f, strobe_phase_rad=None,
                                       reference="hanging"))
    window = range(5 * points, 6 * points)
    t = np.array(run.t_s)
    q, w = np.array(run.angles_rad), np.array(run.rates_rad_s)
    qdd = np.gradient(w, t, axis=0)
    omega, a, ld = 2 * math.pi * f, math.radians(tilt), math.radians(lead)
    e, n = np.array([math.sin(a), math.cos(a)]), np.array([math.cos(a), -math.sin(a)])
    lengths = [lk["length_m"] for lk in TWO]
    want = {"drive_force_N": [], "guide_force_N": [], "power_W": [], "axial": [[], []]}
    for k in window:
        tk = t[k]
        s1 = -stroke / 2 * omega * math.sin(omega * tk)
        s2 = -stroke / 2 * omega ** 2 * math.cos(omega * tk)
        v_p = s1 * e + np.array([-side / 2 * omega * math.sin(omega * tk + ld), 0.0])
        a_p = s2 * e + np.array([-side / 2 * omega ** 2 * math.cos(omega * tk + ld), 0.0])
        joint = [np.zeros(2), np.zeros(2)]
        for i, s, m, kappa in elements(data):
            arm = [lengths[j] if j < i else (s if j == i else 0.0) for j in range(2)]
            u1 = [np.array([math.cos(q[k, j]), -math.sin(q[k, j])]) for j in range(2)]
            u2 = [np.array([math.cos(q[k, j]) * qdd[k, j] - math.sin(q[k, j]) * w[k, j] ** 2,
                            -math.sin(q[k, j]) * qdd[k, j] - math.cos(q[k, j]) * w[k, j] ** 2])
                  for j in range(2)]
            vel = v_p + sum(arm[j] * w[k, j] * u1[j] for j in range(2))
            force = m * (a_p + sum(arm[j] * u2[j] for j in range(2)) + np.array([0.0, G])) \
                + kappa * np.linalg.norm(vel) * vel
            for j in range(i + 1):
                joint[j] = joint[j] + force
        total = joint[0] + carriage * (a_p + np.array([0.0, G]))
        want["drive_force_N"].append(total @ e)
        want["guide_force_N"].append(total @ n)
        want["power_W"].append(total @ v_p)
        for j in range(2):
            want["axial"][j].append(joint[j] @ np.array([math.sin(q[k, j]), math.cos(q[k, j])]))
    got = out["samples"]
    for key, values, ref_values in [(k, got[k], np.array(want[k]))
                                    for k in ("drive_force_N", "guide_force_N", "power_W")] + [
            (j, got["axial_N"][j], np.array(want["axial"][j])) for j in range(2)]:
        scale = np.max(np.abs(ref_values))
        assert np.max(np.abs(np.array(values) - ref_values)) < 1e-4 * scale, key
        if key in (0, 1):
            link = out["links"][key]
            assert abs(link["max_compression_N"] - max(0.0, ref_values.max())) < 1e-4 * scale
            assert abs(link["max_tension_N"] - max(0.0, -ref_values.min())) < 1e-4 * scale
    assert out["axis_tilt_deg"] == tilt and out["state"] == "moving"
    assert out["guide_force_N"]["peak"] == pytest.approx(np.max(np.abs(want["guide_force_N"])),
                                                         rel=1e-4)


def test_a_turning_two_link_chain_reports_the_tip_speed_and_centripetal_load_of_its_frames():
    # A two-link chain (tests' TWO) knocked hard enough to turn over, on a drive tilted 5 deg
    # (the pivot moves along (sin a, cos a) by (stroke/2) cos(omega t)). From the run's own
    # frames: the tip's speed by central differences of its positions, pivot plus sum L_k
    # (sin q_k, cos q_k) (numpy.gradient), and the centripetal load as Newton's sum over the
    # mass elements of m_e times the velocity-squared part of their acceleration,
    # -sum_j arm_j w_j^2 (sin q_j, cos q_j); the largest over the window, to 1e-4 relative.
    data = ref.rig(TWO, ref.sine(0.01, 600.0))
    data["drive"]["axis_tilt_deg"] = 5.0
    rig = ss.rig_from_dict(data)
    points, f = 256, 10.0
    out = loads(rig, equilibrium="hanging", angles_rad=(math.pi,) * 2, knock_rad_s=25.0,
                settle_s=0.2, cycles=2, points_per_cycle=points)  # not the held orbit: given
    assert out["state"] == "rotating" and max(out["rotation"]["turns"]) >= 1
    run = ss.simulate(rig, ss.Scenario(duration_s=4 / f, angles_rad=(math.pi,) * 2,
                                       rates_rad_s=(25.0, 0.0), frame_rate_hz=points * f,
                                       strobe_phase_rad=None, reference="hanging"))
    t, q, w = np.array(run.t_s), np.array(run.angles_rad), np.array(run.rates_rad_s)
    lengths = [lk["length_m"] for lk in TWO]
    u = [np.stack([np.sin(q[:, j]), np.cos(q[:, j])], axis=1) for j in range(2)]
    along = 0.005 * np.cos(2 * math.pi * f * t)
    pivot = np.stack([along * math.sin(math.radians(5.0)), along * math.cos(math.radians(5.0))],
                     axis=1)
    tip = pivot + lengths[0] * u[0] + lengths[1] * u[1]
    speed = np.linalg.norm(np.gradient(tip, t, axis=0), axis=1)
    central = np.zeros((len(t), 2))
    for i, s, m, _ in elements(data):
        for j in range(i + 1):
            arm = lengths[j] if j < i else s
            central += m * arm * w[:, [j]] ** 2 * u[j]
    window = slice(2 * points, 4 * points)
    assert out["rotation"]["tip_speed_m_s"] == pytest.approx(np.max(speed[window]), rel=1e-4)
    assert out["rotation"]["centripetal_load_N"] == pytest.approx(
        np.max(np.linalg.norm(central[window], axis=1)), rel=1e-4)
