"""The stability chart against Mathieu curves, solve_ivp references and its own axis mapping."""

import math
import random
import xml.etree.ElementTree as ET

import numpy as np
import pytest
from scipy.integrate import solve_ivp
from scipy.optimize import brentq
from scipy.special import mathieu_a, mathieu_b

import refsolvers as ref
import shakestill as ss
from shakestill.equilibria.chart import chart, chart_dict
from shakestill.render.chart_svg import render

G = 9.80665


def rod_rig(waveform="sine", damping=0.0, links=None, limits=None, stroke=0.02):
    drive = {"waveform": waveform, "stroke_m": stroke, "speed_rpm": 1500}
    if waveform == "crank":
        drive["rod_length_m"] = 0.07
    return ss.rig_from_dict({
        "format": "shakestill-rig", "version": 1,
        "links": links or [{"length_m": 0.3, "rod_mass_kg": 0.1, "joint_damping_N_m_s": damping}],
        "drive": drive,
        "limits": limits or {"speed_rpm": [60, 3000], "stroke_m": [0.0, 0.05]}})


@pytest.fixture(scope="module")
def sine_chart():
    rig = rod_rig()
    return rig, chart(rig, rows=24)


def test_every_edge_lies_on_a_mathieu_curve(sine_chart):
    # Undamped sine, one link: y'' + (a - 2q cos 2z) y = 0 with a = +-4 g / (l_eq omega^2)
    # (inverted: minus) and |q| = stroke / l_eq. Each traced edge must sit on a transition
    # curve of scipy.special.mathieu_a / mathieu_b to 1e-6 relative (in speed).
    rig, c = sine_chart
    l_eq = ss.properties(rig).l_eq_m
    checked = 0
    for row in c.rows:
        q = row.y / l_eq
        if q == 0:
            continue
        for eq, sign in (("inverted", -1), ("hanging", 1)):
            for e in row.edges[eq]:
                a = sign * 4 * G / (l_eq * (2 * math.pi * e.x / 60) ** 2)
                curves = [mathieu_a(n, q) for n in range(0, 12)] + [mathieu_b(n, q) for n in range(1, 12)]
                # speed of each curve, compared in relative speed
                best = min(abs(math.sqrt(abs(a / cv)) - 1) if cv * a > 0 else math.inf
                           for cv in curves)
                assert best < 1e-6
                checked += 1
    assert checked > 40  # the chart has tongue and Kapitza edges in every row


def _ref_max_multiplier(rig, eq, speed, stroke):
    lin = ss.linearise(rig, eq)  # M, D, K checked against an independent Lagrangian elsewhere
    M, D, K = (np.array(x) for x in (lin.M, lin.D, lin.K))
    Minv = np.linalg.inv(M)
    n = len(M)
    w = 2 * math.pi * speed / 60
    r, rod = stroke / 2, rig.drive.rod_length_m

    def accel(t):  # slider-crank, exact (textbook), differentiated by hand
        p = w * t
        s, co = math.sin(p), math.cos(p)
        u = math.sqrt(rod * rod - r * r * s * s)
        return w * w * (-r * co - r * r * (co * co - s * s) / u - r ** 4 * s * s * co * co / u ** 3)

    def rhs(t, y):
        Y = y.reshape(2 * n, 2 * n)
        q, v = Y[:n], Y[n:]
        acc = -Minv @ ((G + accel(t)) * K @ q + D @ v)
        return np.vstack([v, acc]).ravel()

    sol = solve_ivp(rhs, (0, 2 * math.pi / w), np.eye(2 * n).ravel(), method="DOP853",
                    rtol=1e-11, atol=1e-12)
    return max(abs(np.linalg.eigvals(sol.y[:, -1].reshape(2 * n, 2 * n))))


TWO_LINKS = [{"length_m": 0.2, "rod_mass_kg": 0.04, "joint_damping_N_m_s": 3e-4},
             {"length_m": 0.12, "rod_mass_kg": 0.02, "point_masses": [{"mass_kg": 0.01, "at_m": 0.12}],
              "joint_damping_N_m_s": 1e-4}]


