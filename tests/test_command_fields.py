"""Numbers of `tolerance`, `chart`, `plan` and `simulate --json` that a user reads, each against
an outside value (issue 12). The source of each reference is named beside its assertion.
"""
from __future__ import annotations

import json
import math
import re

import numpy as np
import pytest
from scipy import special
from scipy.integrate import solve_ivp
from scipy.linalg import eigh

import refsolvers as ref
from shakestill import cli
from test_tolerance import falls_scipy

G = ref.G_STANDARD
LIMITS = {"speed_rpm": [120.0, 3600.0], "stroke_m": [0.0, 0.08]}
# one link, a 0.1 kg bob on a massless rod: a point mass, so L&L's formulas apply exactly
FAST = ref.rig([ref.link(0.2, 0.0, [(0.1, 0.2)], 0.0, 2e-4)], ref.sine(0.06, 1000.0), LIMITS)
SINE1 = ref.rig([ref.link(0.25, 0.04, [(0.025, 0.24)])], ref.sine(0.024, 2700.0),
                {"speed_rpm": [120.0, 3600.0], "stroke_m": [0.0, 0.036]})
TWO = ref.rig([ref.link(0.15, 0.03), ref.link(0.1, 0.02)], ref.sine(0.02, 3000.0),
              {"speed_rpm": [120.0, 3600.0], "stroke_m": [0.0, 0.036]})


def run(tmp_path, capsys, data, *argv):
    path = tmp_path / "rig.json"
    path.write_text(json.dumps(data))
    assert cli.main([argv[0], str(path), *argv[1:]]) == 0
    out = capsys.readouterr().out
    return json.loads(out) if "--json" in argv else out


# ------------------------------------------------------------------ tolerance

def falls(theta0, rate0, run_s):
    """FAST released at phase 0 passes the horizontal within run_s (solve_ivp DOP853 1e-10,
    tests/test_tolerance.py's independent single-link equation)."""
    return falls_scipy(FAST, theta0, rate0, run_s)


def bisect_edge(fall, hi, rel=1e-3):
    """Own bisection: (largest tried that recovers, smallest tried that falls)."""
    lo = 0.0
    assert not fall(lo) and fall(hi)  # the bracket (solve_ivp)
    while hi - lo > rel * hi:
        mid = 0.5 * (lo + hi)
        lo, hi = (lo, mid) if fall(mid) else (mid, hi)
    return lo, hi


@pytest.fixture(scope="module")
def fast_tolerance(tmp_path_factory):
    path = tmp_path_factory.mktemp("tol") / "rig.json"
    path.write_text(json.dumps(FAST))
    import io
    import contextlib
    outs = []
    for argv in (["--json"], []):
        buf = io.StringIO()
        with contextlib.redirect_stdout(buf):
            assert cli.main(["tolerance", str(path), *argv]) == 0
        outs.append(buf.getvalue())
    return json.loads(outs[0]), outs[1]


def test_tolerance_run_length_and_estimates(fast_tolerance):
    out, text = fast_tolerance
    # run length: 20 slow periods, at least 10 s; the slow frequency from the multipliers of
    # the one-cycle monodromy (scipy.integrate.solve_ivp DOP853 1e-12), nu f = |arg rho| f / 2 pi
    rho = ref.multipliers(ref.monodromy(FAST, "inverted"))
    slow_hz = max(abs(np.angle(rho))) / (2 * math.pi) * 1000.0 / 60.0
    assert abs(out["run_s"] - max(10.0, 20.0 / slow_hz)) < 1e-6 * out["run_s"]  # 1e-6 relative
    # Kapitza's effective potential of a point mass (Landau & Lifshitz, Mechanics, sec. 30):
    # U / (m l^2) = (g / l) cos th + (A w / 2 l)^2 sin^2 th; crest cos X = g / (2 l s);
    # the knock that carries the bob to the crest: w0^2 / 2 = U(X) - U(0)
    amp, w, l = 0.03, 1000.0 * math.pi / 30.0, 0.2
    s = (amp * w / (2 * l)) ** 2
    crest = math.acos(G / (2 * l * s))
    knock = math.sqrt(2 * ((G / l) * (math.cos(crest) - 1) + s * math.sin(crest) ** 2))
    assert abs(out["estimates"]["release_angle_rad"] - crest) < 1e-9  # closed form, rounding
    assert abs(out["estimates"]["knock_rad_s"] / knock - 1) < 1e-9  # closed form, rounding
    assert abs(out["max_release_angle_deg"] - math.degrees(out["max_release_angle_rad"])) < 1e-12
    # the words carry the same numbers (rounded as printed)
    nums = re.findall(r"recovers: ([\d.]+) rad/s\s+\(Kapitza estimate ([\d.]+) rad/s\)", text)[0]
    assert float(nums[0]) == round(out["max_knock_rad_s"], 3)
    assert float(nums[1]) == round(knock, 3)
    deg = re.findall(r"recovers: ([\d.]+) deg\s+\(Kapitza estimate ([\d.]+) deg\)", text)[0]
    assert float(deg[0]) == round(out["max_release_angle_deg"], 2)
    assert float(deg[1]) == round(math.degrees(crest), 2)
    secs = float(re.findall(r"horizontal in ([\d.]+) s", text)[0])
    assert secs == round(out["run_s"], 1)
    within = [float(x) / 100 for x in re.findall(r"within ([\d.]+)%", text)]
    assert within == [round(100 * out[k]["precision"], 2) / 100 for k in ("knock", "release")]


