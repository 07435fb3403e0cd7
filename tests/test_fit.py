"""Fitting rig numbers to logged runs, against outside references.

- Logs are made by scipy.integrate.solve_ivp (DOP853, rtol = atol = 1e-12) on the
  independent virtual-work right-hand side of tests/test_motion.py, with known
  damping, plus seeded Gaussian noise: the fit must find the damping it was made with.
- The logarithmic decrement of a lightly damped free decay gives the damping ratio
  from the logged peaks alone (handbook formula: delta = 2 pi zeta / sqrt(1 - zeta^2),
  e.g. Thomson, Theory of Vibration with Applications, sec. 2.6); with the textbook
  inertia and gravity stiffness of a rod and bob, c = 2 zeta sqrt(J k).
- scipy.optimize.least_squares on the same residuals finds the same minimum.
"""
from __future__ import annotations

import json
import math
import random

import numpy as np
import pytest
from scipy.optimize import least_squares
from scipy.signal import find_peaks

import refsolvers as ref
import shakestill as ss
from shakestill import bridge
from shakestill.fit.fitting import _Model, _scales, fit, parameter_paths, with_values
from shakestill.fit.logfile import drive_stopped, read_angle_log
from shakestill.model.rig import RigError
from test_motion import lagrange_rhs, scipy_states

G = ref.G_STANDARD
ROD_M, ROD_L, BOB_M, BOB_AT = 0.04, 0.25, 0.025, 0.24  # invented bench pendulum
TRUE_DAMPING = 4e-4  # N m s, what the logs are made with


def rig_data(damping=1e-4, friction=0.0, speed=2700.0):
    data = ref.rig([ref.link(ROD_L, ROD_M, [(BOB_M, BOB_AT)], 0.0, damping)],
                   ref.sine(0.02, speed))
    data["links"][0]["joint_friction_N_m"] = friction
    return data


def still(_t):
    return 0.0, 0.0, 0.0  # phase, speed, acceleration of a drive standing still


def decay_log(angle0_deg, duration_s=6.0, step_s=0.01, noise_deg=0.0, seed=1):
    """A free decay (drive stopped) of the rig with TRUE_DAMPING, as CSV text in degrees
    from the hanging position, from solve_ivp on the independent equations."""
    times = np.arange(0.0, duration_s + step_s / 2, step_s)
    y0 = [math.pi + math.radians(angle0_deg), 0.0]
    states = scipy_states(rig_data(TRUE_DAMPING), y0, times, speed_of_t=still)
    rng = random.Random(seed)
    rows = [f"{t:.6f},{math.degrees(q - math.pi) + rng.gauss(0.0, noise_deg):.9f}"
            for t, (q, _) in zip(times, states)]
    return "t_s,angle_deg\n" + "\n".join(rows)


def read(text, n=1, reference="hanging"):
    return drive_stopped(read_angle_log(text, n, reference=reference), "test")


def test_fit_finds_the_damping_a_solve_ivp_log_was_made_with():
    # Log: solve_ivp on independent equations, 0.02 deg Gaussian noise. The fit starts at
    # a quarter of the true damping and must land within 3 of its standard errors, which
    # must themselves be small (under 1% of the value): a test that cannot pass by chance.
    rig = ss.rig_from_dict(rig_data(TRUE_DAMPING / 4))
    res = fit(rig, read(decay_log(25.0, noise_deg=0.02)), ["damping"])
    assert res.converged, res.message
    (value,), (err,) = res.values, res.std_errors
    assert err < 0.01 * TRUE_DAMPING
    assert abs(value - TRUE_DAMPING) < 3 * err
    assert res.rms_rad == pytest.approx(math.radians(0.02), rel=0.1)  # the noise is all left


