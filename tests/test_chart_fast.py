"""Small, fast stability charts (a few rows) against outside references, so mutation runs judge
the chart modules in seconds: each test builds its chart in its own body (mutmut maps a test to
the functions its body calls, not a fixture's)."""

import math

import pytest
from scipy.special import mathieu_a, mathieu_b

import shakestill as ss
from shakestill.equilibria.chart import accel_lines, chart
from test_stability_chart import TWO_LINKS, _ref_max_multiplier, rod_rig

G = 9.80665


def _mathieu_miss(l_eq, eq, stroke, speed):
    # Undamped sine, one link: y'' + (a - 2q cos 2z) y = 0, a = +-4 g/(l_eq w^2), q = stroke/l_eq
    # (scipy.special.mathieu_a / mathieu_b transition curves); relative miss in speed.
    a = (-1 if eq == "inverted" else 1) * 4 * G / (l_eq * (2 * math.pi * speed / 60) ** 2)
    q = stroke / l_eq
    curves = [mathieu_a(n, q) for n in range(12)] + [mathieu_b(n, q) for n in range(1, 12)]
    return min(abs(math.sqrt(abs(a / cv)) - 1) for cv in curves if cv * a > 0)


def test_small_sine_chart_edges_on_mathieu_curves():
    rig = rod_rig()
    c = chart(rig, rows=4)
    l_eq = ss.properties(rig).l_eq_m
    assert c.complete and len(c.rows) == 4
    checked = 0
    for row in c.rows[1:]:
        for eq in ("inverted", "hanging"):
            for e in row.edges[eq]:
                assert _mathieu_miss(l_eq, eq, row.y, e.x) < 1e-6  # scipy Mathieu curves
                checked += 1
    # every row above zero stroke has the Kapitza edge and the first hanging tongue's two edges
    # (the tongue near 2 w0 = 134 rpm lies inside 60-3000 rpm; common practice, no source)
    assert checked >= 3 * 3


@pytest.mark.parametrize("links", [None, TWO_LINKS])
def test_small_crank_chart_verdicts_either_side_of_each_edge(links):
    # Crank drive with damping: just below and above each edge the solve_ivp monodromy's largest
    # multiplier crosses 1 the way the edge says (gained: stable above it in speed).
    rig = rod_rig("crank", damping=3e-4, links=links,
                  limits={"speed_rpm": [300, 3000], "stroke_m": [0.0, 0.04]})
    c = chart(rig, rows=3)
    assert c.complete
    checked = 0
    for row in c.rows[1:]:
        for eq in ("inverted", "hanging"):
            for e in row.edges[eq][:3]:
                below = _ref_max_multiplier(rig, eq, e.x * (1 - 1e-3), row.y) < 1
                above = _ref_max_multiplier(rig, eq, e.x * (1 + 1e-3), row.y) < 1
                assert (below, above) == ((False, True) if e.gained else (True, False))
                checked += 1
    assert checked >= 2


@pytest.mark.parametrize("waveform", ["sine", "crank"])
def test_accel_lines_by_the_peak_accel_formulas(waveform):
    # Peak pivot acceleration: sine (stroke/2) w^2; slider-crank r w^2 (1 + r/l), r = stroke/2
    # (textbook slider-crank kinematics). Each line point must give its g value to 1e-9.
    rig = rod_rig(waveform)
    c = chart(rig, rows=3)
    lines = accel_lines(c, rig)
    assert lines
    for g_value, line in lines:
        for speed, stroke in line:
            w, r = 2 * math.pi * speed / 60, stroke / 2
            peak = r * w * w * (1 + r / 0.07 if waveform == "crank" else 1)
            assert peak / G == pytest.approx(g_value, rel=1e-9)