@pytest.mark.parametrize("key,start", [("knock", "rate"), ("release", "angle")])
def test_tolerance_edges_by_own_bisection_over_solve_ivp(fast_tolerance, key, start):
    out = fast_tolerance[0]
    edge = out[key]
    assert not edge["fragmented"] and edge["value"] == out[
        "max_knock_rad_s" if key == "knock" else "max_release_angle_rad"]
    fall = ((lambda x: falls(0.0, x, out["run_s"])) if start == "rate"
            else (lambda x: falls(x, 0.0, out["run_s"])))
    hi = 2 * out["estimates"]["knock_rad_s"] if start == "rate" else math.pi / 2
    lo, hi = bisect_edge(fall, hi)  # scipy.integrate.solve_ivp, bisected to 0.1 %
    # the engine's recovering value and first failure bracket the same edge: a recovering
    # value above our first fall, or a failure below our last recovery, would be wrong
    assert edge["value"] <= hi and edge["first_failure"] >= lo, (edge, lo, hi)
    # and each end is what it says: the value recovers, the first failure falls (solve_ivp)
    assert not fall(edge["value"]) and fall(edge["first_failure"])
    # and the stated precision is the relative width of that bracket (numpy arithmetic)
    assert edge["first_failure"] - edge["value"] <= edge["precision"] * edge["value"] * (1 + 1e-9)


# ------------------------------------------------------------------ chart

def modal_lengths(data, equilibrium="hanging"):
    """1 / lambda of the generalised eigenproblem K v = lambda M v (scipy.linalg.eigh;
    Acheson 1993: each mode is a one-link Hill problem of that length)."""
    mass, _, k = ref.chain_matrices(data, equilibrium)
    lam = eigh(np.abs(k), mass, eigvals_only=True)
    return sorted(1.0 / lam, reverse=True)


@pytest.mark.parametrize("data,rows", [(SINE1, "6"), (TWO, "4")])
def test_chart_tongues_sit_where_mathieu_a_n_of_zero_puts_them(tmp_path, capsys, data, rows):
    out = run(tmp_path, capsys, data, "chart", "--json", "--rows", rows)
    want = []
    for mode, l_eq in enumerate(modal_lengths(data)):
        w0 = math.sqrt(G / l_eq)
        for n in range(1, 40):  # tongue n where a = 4 w0^2 / w^2 = a_n(0) (scipy.special)
            a_n = special.mathieu_a(n, 0.0)
            assert abs(a_n - n * n) < 1e-9
            rpm = 2 * w0 / math.sqrt(a_n) * 30.0 / math.pi
            if 120.0 <= rpm <= 3600.0:
                want.append((mode, n, rpm))
    got = sorted((t["mode"], t["order"], t["speed_rpm"]) for t in out["tongues"])
    assert [g[:2] for g in got] == [w[:2] for w in sorted(want)]
    for g_, w_ in zip(got, sorted(want)):
        assert abs(g_[2] / w_[2] - 1) < 1e-9  # closed form, rounding


