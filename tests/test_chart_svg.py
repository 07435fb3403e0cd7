"""The chart's painted regions against the Mathieu stability bands (scipy.special)."""

import math
import random
import re
import xml.etree.ElementTree as ET

import pytest
from scipy.special import mathieu_a, mathieu_b

import shakestill as ss
from shakestill.equilibria.chart import chart
from shakestill.render.chart_svg import render

G = 9.80665
NS = "{http://www.w3.org/2000/svg}"


def sine_rig():
    return ss.rig_from_dict({
        "format": "shakestill-rig", "version": 1,
        "links": [{"length_m": 0.3, "rod_mass_kg": 0.1}],
        "drive": {"waveform": "sine", "stroke_m": 0.02, "speed_rpm": 1500},
        "limits": {"speed_rpm": [60, 3000], "stroke_m": [0.0, 0.05]}})


def mathieu_stable(a: float, q: float) -> bool:
    # DLMF 28.17: for q > 0, a0 < b1 < a1 < b2 < ...; y'' + (a - 2q cos 2z) y = 0 is
    # stable for a in (a_n, b_{n+1}) and unstable in (b_n, a_n) and below a_0.
    q = abs(q)
    if a < mathieu_a(0, q):
        return False
    for n in range(0, 40):
        if a < mathieu_b(n + 1, q):
            return True
        if a < mathieu_a(n + 1, q):
            return False
    raise ValueError("a beyond the bands this test looks at")


def painted(svg: str) -> list[tuple[str, list[list[tuple[float, float]]]]]:
    """(fill, polygons) of every region path of the chart."""
    out = []
    for el in ET.fromstring(svg).iter(f"{NS}path"):
        polys = [[tuple(map(float, p.split(","))) for p in re.split("[ML]", sub) if p]
                 for sub in el.get("d").split("Z") if sub]
        out.append((el.get("fill"), polys))
    return out


def inside(poly, x, y) -> bool:  # even-odd ray casting
    hit = False
    for (x1, y1), (x2, y2) in zip(poly, poly[1:] + poly[:1]):
        if (y1 > y) != (y2 > y) and x < x1 + (y - y1) * (x2 - x1) / (y2 - y1):
            hit = not hit
    return hit


def fill_at(regions, x, y):
    for fill, polys in regions:
        if any(inside(p, x, y) for p in polys):
            return fill
    return None  # the background: neither stable


def to_px(axes, speed, y):
    ax, ay = axes["x"], axes["y"]
    return (ax["px_min"] + (speed - ax["min"]) / (ax["max"] - ax["min"]) * (ax["px_max"] - ax["px_min"]),
            ay["px_min"] + (y - ay["min"]) / (ay["max"] - ay["min"]) * (ay["px_max"] - ay["px_min"]))


def verdicts(l_eq, speed, stroke):
    w = 2 * math.pi * speed / 60
    a = 4 * G / (l_eq * w * w)
    q = stroke / l_eq  # sine pivot (stroke/2) cos(w t), z = w t / 2
    return mathieu_stable(-a, q), mathieu_stable(a, q)


@pytest.mark.parametrize("y_axis", ["stroke", "accel"])
def test_painted_regions_match_mathieu_bands(y_axis):
    # Undamped sine drive: away from the transition curves (3% in speed, one row in y), the
    # colour under a random point is the class the Mathieu bands give (scipy.special),
    # and in the acceleration view points needing more than the maximum stroke are hatched.
    rig = sine_rig()
    c = chart(rig, rows=30, y_axis=y_axis)
    svg, axes = render(c, rig)
    regions = painted(svg)
    from shakestill.render.chart_svg import REGION_FILL
    fill_of = {v[0]: k for k, v in REGION_FILL.items()}
    fill_of["url(#out-of-reach)"] = "out-of-reach"
    l_eq = ss.properties(rig).l_eq_m
    (x0, x1), (y0, y1) = c.speed_range, c.y_range
    dy = (y1 - y0) / 30
    rng = random.Random(3)
    checked = 0
    for _ in range(400):
        speed, y = rng.uniform(x0, x1), rng.uniform(y0 + dy, y1 - dy)
        stroke_of = (lambda s, v: v) if y_axis == "stroke" else (
            lambda s, v: 2 * v / (2 * math.pi * s / 60) ** 2)  # sine: peak accel = (stroke/2) w^2
        corners = [(s, v) for s in (speed * 0.97, speed, speed * 1.03) for v in (y - dy, y + dy)]
        if any(stroke_of(s, v) > 0.05 for s, v in corners):
            if all(stroke_of(s, v) > 0.05 for s, v in corners):
                assert fill_of.get(fill_at(regions, *to_px(axes, speed, y))) == "out-of-reach"
                checked += 1
            continue
        classes = {verdicts(l_eq, s, stroke_of(s, v)) for s, v in corners}
        if len(classes) > 1:
            continue  # too near an edge for a 30-row picture
        inv, hang = classes.pop()
        want = "both" if inv and hang else "inverted" if inv else "hanging" if hang else "neither"
        got = fill_of.get(fill_at(regions, *to_px(axes, speed, y)), "neither")
        assert got == want, (speed, y)
        checked += 1
    assert checked > 150


