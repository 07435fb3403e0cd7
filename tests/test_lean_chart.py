"""The lean chart (issue 15): lean against tilt and against speed, in the core, the CLI and the
bridge, against outside references.

References: the effective potential of Landau & Lifshitz, Mechanics, section 30, with the
pivot's line tilted (small-tilt lean slopes kappa / (kappa -+ 1), derived from it as in
tests/test_tilt.py); scipy.optimize.fsolve shooting over scipy.integrate.solve_ivp (DOP853)
for one point of the chart (tests/test_tilt.py ``reference_orbit``).
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from scipy.integrate import solve_ivp

import refsolvers as ref
import shakestill as ss
from shakestill import bridge, cli
from shakestill.motion.lean_chart import lean_chart
from test_tilt import G, planar_reference, reference_orbit, tilted

LENGTH, A_OVER_L = 0.3, 0.01  # small a/l: the averaging's error is ~1% here (test_tilt.py)


def point_mass_rig(kappa_at_op, speeds=None, tilt=0.0):
    """A 0.05 kg point mass on a light 0.3 m rod, sine stroke 2 a, at the speed where
    kappa = (a omega)^2 / (2 g l) is ``kappa_at_op``."""
    amp = A_OVER_L * LENGTH
    omega = math.sqrt(kappa_at_op * 2 * G * LENGTH) / amp
    rpm = omega * 60 / (2 * math.pi)
    limits = {"speed_rpm": speeds or [rpm / 2, rpm * 1.5], "stroke_m": [0.0, 4 * amp]}
    data = ref.rig([ref.link(LENGTH, 0.0, [(0.05, LENGTH)], 0.0, 2e-5)], ref.sine(2 * amp, rpm),
                   limits)
    return tilted(data, tilt), amp


def kappa_of(amp, rpm):
    omega = 2 * math.pi * rpm / 60
    return (amp * omega) ** 2 / (2 * G * LENGTH)


def test_lean_against_tilt_follows_the_effective_potential_slope():
    # Landau & Lifshitz, Mechanics, sec. 30 (effective potential, pivot line tilted by alpha):
    # lean / alpha -> kappa / (kappa - 1) inverted, kappa / (kappa + 1) hanging as a/l -> 0.
    # At a/l = 0.01 the averaging is good to about 1% (test_tilt.py measures its convergence);
    # tolerance 2%.
    data, _ = point_mass_rig(2.0)
    chart = lean_chart(ss.rig_from_dict(data), max_tilt_deg=0.4, tilts=3, speeds=3)
    for name, want in (("inverted", 2.0 / 1.0), ("hanging", 2.0 / 3.0)):
        for tilt, lean in zip(chart["tilt_deg"][1:], chart["by_tilt"][name]["lean_deg"][1:]):
            assert lean[0] / tilt == pytest.approx(want, rel=0.02)
    # the chart's own estimate is the same formula with l_eq = 0.3 m (a point mass)
    assert chart["estimate"]["inverted"] == pytest.approx(2.0, rel=1e-9)


def test_lean_against_speed_follows_the_effective_potential_at_each_speed():
    # The same slope with kappa at each speed of the axis (Landau & Lifshitz, sec. 30), 1 deg
    # of tilt: inverted only where kappa > 1.25 (nearer kappa = 1 the lean is no longer small
    # and the linear slope does not hold); tolerance 3% (averaging error at a/l = 0.01 grows
    # as kappa -> 1).
    data, amp = point_mass_rig(2.0, tilt=1.0)
    rig = ss.rig_from_dict(data)
    chart = lean_chart(rig, max_tilt_deg=1.0, tilts=3, speeds=9)
    checked = 0
    for rpm, lean in zip(chart["speed_rpm"], chart["by_speed"]["inverted"]["lean_deg"]):
        kappa = kappa_of(amp, rpm)
        if lean is not None and kappa > 1.25:
            assert lean[0] == pytest.approx(kappa / (kappa - 1), rel=0.03)
            checked += 1
        if kappa < 1.0:  # below the Kapitza edge the upright holds no orbit (sec. 30)
            assert lean is None
    for rpm, lean in zip(chart["speed_rpm"], chart["by_speed"]["hanging"]["lean_deg"]):
        kappa = kappa_of(amp, rpm)
        assert lean[0] == pytest.approx(kappa / (kappa + 1), rel=0.03)
    assert checked >= 4
    assert chart["by_speed"]["inverted"]["ends"][0]["why"] == "unstable"


def test_a_chart_point_is_the_orbit_scipy_shooting_finds():
    # One tilt of the chart of a crank-driven link against scipy.optimize.fsolve shooting over
    # solve_ivp DOP853 (1e-13): the mean angle over the reference cycle (dense output, 400
    # points). The chart's Newton stops loosely (corrections below 1e-6), so 1e-4 deg.
    base = ref.rig([ref.link(0.25, 0.04, [(0.025, 0.24)], 0.0, 3e-4)],
                   ref.crank(0.024, 0.08, 2700.0), {"speed_rpm": [2000, 3600],
                                                    "stroke_m": [0, 0.036]})
    chart = lean_chart(ss.rig_from_dict(base), max_tilt_deg=2.0, tilts=3, speeds=3)
    data = tilted(base, 2.0)
    x, _ = reference_orbit(data, np.array([0.05, 0.0]))
    rhs, period = planar_reference(data)
    sol = solve_ivp(rhs, (0, period), x, method="DOP853", rtol=1e-13, atol=1e-13,
                    dense_output=True)
    mean = float(np.mean(sol.sol(np.linspace(0, period, 400, endpoint=False))[0]))
    assert chart["by_tilt"]["inverted"]["lean_deg"][2][0] == pytest.approx(math.degrees(mean),
                                                                           abs=1e-4)


def test_cli_lean_json_and_svg(tmp_path, monkeypatch, capsys):
    # ``shakestill lean --json -o``: the JSON carries the averaging's slope for the rig's
    # l_eq (Landau & Lifshitz sec. 30 with l_eq = 0.3 m for the point mass) and the cautions;
    # the SVG is the picture (one polyline per curve drawn).
    data, _ = point_mass_rig(2.0)
    path = tmp_path / "rig.json"
    path.write_text(json.dumps(data))
    svg = tmp_path / "lean.svg"
    monkeypatch.setattr("sys.argv", ["shakestill", "lean", str(path), "--json", "--tilts", "3",
                                     "--speeds", "3", "--max-tilt", "0.4", "-o", str(svg)])
    assert cli.main() in (0, None)
    out = json.loads(capsys.readouterr().out)
    assert out["estimate"]["hanging"] == pytest.approx(2.0 / 3.0, rel=1e-9)
    assert out["cautions"]
    assert svg.read_text().count("<polyline") == 6  # 2 tilt + 2 estimates + 2 speed


@pytest.mark.parametrize("option,value,fragment", [
    ("--tilts", "2", "3 to 401"), ("--max-tilt", "nan", "not a number"),
    ("--tilt", "1e6", "-90 to 90"), ("--tilt", "1e300", "-90 to 90"),
    ("--max-tilt", "1e300", "outside what this method can resolve")])
def test_cli_lean_refuses_bad_options_by_name(monkeypatch, capsys, option, value, fragment):
    # common practice, no source: every bad option is named with what is allowed
    monkeypatch.setattr("sys.argv", ["shakestill", "lean", option, value])
    assert cli.main() == 2
    err = capsys.readouterr().err
    assert option in err and fragment in err


@pytest.mark.parametrize("field,value", [("tilts", 10 ** 6), ("max_tilt_deg", 1e300),
                                          ("max_tilt_deg", "91 deg"), ("speeds", True)])
def test_lean_op_refuses_bad_fields_by_name(field, value):
    # common practice, no source
    reply = json.loads(bridge.handle(json.dumps({"op": "lean", "rig": ss.demo_rig_dict(),
                                                 field: value})))
    assert reply["ok"] is False and reply["problems"][0]["path"] == field


def test_lean_job_gives_the_chart_of_the_op():
    # The page steps the chart as a motion job; its last reply holds the lean the averaging
    # predicts (Landau & Lifshitz sec. 30, 2% as above).
    data, _ = point_mass_rig(2.0)
    start = json.loads(bridge.handle(json.dumps({"op": "motion_job_start", "kind": "lean",
                                                 "rig": data, "tilts": 3, "speeds": 3,
                                                 "max_tilt_deg": 0.4})))
    reply = {"done": False}
    for _ in range(1000):
        reply = json.loads(bridge.handle(json.dumps({"op": "motion_job_step",
                                                     "job": start["job"], "budget_ms": 500})))
        if reply["done"]:
            break
    lean = reply["result"]["by_tilt"]["inverted"]["lean_deg"][2][0]
    assert lean / 0.4 == pytest.approx(2.0, rel=0.02)
    assert "<svg" in reply["svg"] and reply["cautions"]