def test_chart_column_edges_lie_on_mathieu_curves(tmp_path, capsys):
    # undamped one-link sine rig: every traced edge is a transition curve (scipy.special)
    out = run(tmp_path, capsys, SINE1, "chart", "--json", "--rows", "6")
    l_eq = ref.properties(SINE1)["l_eq_m"]
    cols = out["column_edges"]
    assert cols["inverted"]  # the Kapitza edge crosses the top rows here
    for eq, points in cols.items():
        for rpm, y, gained in points:
            a, q = ref.mathieu_aq(l_eq, G, y, rpm, eq)
            assert ref.transition_q_error(a, q) < 1e-6, (eq, rpm, y)  # edges to 1e-8 in speed
            # gained: stable just above in stroke, unstable just below (Mathieu bands)
            above = ref.mathieu_band(a, q * (1 + 1e-4)) is not None
            below = ref.mathieu_band(a, q * (1 - 1e-4)) is not None
            assert (above, below) == ((True, False) if gained else (False, True)), (rpm, y)


def test_chart_accel_axis_by_the_drive_formulas(tmp_path, capsys):
    # y = peak pivot acceleration: sine (stroke / 2) w^2; slider-crank r w^2 (1 + r / l) at top
    # dead centre (exact there); the range ends at the stroke limit and the top speed
    w_top = 3600.0 * math.pi / 30.0
    demo = ref.rig([ref.link(0.25, 0.04, [(0.025, 0.24)], 0.0, 3e-4)],
                   ref.crank(0.024, 0.08, 2700.0), SINE1["limits"])
    out = run(tmp_path, capsys, demo, "chart", "--json", "--rows", "4", "--y-axis", "accel")
    r = 0.036 / 2
    assert abs(out["y_range"][1] / (r * w_top ** 2 * (1 + r / 0.08)) - 1) < 1e-12
    assert np.allclose([row["y"] for row in out["rows"]], np.linspace(0, out["y_range"][1], 4),
                       rtol=1e-12, atol=0)  # evenly spaced rows (numpy.linspace)
    out = run(tmp_path, capsys, SINE1, "chart", "--json", "--rows", "6", "--y-axis", "accel")
    assert abs(out["y_range"][1] / (0.036 / 2 * w_top ** 2) - 1) < 1e-12
    # every traced edge of the undamped sine rig, mapped back to stroke = 2 accel / w^2, lies
    # on a Mathieu transition curve (scipy.special)
    l_eq = ref.properties(SINE1)["l_eq_m"]
    points = [p[:2] for p in out["column_edges"]["inverted"]]
    points += [p for b in out["boundaries"] for p in b["points"]]
    assert len(points) > 10
    for rpm, accel in points:
        w = rpm * math.pi / 30.0
        a, q = ref.mathieu_aq(l_eq, G, 2 * accel / w ** 2, rpm, "inverted")
        assert ref.transition_q_error(a, q) < 1e-6, (rpm, accel)


# ------------------------------------------------------------------ plan

def test_plan_margins_and_binding_edge_against_mathieu(tmp_path, capsys):
    out = run(tmp_path, capsys, SINE1, "plan", "--json", "--rows", "12")
    props = ref.properties(SINE1)
    l_eq = props["l_eq_m"]
    speed, stroke = out["speed_rpm"], out["stroke_m"]
    lim = SINE1["limits"]
    # undamped single link on a sine drive: windows from the Mathieu chart (scipy.special)
    sw = ref.speed_window(l_eq, G, stroke, speed, "inverted", lim["speed_rpm"])
    kw = ref.stroke_window(l_eq, G, stroke, speed, "inverted", lim["stroke_m"])
    # a limit is no edge: only sides that end inside the limits count
    speed_m = min([100 * (speed - sw[0]) / speed] if sw[0] > lim["speed_rpm"][0] else [1000.0])
    stroke_m = min([100 * (stroke - kw[0]) / stroke] if kw[0] > lim["stroke_m"][0] else [1000.0])
    assert abs(out["speed_margin_percent"] - speed_m) < 1e-4  # edges to 1e-8 relative
    assert abs(out["stroke_margin_percent"] - stroke_m) < 1e-4
    assert out["worst_margin_percent"] == min(out["speed_margin_percent"],
                                              out["stroke_margin_percent"] / out["stroke_weight"])
    edge = out["binding"]["edge"]
    assert abs(edge["edge"] / (sw[0] if edge["axis"] == "speed" else kw[0]) - 1) < 1e-6
    # equivalent length I / (m c) and damping rate d / (2 I) (physical pendulum, common practice)
    vals = out["binding"]["rig_values"]
    assert abs(vals["equivalent_length_m"] / l_eq - 1) < 1e-12
    assert vals["damping_rate_1_s"] == 0.0  # SINE1 has no damping
    # the words carry the same numbers, rounded as printed
    text = run(tmp_path, capsys, SINE1, "plan", "--rows", "12")
    worst, sp, st = re.findall(r"Worst-case margin: ([\d.]+)% \(speed ([\d.]+)%, stroke ([\d.]+)%\)",
                               text)[0]
    assert (float(worst), float(sp), float(st)) == tuple(round(out[k], 1) for k in (
        "worst_margin_percent", "speed_margin_percent", "stroke_margin_percent"))
    rpm, mm = re.findall(r"Run at ([\d,]+) rpm with a stroke of ([\d.]+) mm", text)[0]
    assert float(rpm.replace(",", "")) == round(speed) and float(mm) == round(1000 * stroke, 2)
    at = re.findall(r"edge of the inverted position at ([\d,.]+) rpm", text)[0]
    assert float(at.replace(",", "")) == round(edge["edge"], 1)
    length = re.findall(r"for the rig with equivalent length ([\d.]+) mm, damping rate 0 1/s", text)[0]
    assert float(length) == round(1000 * l_eq, 3)