@pytest.mark.parametrize("links, rows, samples", [(None, 16, 250), (TWO_LINKS, 8, 60)])
def test_crank_damped_regions_and_edges_agree_with_solve_ivp(links, rows, samples):
    # Crank drive with damping: the verdict at random points of the chart's rows matches a
    # solve_ivp monodromy (points within 1e-6 of an edge are skipped), and edge positions
    # agree with scipy.optimize.brentq on the reference to 1e-4 relative.
    rig = rod_rig("crank", damping=3e-4, links=links,
                  limits={"speed_rpm": [300, 3000], "stroke_m": [0.0, 0.04]})
    c = chart(rig, rows=rows)
    rng = random.Random(7)
    for _ in range(samples):
        row = rng.choice(c.rows[1:])
        x = rng.uniform(row.speed_min, row.speed_max)
        for eq in ("inverted", "hanging"):
            edges = [e.x for e in row.edges[eq]]
            if any(abs(x - e) < 1e-6 * x for e in edges):
                continue
            inside = any(a <= x <= b for a, b in row.stable_intervals(eq))
            assert inside == (_ref_max_multiplier(rig, eq, x, row.y) < 1)
    row = c.rows[-1]
    for eq in ("inverted", "hanging"):
        for e in row.edges[eq][:2]:
            ref = brentq(lambda v: _ref_max_multiplier(rig, eq, v, row.y) - 1,
                         e.x * (1 - 2e-3), e.x * (1 + 2e-3), xtol=1e-9 * e.x)
            assert e.x == pytest.approx(ref, rel=1e-4)


def test_lower_edge_tends_to_kapitza_at_small_stroke():
    # Landau & Lifshitz, Mechanics, sec. 30: (A omega)^2 = 2 g l_eq at the lower edge; the
    # exact edge exceeds it by 7/32 (A/l_eq)^2 relative (DLMF 28.6.1 expansion of a_0(q)).
    rig = rod_rig(limits={"speed_rpm": [1000, 40000], "stroke_m": [0.0, 0.01]})
    c = chart(rig, rows=6, equilibria=("inverted",))
    l_eq = ss.properties(rig).l_eq_m
    row = c.rows[1]
    A = row.y / 2
    kapitza = math.sqrt(2 * G * l_eq) / A * 60 / (2 * math.pi)
    lower = [e.x for e in row.edges["inverted"] if e.gained][0]
    eps = A / l_eq
    assert (lower / kapitza - 1) == pytest.approx(7 / 32 * eps ** 2, rel=0.05)


def test_svg_is_xml_with_title_labels_and_invertible_mapping(sine_chart):
    # Common practice, no source: a chart is valid XML with a title and axis labels with units;
    # the returned mapping must invert pixel positions to data within half a pixel.
    rig, c = sine_chart
    svg, axes = render(c, rig)
    root = ET.fromstring(svg)
    ns = "{http://www.w3.org/2000/svg}"
    assert root.find(f"{ns}title").text.startswith("Stability map")
    texts = [t.text for t in root.iter(f"{ns}text")]
    assert "drive speed (rpm)" in texts and "stroke (mm)" in texts
    op = root.find(f".//{ns}g[@class='operating-point']/{ns}circle")
    cx, cy = float(op.get("cx")), float(op.get("cy"))
    x, y = axes["x"], axes["y"]
    speed = x["min"] + (cx - x["px_min"]) / (x["px_max"] - x["px_min"]) * (x["max"] - x["min"])
    stroke = y["min"] + (cy - y["px_min"]) / (y["px_max"] - y["px_min"]) * (y["max"] - y["min"])
    px_per_rpm = (x["px_max"] - x["px_min"]) / (x["max"] - x["min"])
    px_per_m = abs(y["px_max"] - y["px_min"]) / (y["max"] - y["min"])
    assert abs(speed - rig.drive.speed_rpm) * px_per_rpm <= 0.5
    assert abs(stroke - rig.drive.stroke_m) * px_per_m <= 0.5
    data = chart_dict(c)
    assert len(data["rows"]) == 24 and data["complete"]