def test_boundary_leaving_through_the_side_is_painted_to_the_side():
    # The inverted position's lower edge leaves the stroke chart through its right side
    # (top speed) between two rows. Where it crosses that side comes from the Mathieu
    # bands (scipy.special, bisection on the stroke); the fill must change class there
    # within 15% of the row spacing (painting half-way between the rows missed it by more).
    rig = sine_rig()
    rows = 12
    c = chart(rig, rows=rows)
    svg, axes = render(c, rig)
    regions = painted(svg)
    l_eq = ss.properties(rig).l_eq_m
    (x0, x1), (y0, y1) = c.speed_range, c.y_range
    lo, hi = y0, y1  # inverted: unstable at zero stroke, stable at the top of the chart
    assert not verdicts(l_eq, x1, lo)[0] and verdicts(l_eq, x1, hi)[0]
    for _ in range(60):
        mid = 0.5 * (lo + hi)
        lo, hi = (lo, mid) if verdicts(l_eq, x1, mid)[0] else (mid, hi)
    y_true = 0.5 * (lo + hi)
    dy = (y1 - y0) / (rows - 1)
    below = fill_at(regions, *to_px(axes, x1 * (1 - 1e-4), y_true - 0.15 * dy))
    above = fill_at(regions, *to_px(axes, x1 * (1 - 1e-4), y_true + 0.15 * dy))
    from shakestill.render.chart_svg import REGION_FILL
    assert above == REGION_FILL["both"][0]
    assert below == REGION_FILL["hanging"][0]
    # and the drawn edge is carried to the side as well, to the same crossing
    side_x, true_y = to_px(axes, x1, y_true)
    edges = [el for el in ET.fromstring(svg).iter(f"{NS}polyline")
             if el.get("stroke-dasharray") is None]  # not the dashed acceleration lines
    ends = [tuple(map(float, pt.split(","))) for el in edges
            for pt in (el.get("points").split()[0], el.get("points").split()[-1])]
    _, dy_px = to_px(axes, x1, y0 + 0.15 * dy)
    _, y0_px = to_px(axes, x1, y0)
    assert any(abs(x - side_x) < 1e-6 and abs(y - true_y) < abs(dy_px - y0_px) for x, y in ends)


def _y_tick_labels(svg: str, left: float):
    """(value, y px) of the numbers right-aligned beside the side axis."""
    root = ET.fromstring(svg)
    out = []
    for t in root.iter(f"{NS}text"):
        if t.get("text-anchor") == "end" and float(t.get("x")) == left - 8:
            out.append((float(t.text), float(t.get("y")) - 4))
    return out


@pytest.mark.parametrize("units, metres_per_label", [("metric", 1e-3), ("imperial", 0.0254)])
def test_stroke_axis_labels_sit_at_their_stroke_in_the_chosen_units(units, metres_per_label):
    # The axis mapping stays SI; each tick's number, read in mm or in (1 in = 0.0254 m
    # exactly, NIST SP 811 appendix B), must sit where the mapping puts that stroke.
    rig = sine_rig()
    svg, axes = render(chart(rig, rows=4), rig, units=units)
    y = axes["y"]
    assert y["unit"] == "m" and y["shown_unit"] == {"metric": "mm", "imperial": "in"}[units]
    assert f"stroke ({y['shown_unit']})" in svg
    left = axes["x"]["px_min"]
    ticks = _y_tick_labels(svg, left)
    assert len(ticks) >= 3
    for value, py in ticks:
        stroke_m = value * metres_per_label
        expected = y["px_min"] + (stroke_m - y["min"]) / (y["max"] - y["min"]) * (y["px_max"] - y["px_min"])
        assert py == pytest.approx(expected, abs=0.02)  # the SVG writes 2 decimals