def test_fitted_damping_matches_the_logarithmic_decrement():
    # Small swings (2 deg, nearly linear, no noise): zeta from the decrement of successive
    # peaks of the logged angle (handbook formula), c = 2 zeta sqrt(J k) with the textbook
    # J = m_rod L^2 / 3 + m_bob a^2 and k = g (m_rod L / 2 + m_bob a). Agreement to 1%
    # covers the decrement's peak sampling and the small nonlinearity. The peaks are read at
    # 2 ms; the fit gets every fifth row of the same log (10 ms, as decay_log's other logs):
    # without noise it finds the same damping (to 1e-9 relative, checked 2026-12-04) in a
    # twentieth of the time.
    text = decay_log(2.0, duration_s=8.0, step_s=0.002)
    angles = np.array([float(r.split(",")[1]) for r in text.splitlines()[1:]])
    peaks, _ = find_peaks(angles)
    cycles = len(peaks) - 1
    delta = math.log(angles[peaks[0]] / angles[peaks[-1]]) / cycles
    zeta = delta / math.sqrt(4 * math.pi ** 2 + delta ** 2)
    J = ROD_M * ROD_L ** 2 / 3 + BOB_M * BOB_AT ** 2
    k = G * (ROD_M * ROD_L / 2 + BOB_M * BOB_AT)
    rig = ss.rig_from_dict(rig_data(1e-4))
    rows = text.splitlines()
    res = fit(rig, read("\n".join([rows[0], *rows[1::5]])), ["damping"])
    assert res.values[0] == pytest.approx(2 * zeta * math.sqrt(J * k), rel=0.01)


def test_levenberg_marquardt_agrees_with_scipy_least_squares():
    # The same residuals (damping and friction, start angle and rate) minimised by
    # scipy.optimize.least_squares (trust-region reflective, bounds at 0) from the same
    # start: both minima agree to 1e-5 relative in the physical numbers.
    rig = ss.rig_from_dict(rig_data(1e-4))
    truth = with_values(rig, parameter_paths(rig, ["damping", "friction"]), [TRUE_DAMPING, 3e-4])
    from shakestill import Scenario, simulate
    from shakestill.motion.speed import constant_speed
    run = simulate(truth, Scenario(duration_s=4.0, angles_rad=(math.pi + 0.4,),
                                   rates_rad_s=(0.0,), profile=constant_speed(0.0),
                                   frame_rate_hz=50, strobe_phase_rad=None, rtol=1e-11,
                                   atol=1e-11))
    rng = random.Random(5)
    text = "t_s,angle_rad\n" + "\n".join(f"{t!r},{q[0] - math.pi + rng.gauss(0, 1e-3)!r}"
                                         for t, q in zip(run.t_s, run.angles_rad))
    log = read(text)
    res = fit(rig, log, ["damping", "friction"])
    assert res.converged, res.message
    paths = parameter_paths(rig, ["damping", "friction"])
    model = _Model(rig, log, paths, _scales(rig, paths))
    x0 = [v / s for v, s in zip([1e-4, 0.0], model.scales)] + [log.angles_rad[0][0], 0.0]
    ref_fit = least_squares(lambda x: np.array(model.residuals(list(x))), x0,
                            bounds=([0, 0, -np.inf, -np.inf], np.inf), x_scale=1.0,
                            xtol=1e-12, ftol=1e-12, gtol=1e-12, diff_step=1e-6)
    want = [v * s for v, s in zip(ref_fit.x[:2], model.scales)]
    assert res.values == pytest.approx(want, rel=1e-5)


def test_log_units_and_reference_are_read():
    # ms, rad and Hz headers (common practice: the header names each column's unit);
    # "inverted" logs are absolute angles, "hanging" ones add pi (the rig file's convention).
    text = "# a comment\ntime (ms); theta [rad]; speed (Hz)\n" + "\n".join(
        f"{10 * i}; {0.01 * i}; 45" for i in range(12))
    log = read_angle_log(text, 1, reference="inverted")
    assert log.t_s[3] == pytest.approx(0.03, rel=1e-12)
    assert log.step_s == pytest.approx(0.01, rel=1e-12)
    assert log.angles_rad[2][0] == pytest.approx(0.02, rel=1e-12)
    assert log.speed_rpm[0] == pytest.approx(2700.0, rel=1e-12)
    hanging = read_angle_log("t_s,angle_deg\n" + "\n".join(f"{i},{90}" for i in range(10)), 1)
    assert hanging.angles_rad[0][0] == pytest.approx(math.pi * 1.5, rel=1e-12)