def test_plan_damping_rate_and_two_link_modal_lengths(tmp_path, capsys):
    damped = json.loads(json.dumps(SINE1))
    damped["links"][0]["joint_damping_N_m_s"] = 3e-4
    out = run(tmp_path, capsys, damped, "plan", "--json", "--rows", "6")
    inertia = ref.properties(damped)["inertia_about_pivot_kg_m2"]
    # exponential decay rate of a damped pendulum, d / (2 I) (common practice, no source)
    assert abs(out["binding"]["rig_values"]["damping_rate_1_s"] / (3e-4 / (2 * inertia)) - 1) < 1e-12
    out = run(tmp_path, capsys, TWO, "plan", "--json", "--rows", "4")
    got = out["binding"]["rig_values"]["modal_lengths_m"]
    want = modal_lengths(TWO, out["binding"]["equilibrium"])  # scipy.linalg.eigh
    assert np.allclose(got, want, rtol=1e-9, atol=0)
    # the words name them (no spreads: the nominal rig), in mm to 0.1 mm, as the JSON orders them
    # (the words of this same result: a second plan run would double the test's time)
    from shakestill.render.plan_text import plan_text
    text = plan_text(out)
    words = ", ".join(f"{1000 * m:.1f} mm" for m in got)
    assert f"for the rig with the nominal numbers (modal lengths {words})." in text


def test_plan_with_spreads_wander_set_and_binding_edge(tmp_path, capsys):
    # a 0.1 kg point mass at 0.2 m +-3 % on a massless rod, speed +-2 %, stroke +-1 mm
    data = ref.rig([ref.link(0.5, 0.0, [(0.1, 0.2)])], ref.sine(0.1, 1000.0),
                   {"speed_rpm": [300.0, 1500.0], "stroke_m": [0.0, 0.3]})
    data["spreads"] = {"links[0].point_masses[0].at_m": "+-3%", "drive.speed_rpm": "+-2%",
                       "drive.stroke_m": "+-1 mm"}
    out = run(tmp_path, capsys, data, "plan", "--json", "--rows", "12")
    v, s = out["speed_rpm"], out["stroke_m"]
    # the operating point's wander is the spread about it (arithmetic, common practice)
    assert np.allclose(out["wander"]["speed_rpm"], [0.98 * v, 1.02 * v], rtol=1e-12, atol=0)
    assert np.allclose(out["wander"]["stroke_m"], [s - 1e-3, s + 1e-3], rtol=0, atol=1e-15)
    # a point mass: the equivalent length is the bob's distance, so the set's extremes are
    # 0.2 (1 -+ 0.03) m (physical pendulum I / (m c), common practice)
    lengths = sorted(r["equivalent_length_m"] for r in out["set"]["rigs"])
    assert np.allclose(lengths, [0.194, 0.206], rtol=1e-12, atol=0)
    # the binding edge: the Mathieu window's end (scipy.special) of the binding rig at the
    # worst end of the wander, 1e-6 relative (edges to 1e-8)
    b = out["binding"]
    l_eq, e = b["rig_values"]["equivalent_length_m"], b["edge"]
    assert l_eq in (lengths[0], lengths[1])
    if e["axis"] == "speed":
        window = ref.speed_window(l_eq, G, e["at_m"], v, "inverted", [300.0, 1500.0])
    else:
        window = ref.stroke_window(l_eq, G, s, e["at_rpm"], "inverted", [0.0, 0.3])
    assert abs(e["edge"] / window[0 if e["side"] == "low" else 1] - 1) < 1e-6