def test_runup_simulation_matches_solve_ivp():
    # The ramp's growth through the demo rig's first hanging tongue, integrated by the engine,
    # against scipy.integrate.solve_ivp (DOP853) of the chain's linear equation with
    # G = g + omega^2 y_pp(phi) + omega' y_p(phi), in the run-up's norm and worst over the
    # drive's phase at both ends (refsolvers.ramp_growths); tolerance 5% (the issue's).
    from shakestill.equilibria.runup import runup
    rig = ss.demo_rig()
    rate = 2.0
    result = runup(rig, rate_rpm_s=rate)
    c = result["hanging"]["crossings"][0]
    a, b = c["speed_from_rpm"], c["speed_to_rpm"]
    growth = ref.ramp_growths(ss.rig_to_dict(rig), "hanging", a, b, [rate])[0]
    assert c["simulated_amplification"] == pytest.approx(growth, rel=0.05)
    # the frozen-multiplier estimate carries only the exponential part: same order of magnitude
    assert 0.2 < c["amplification"] / growth < 1.0


def test_edges_along_speed_are_traced_in_stroke_onto_mathieu_curves():
    # The upright pendulum's upper (flutter) edge runs nearly along speed at high speed, so
    # rows cannot place it; the chart traces it in stroke at fixed speeds. Undamped sine, one
    # link: every such edge lies on a transition curve of scipy.special.mathieu_a / mathieu_b
    # with a = +-4 g / (l_eq omega^2), q = stroke / l_eq (McLachlan, Theory and Application of
    # Mathieu Functions, ch. 2), to 1e-6 relative in stroke (the target is 1e-4).
    rig = ss.rig_from_dict({
        "format": "shakestill-rig", "version": 1,
        "links": [{"length_m": 0.03, "rod_mass_kg": 0.01}],
        "drive": {"waveform": "sine", "stroke_m": 0.01, "speed_rpm": 20000},
        "limits": {"speed_rpm": [3000, 60000], "stroke_m": [0.0, 0.03]}})
    l_eq = ss.properties(rig).l_eq_m
    c = chart(rig, rows=24)
    upper = [e for e in c.columns["inverted"] if not e.gained]
    assert len(upper) > 50  # the flutter edge spans most of the speed range
    for eq in ("inverted", "hanging"):
        for e in c.columns[eq]:
            a, q = ref.mathieu_aq(l_eq, G, e.y, e.speed_rpm, eq)
            assert ref.transition_q_error(a, q) < 1e-6
    drawn = [b for b in chart_dict(c)["boundaries"] if b["kind"] == "upper edge"]
    assert max(len(b["points"]) for b in drawn) > 50  # one line along the traced edge


@pytest.mark.parametrize("speeds", [(0.965, 30.0), (0.5, 1.035)], ids=["start", "end"])
def test_a_tongue_next_to_a_rows_end_is_found(speeds):
    # A point-mass pendulum (l = 0.1 m, undamped) on a sine drive whose speeds start 3.5%
    # below its principal hanging tongue, 2 f0 (f0 = sqrt(g / l) / 2 pi), or end 3.5% above
    # it: the margin falls from the row's end to the nearest scan point, so the tongue
    # between them shows only as a peak towards that end. Every row with a stroke has the tongue's
    # two edges, on the Mathieu transition curves b_1 and a_1 (scipy.special; y'' + (a - 2q
    # cos 2z) y = 0 with a = 4 g / (l w^2), q = stroke / l, so w = 2 sqrt(g / l) / sqrt(a)),
    # to 1e-8 relative in speed (the chart's precision).
    length = 0.1
    top = 2 * math.sqrt(G / length) / (2 * math.pi) * 60
    rig = ss.rig_from_dict({
        "format": "shakestill-rig", "version": 1,
        "links": [{"length_m": length, "point_masses": [{"mass_kg": 0.05, "at_m": length}]}],
        "drive": {"waveform": "sine", "stroke_m": 0.002, "speed_rpm": 1000},
        "limits": {"speed_rpm": [speeds[0] * top, speeds[1] * top], "stroke_m": [0.0, 0.004]}})
    c = chart(rig, rows=5, equilibria=("hanging",), columns=False)
    for row in c.rows[1:]:
        near = [e for e in row.edges["hanging"] if 0.9 * top < e.x < 1.1 * top]
        assert [e.gained for e in near] == [False, True]
        q = row.y / length
        want = [top / math.sqrt(mathieu_a(1, q)), top / math.sqrt(mathieu_b(1, q))]
        assert [e.x for e in near] == pytest.approx(want, rel=1e-8)