def test_units_other_than_metric_or_imperial_are_refused():
    rig = sine_rig()
    with pytest.raises(ValueError, match="units"):
        render(chart(rig, rows=2), rig, units="cubits")


def test_acceleration_labels_name_their_line_and_never_overprint():
    # A small-stroke chart crowds the constant-acceleration lines at the right-hand edge.
    # Each label kept must sit at its own line's end: for a sine drive the peak acceleration
    # is (stroke/2) w^2 (common practice, no source), so the g line meets the right edge at
    # stroke = 2 g G / w^2 (or leaves through the top). Labels 10 px high closer than 11 px
    # would overprint; none may sit on the speed axis.
    data = ss.rig_to_dict(sine_rig())
    data["limits"] = {"speed_rpm": [600, 6000], "stroke_m": [0.0, 0.004]}
    data["drive"]["stroke_m"] = 0.002
    rig = ss.rig_from_dict(data)
    svg, axes = render(chart(rig, rows=12), rig)
    root = ET.fromstring(svg)
    labels = [(float(t.get("y")), float(t.text[:-2])) for t in root.iter(NS + "text")
              if t.text and t.text.endswith(" g") and t.get("text-anchor") == "end"]
    assert len(labels) >= 3
    ys = sorted(y for y, _ in labels)
    assert min(b - a for a, b in zip(ys, ys[1:])) >= 11
    assert ys[-1] <= axes["y"]["px_min"] - 2
    w = 2 * math.pi * 6000 / 60
    for y, g_value in labels:
        stroke = min(2 * g_value * G / w ** 2, 0.004)
        assert y - 11 == pytest.approx(to_px(axes, 6000, stroke)[1], abs=1.0)


def test_tongue_labels_sit_over_their_tongues_and_never_overprint():
    # Hanging double pendulum of equal point masses on equal massless links: modal
    # frequencies w^2 = (g/l)(2 -+ sqrt 2) (any classical mechanics text; from memory), and
    # the principal parametric resonances sit at drive frequency 2 f / n (Mathieu equation,
    # common practice). With a low speed limit the orders crowd the left-hand side.
    length = 0.1
    link = {"length_m": length, "rod_mass_kg": 0.0,
            "point_masses": [{"mass_kg": 0.05, "at_m": length}]}
    rig = ss.rig_from_dict({
        "format": "shakestill-rig", "version": 1, "links": [link, link],
        "drive": {"waveform": "sine", "stroke_m": 0.002, "speed_rpm": 1500},
        "limits": {"speed_rpm": [30, 3000], "stroke_m": [0.0, 0.004]}})
    c = chart(rig, rows=4)
    f = [math.sqrt(G / length * (2 + s * math.sqrt(2))) / (2 * math.pi) for s in (-1, 1)]
    expected = {f"n={n} (mode {m + 1})": 2 * f[m] / n * 60
                for m in (0, 1) for n in range(1, 40) if 30 <= 2 * f[m] / n * 60 <= 3000}
    assert {t["label"]: t["speed_rpm"] for t in c.tongues} == pytest.approx(expected, rel=1e-9)
    svg, axes = render(c, rig)
    root = ET.fromstring(svg)
    labels = [t for t in root.iter(NS + "text") if t.text in expected]
    # the crowd is about 60 px wide: three lines hold three labels, the lowest orders first
    assert sorted(t.text for t in labels) == ["n=1 (mode 1)", "n=1 (mode 2)", "n=2 (mode 1)"]
    lines: dict = {}
    for t in labels:
        x, half = float(t.get("x")), len(t.text) * 3.0  # <= 6 px a character at 10 px
        # centred over its tongue unless that would push it out of the plot
        assert abs(x - to_px(axes, expected[t.text], 0.0)[0]) <= half + 0.5
        lines.setdefault(t.get("y"), []).append((x - half, x + half))
    assert len(lines) >= 2  # the crowded orders took a second line rather than overprinting
    for spans in lines.values():
        spans.sort()
        assert all(b[0] >= a[1] for a, b in zip(spans, spans[1:]))