# ------------------------------------------------------------------ simulate

def test_simulate_fall_turns_end_state_and_strobe_against_solve_ivp(tmp_path, capsys):
    out = run(tmp_path, capsys, FAST, "simulate", "--json", "--duration", "0.6s",
              "--rate", "12rad/s", "--rtol", "1e-11")
    pivot = ref.Pivot(FAST["drive"])
    w = pivot.omega

    def rhs(t, y):
        accel = float(pivot.derivs(w * t)[2]) * w * w
        return [y[1], (G + accel) / 0.2 * math.sin(y[0]) - 2e-4 * y[1] / (0.1 * 0.04)]
    sol = solve_ivp(rhs, (0, 0.6), [0.0, 12.0], method="DOP853", rtol=1e-12, atol=1e-12,
                    dense_output=True)  # scipy.integrate.solve_ivp DOP853 1e-12
    assert np.allclose(out["end_state"], sol.y[:, -1], rtol=0, atol=1e-6)  # 1e-6: issue's bound
    tt = np.linspace(0, 0.6, 20001)
    q = sol.sol(tt)[0]
    assert out["fell"] is bool(np.any(np.abs(q) > math.pi / 2))
    t_fell = tt[np.argmax(np.abs(q) > math.pi / 2)]
    fell = [e for e in out["events"] if e["kind"] == "fell"]
    assert len(fell) == 1 and abs(fell[0]["t_s"] - t_fell) < 1e-4  # the 30 us sampling above
    # turns: largest |angle change| / 2 pi (sampled every 30 us, so within 1e-3 turn)
    assert abs(out["turns"][0] - np.max(np.abs(q)) / (2 * math.pi)) < 1e-3
    st = out["strobe"]
    assert np.allclose(st["t_s"], np.arange(len(st["t_s"])) * 0.06, rtol=0, atol=1e-12)
    want = sol.sol(np.array(st["t_s"]))
    assert np.allclose([a[0] for a in st["angles_rad"]], want[0], rtol=0, atol=1e-6)
    assert np.allclose([r[0] for r in st["rates_rad_s"]], want[1], rtol=0, atol=1e-6)


# ------------------------------------------------------------------ lean

CRANK1 = ref.rig([ref.link(0.25, 0.04, [(0.025, 0.24)], 0.0, 3e-4)], ref.crank(0.024, 0.08, 2700.0),
                 {"speed_rpm": [2000, 3600], "stroke_m": [0, 0.036]})


def shooting_orbit(data, start):
    """Mean and peak-to-peak angle (deg) of the periodic orbit: scipy.optimize.fsolve shooting
    over scipy.integrate.solve_ivp DOP853 1e-13 (tests/test_tilt.py), 20000 samples a cycle."""
    from test_tilt import planar_reference, reference_orbit
    x, _ = reference_orbit(data, np.array(start))
    rhs, period = planar_reference(data)
    sol = solve_ivp(rhs, (0, period), x, method="DOP853", rtol=1e-13, atol=1e-13,
                    dense_output=True)
    q = sol.sol(np.linspace(0, period, 20000, endpoint=False))[0]
    return math.degrees(float(np.mean(q))), math.degrees(float(q.max() - q.min()))