@pytest.mark.parametrize("text, path, fragment", [
    ("t_s,angle_xx\n" + "\n".join(f"{i},0" for i in range(10)), "log.header[1]", "rad or deg"),
    ("t_s,angle_deg\n" + "\n".join(f"{i},{'x' if i == 4 else 0}" for i in range(10)),
     "log[5].angle_deg", "'x' is not a finite number"),
    ("t_s,angle_deg\n" + "\n".join(f"{i * i},0" for i in range(10)), "log[2].t_s",
     "equally spaced"),
    ("t_s,angle1_deg\n" + "\n".join(f"{i},0" for i in range(10)), "log.header",
     "link(s) 2"),
    ("t_s,angle_deg\n0,0\n1,0", "log", "at least 10"),
])
def test_bad_logs_name_the_place_and_what_is_allowed(text, path, fragment):
    n = 2 if "link(s) 2" in fragment else 1
    with pytest.raises(RigError) as info:
        read_angle_log(text, n)
    hits = [p for p in info.value.problems if p.path == path]
    assert hits and fragment in hits[0].message, info.value.problems


def test_columns_the_fit_does_not_read_are_skipped_and_named():
    # A logger's export carries more than the fit reads (common practice, no source): a motor
    # current, a counter, a text note. They are skipped; the angles are the logged degrees
    # turned to radians about the hanging zero (pi + deg * pi / 180, by hand, 1e-15).
    rows = [f"{i},{0.01 * i:.2f},{20.0 - i},{1.5 + i},{'ok' if i % 2 else ''}" for i in range(12)]
    log = read_angle_log("sample,t_s,angle_deg,current_A,note\n" + "\n".join(rows), 1)
    assert log.skipped_columns == ("sample", "current_A", "note")
    assert log.t_s[5] == pytest.approx(0.05, rel=1e-12)
    for i, (angle,) in enumerate(log.angles_rad):
        assert angle == pytest.approx(math.pi + math.radians(20.0 - i), rel=1e-15)
    # a trailing separator (a spreadsheet's export) leaves an unnamed column, named by place
    trailing = read_angle_log("t_s,angle_deg,\n" + "\n".join(f"{i},0," for i in range(10)), 1)
    assert trailing.skipped_columns == ("(unnamed column 3)",)
    assert trailing.angles_rad[4][0] == pytest.approx(math.pi, rel=1e-15)
    # a missing angle names what was skipped: a misspelt header is found at once
    with pytest.raises(RigError) as info:
        read_angle_log("t_s,angel_deg\n" + "\n".join(f"{i},0" for i in range(10)), 1)
    (problem,) = [p for p in info.value.problems if p.path == "log.header"]
    assert "link(s) 1" in problem.message and "'angel_deg'" in problem.message
    # a first row of numbers is still no header
    with pytest.raises(RigError) as info:
        read_angle_log("\n".join(f"{i},0" for i in range(10)), 1)
    assert info.value.problems[0].path == "log.header[0]"
    assert "must name the columns" in info.value.problems[0].message


def test_the_fit_reply_names_the_skipped_columns():
    # The bridge's fit of a log with an extra column: the JSON lists it and the words say it;
    # the fitted damping is the one the log was made with (solve_ivp's decay, noiseless: 1e-4),
    # and equals the fit of the same log without the extra column (1e-12: the same numbers).
    text = decay_log(20.0, duration_s=2.0, step_s=0.02)
    head, *rows = text.strip().splitlines()
    extra = "\n".join([head + ",supply_V"] + [r + ",24.0" for r in rows])
    plain = bridge.call({"op": "fit", "rig": rig_data(2e-4), "log": text, "drive_stopped": True})
    wider = bridge.call({"op": "fit", "rig": rig_data(2e-4), "log": extra, "drive_stopped": True})
    assert plain["ok"] and wider["ok"], (plain, wider)
    assert plain["result"]["skipped_columns"] == []
    assert wider["result"]["skipped_columns"] == ["supply_V"]
    assert wider["result"]["parameters"][0]["value"] == pytest.approx(
        plain["result"]["parameters"][0]["value"], rel=1e-12)
    assert wider["result"]["parameters"][0]["value"] == pytest.approx(TRUE_DAMPING, rel=1e-4)
    assert "Columns of the log not read: supply_V" in wider["report_text"]
    assert "not read" not in plain["report_text"]


def test_cli_and_bridge_give_the_same_fit(tmp_path, monkeypatch, capsys):
    # The command line and the page's bridge run the same fit: equal numbers (1e-12), and
    # the fitted rig file the CLI writes carries the fitted damping.
    from shakestill import cli
    text = decay_log(20.0, duration_s=3.0, step_s=0.02)
    (tmp_path / "run.csv").write_text(text)
    (tmp_path / "rig.json").write_text(json.dumps(rig_data(2e-4)))
    monkeypatch.chdir(tmp_path)
    code = cli.main(["fit", "rig.json", "--log", "run.csv", "--stopped", "--json",
                     "-o", "fitted.json"])
    assert code == 0
    got = json.loads(capsys.readouterr().out)
    reply = bridge.call({"op": "fit", "rig": rig_data(2e-4), "log": text, "drive_stopped": True})
    assert reply["ok"], reply
    assert got["parameters"][0]["value"] == pytest.approx(
        reply["result"]["parameters"][0]["value"], rel=1e-12)
    fitted = ss.load_rig(tmp_path / "fitted.json")
    assert fitted.links[0].joint_damping_N_m_s == pytest.approx(
        got["parameters"][0]["value"], rel=1e-12)
    assert reply["fitted_rig"]["links"][0]["joint_damping_N_m_s"] == pytest.approx(
        got["parameters"][0]["value"], rel=1e-12)


def test_cli_names_bad_options(tmp_path, monkeypatch, capsys):
    from shakestill import cli
    (tmp_path / "run.csv").write_text(decay_log(20.0, duration_s=1.0, step_s=0.05))
    monkeypatch.chdir(tmp_path)
    assert cli.main(["fit", "--log", "run.csv", "--fit", "grip"]) == 2
    assert "--fit: 'grip' is not allowed" in capsys.readouterr().err
    assert cli.main(["fit", "--log", "missing.csv"]) == 2
    assert "--log: 'missing.csv' cannot be read" in capsys.readouterr().err


def test_the_fit_plot_uses_the_logs_own_zero():
    # A log taken from hanging straight down (a 20 deg free swing, tests' decay_log) is
    # plotted as the user logged it: every plotted angle within the log's own range of
    # +-20 deg (not near 180 deg from upright), read back from the SVG's polylines through
    # the axis mapping the reply gives; the axis says which zero it is.
    import xml.etree.ElementTree as ET
    text = decay_log(20.0, duration_s=2.0, step_s=0.02)
    reply = bridge.call({"op": "fit", "rig": rig_data(2e-4), "log": text, "drive_stopped": True,
                         "reference": "hanging"})
    assert reply["ok"], reply
    assert "from hanging straight down" in reply["svg"]
    y = reply["axes"]["y"]
    values = []
    for line in ET.fromstring(reply["svg"]).iter("{http://www.w3.org/2000/svg}polyline"):
        for pair in line.get("points").split():
            py = float(pair.split(",")[1])
            values.append(y["min"] + (py - y["px_min"]) / (y["px_max"] - y["px_min"])
                          * (y["max"] - y["min"]))
    assert values and max(abs(v) for v in values) <= 20.0 * 1.01  # 1%: pixel rounding
    assert max(abs(v) for v in values) >= 19.0


def test_the_fit_report_speaks_in_the_logs_zero_and_meaningful_digits():
    # The report gives the fitted start angle from the log's own zero: a 20 deg free swing
    # logged from hanging (tests' decay_log) starts at +20 deg (0.05 deg: the fit's start
    # angle is a fitted number), not at 200 deg from upright. Fitted numbers carry their
    # standard error to two significant digits and the value to the same decimal place
    # (common practice, no source): a worked value 0.000899768 +- 6.59e-07.
    from shakestill.render.motion_report import with_error
    text = decay_log(20.0, duration_s=2.0, step_s=0.02)
    reply = bridge.call({"op": "fit", "rig": rig_data(2e-4), "log": text, "drive_stopped": True,
                         "reference": "hanging"})
    assert reply["ok"], reply
    words = reply["report_text"]
    line = next(x for x in words.splitlines() if x.startswith("Start of the run"))
    assert "from the hanging position" in line
    angle = float(line.split("angles ")[1].split(" deg")[0])
    assert angle == pytest.approx(20.0, abs=0.05)
    assert with_error(0.000899768, 6.59e-07) == "0.00089977 +- 6.6e-07"
    assert with_error(-2.5e-3, 1.2e-4) == "-0.00250 +- 0.00012"
    assert with_error(12345.0, 10.0) == "12345 +- 10"