def test_lean_wobble_kappa_and_words_against_shooting_and_kapitza(tmp_path, capsys):
    from test_tilt import tilted
    argv = ("--tilts", "3", "--speeds", "3", "--max-tilt", "2")
    out = run(tmp_path, capsys, CRANK1, "lean", "--json", *argv)
    text = run(tmp_path, capsys, CRANK1, "lean", *argv)
    assert out["tilt_deg"] == [0.0, 1.0, 2.0] and out["speed_tilt_deg"] == 1.0
    # the held orbits at 2 deg of tilt and, on the speed axis at 1 deg, at 2000 rpm; the
    # engine's Newton stops at corrections below 1e-6, so 1e-4 deg (as tests/test_lean_chart.py)
    for eq, start, down in (("inverted", [0.05, 0.0], 0.0), ("hanging", [math.pi + 0.03, 0.0], 180.0)):
        mean, p2p = shooting_orbit(tilted(CRANK1, 2.0), start)
        assert abs(out["by_tilt"][eq]["lean_deg"][2][0] - (mean - down)) < 1e-4
        assert abs(out["by_tilt"][eq]["wobble_deg"][2][0] - p2p) < 1e-4
        # vertical drive: the orbit is the equilibrium itself (no lean, no wobble)
        assert abs(out["by_tilt"][eq]["lean_deg"][0][0]) < 1e-9
        assert abs(out["by_tilt"][eq]["wobble_deg"][0][0]) < 1e-9
    slow = json.loads(json.dumps(CRANK1))
    slow["drive"]["speed_rpm"] = 2000.0
    assert out["speed_rpm"][0] == 2000.0
    mean, p2p = shooting_orbit(tilted(slow, 1.0), [0.05, 0.0])
    assert abs(out["by_speed"]["inverted"]["lean_deg"][0][0] - mean) < 1e-4
    assert abs(out["by_speed"]["inverted"]["wobble_deg"][0][0] - p2p) < 1e-4
    # kappa = (A w)^2 / (2 g l_eq), A half the stroke; slopes kappa / (kappa -+ 1)
    # (Landau & Lifshitz, Mechanics, sec. 30, with the tilted pivot line; lean_chart's docstring)
    l_eq = ref.properties(CRANK1)["l_eq_m"]
    kappa = (0.012 * 2700.0 * math.pi / 30.0) ** 2 / (2 * G * l_eq)
    est = out["estimate"]
    assert abs(est["kappa"] / kappa - 1) < 1e-12
    assert abs(est["inverted"] - kappa / (kappa - 1)) < 1e-12
    assert abs(est["hanging"] - kappa / (kappa + 1)) < 1e-12
    # the words carry the same numbers, rounded as printed
    k_txt, inv_txt, hang_txt = re.findall(
        r"kappa = ([\d.]+)\): lean per degree of tilt about ([\d.]+) inverted, ([\d.]+) hanging",
        text)[0]
    assert (float(k_txt), float(inv_txt), float(hang_txt)) == (
        round(kappa, 2), round(kappa / (kappa - 1), 2), round(kappa / (kappa + 1), 2))
    for eq in ("inverted", "hanging"):
        a, b = re.findall(eq + r": \+([\d.]+) deg at 0 deg of tilt \.\. \+([\d.]+) deg at 2 deg",
                          text)[0]
        assert float(b) == round(out["by_tilt"][eq]["lean_deg"][2][0], 2)
        a, b = re.findall(eq + r": \+([\d.]+) deg at 2,000 rpm \.\. \+([\d.]+) deg at 3,600 rpm",
                          text)[0]
        assert float(a) == round(out["by_speed"][eq]["lean_deg"][0][0], 2)
        assert float(b) == round(out["by_speed"][eq]["lean_deg"][-1][0], 2)


def test_simulate_two_links_against_solve_ivp(tmp_path, capsys):
    from test_motion import lagrange_rhs  # independent chain equations by virtual work
    out = run(tmp_path, capsys, TWO, "simulate", "--json", "--duration", "0.4s",
              "--angle", "0.3rad", "--angle=-0.2rad", "--rate", "0rad/s", "--rate", "40rad/s",
              "--rtol", "1e-11")
    sol = solve_ivp(lagrange_rhs(TWO), (0, 0.4), [0.3, -0.2, 0.0, 40.0], method="DOP853",
                    rtol=1e-12, atol=1e-12, dense_output=True)  # scipy.integrate.solve_ivp
    assert np.allclose(out["end_state"], sol.y[:, -1], rtol=0, atol=1e-6)  # issue's 1e-6 bound
    tt = np.linspace(0, 0.4, 40001)
    q = sol.sol(tt)[:2]
    # fell: some link leaves the band of 90 deg about upright; turns: largest |angle change| /
    # 2 pi per link (sampled every 10 us: within 1e-3 turn)
    assert out["fell"] is bool(np.any(np.abs(q) > math.pi / 2))
    start = np.array([[0.3], [-0.2]])
    assert np.allclose(out["turns"], np.max(np.abs(q - start), axis=1) / (2 * math.pi),
                       rtol=0, atol=1e-3)
    # the events' times: first leaving the band, first full turn of link 2 (the 10 us sampling)
    dev = np.abs(q - start)
    kinds = {e["kind"]: e for e in out["events"]}
    assert out["fell"] and abs(kinds["fell"]["t_s"] - tt[np.argmax(np.abs(q).max(axis=0) > math.pi / 2)]) < 2e-5
    assert kinds["rotation"]["link"] == 1
    assert abs(kinds["rotation"]["t_s"] - tt[np.argmax(dev[1] >= 2 * math.pi)]) < 2e-5
