"""The chart's JSON, its polylines, its accel axis and its bookkeeping, on small charts (a few
rows, built in each test's body so that mutation runs map these tests to the chart modules),
against outside references: scipy's Mathieu curves, solve_ivp monodromies, the peak
acceleration formulas and a count of the stability evaluations taken outside the chart."""

import json
import math

import numpy as np
import pytest
import shakestill as ss
from scipy.linalg import eigh
from scipy.optimize import brentq
from scipy.special import mathieu_a, mathieu_b
from shakestill.equilibria import lines
from shakestill.equilibria.chart import accel_lines, chart, chart_dict
from shakestill.equilibria.chart_rows import (
    CHART_RTOL,
    FOLLOW_CHECKS,
    FOLLOW_TIGHT,
    FOLLOW_TIGHT_SLACK,
    line_edges,
    row_line,
    row_settings,
)
from shakestill.equilibria.confirm import CONFIRM_HALF_WIDTHS
from shakestill.model.derived import derive
from shakestill.model.rig import OutOfReach
from test_stability_chart import TWO_LINKS, _ref_max_multiplier, rod_rig

G = 9.80665
ROD = 0.07  # rod_rig's crank rod length


def _curve(l_eq, eq, speed, stroke):
    # Undamped sine, one link: y'' + (a - 2q cos 2z) y = 0, a = +-4 g/(l_eq w^2), q = stroke/l_eq
    # (scipy.special.mathieu_a / mathieu_b). (name of the nearest transition curve, relative
    # miss in speed)
    a = (-1 if eq == "inverted" else 1) * 4 * G / (l_eq * (2 * math.pi * speed / 60) ** 2)
    q = stroke / l_eq
    curves = [(f"a{n}", mathieu_a(n, q)) for n in range(12)]
    curves += [(f"b{n}", mathieu_b(n, q)) for n in range(1, 12)]
    return min(((abs(math.sqrt(abs(a / cv)) - 1), name) for name, cv in curves if cv * a > 0),
               default=(math.inf, None))[::-1]


@pytest.fixture
def counted(monkeypatch):
    # Every stability evaluation of the chart goes through lines.Probe -> lines.stability:
    # counted here, outside the chart, to check the chart's own tally.
    calls = [0]
    real = lines.stability

    def counting(*args, **kwargs):
        calls[0] += 1
        return real(*args, **kwargs)

    monkeypatch.setattr(lines, "stability", counting)
    return calls


def test_sine_chart_json_rows_lines_and_tongues_against_mathieu(counted):
    rig = rod_rig(limits={"speed_rpm": [60, 3000], "stroke_m": [0.01, 0.03]})
    c = chart(rig, rows=5)
    d = json.loads(json.dumps(chart_dict(c)))  # plain data: survives JSON unchanged
    l_eq = ss.properties(rig).l_eq_m
    assert d["y_axis"] == "stroke" and d["y_unit"] == "m" and d["complete"] is True
    assert d["speed_range_rpm"] == [60, 3000] and d["y_range"] == [0.01, 0.03]  # the limits
    # rows evenly spaced over the limits (numpy.linspace), each from the lowest speed
    assert [r["y"] for r in d["rows"]] == pytest.approx(list(np.linspace(0.01, 0.03, 5)),
                                                        rel=1e-12)
    assert all(r["speed_min_rpm"] == 60 and r["speed_max_rpm"] == 3000 for r in d["rows"])
    # the chart's tally equals the evaluations counted outside it
    assert d["evaluations"] == c.evaluations == counted[0]
    row_edges = 0
    for r in d["rows"]:
        for eq in ("inverted", "hanging"):
            edges = r[eq]["edges"]
            row_edges += len(edges)
            for x, _ in edges:
                assert _curve(l_eq, eq, x, r["y"])[1] < 1e-6  # on a scipy Mathieu curve
            # stable intervals: alternate with the edges; a gained edge opens one
            ends = [x for iv in r[eq]["stable_intervals_rpm"] for x in iv]
            expected = ([60] if eq == "hanging" else []) + [x for x, _ in edges] + \
                ([3000] if len(edges) % 2 == (0 if eq == "hanging" else 1) else [])
            # hanging stable at 60 rpm below every tongue (a = 4g/(l w^2) = 8.3 > a_2(q)
            # = 4.0 +- q^2, mathieu_a), inverted unstable there (a < a_0(q))
            assert ends == pytest.approx(expected, rel=1e-12)
    for eq in ("inverted", "hanging"):
        for x, y, _ in d["column_edges"][eq]:
            assert _curve(l_eq, eq, x, y)[1] < 1e-6
    # Polylines: each one follows ONE Mathieu transition curve (the same curve name at every
    # point); every edge of the rows and columns lies on exactly one line.
    lines_points = 0
    for b in d["boundaries"]:
        names = {_curve(l_eq, b["equilibrium"], x, y)[0] for x, y in b["points"]}
        assert len(names) == 1, names
        lines_points += len(b["points"])
        # the upright pendulum's gained (lower) edge is a_0 (Kapitza's, the Mathieu stability
        # chart, NIST DLMF 28.17); the hanging one's edges bound its tongues, a_n / b_n, n >= 1
        curve = names.pop()
        if b["equilibrium"] == "inverted":
            assert (curve == "a0") == b["gained"]
            assert b["kind"] == ("lower (Kapitza-type) edge" if b["gained"] else "upper edge")
        else:
            assert curve != "a0" and b["kind"] == "tongue edge"
    columns = sum(len(v) for v in d["column_edges"].values())
    assert lines_points == row_edges + columns
    # The linking rule (chart.boundaries): a line goes on to the nearest edge of its kind at
    # the next station within 8% of the span across the stations (speed for rows, y for the
    # columns). The rows' Kapitza edges here lie on a_0 at 2523, 1892, 1514, 1262 rpm, more
    # than 0.08 x 2940 rpm apart: four lines of one point, never one line through them.
    rows_y = {r["y"] for r in d["rows"]}
    for b in d["boundaries"]:
        by_rows = all(y in rows_y for _, y in b["points"])
        for (x0, y0), (x1, y1) in zip(b["points"], b["points"][1:]):
            assert (abs(x1 - x0) <= 0.08 * 2940) if by_rows else (abs(y1 - y0) <= 0.08 * 0.02)
    kapitza_rows = [b for b in d["boundaries"] if b["equilibrium"] == "inverted"
                    and all(y in rows_y for _, y in b["points"])]
    assert sorted(len(b["points"]) for b in kapitza_rows) == [1, 1, 1, 1]
    # the two hanging tongues cross all five rows: four lines of five points, one per row
    tongue_lines = [b for b in d["boundaries"] if b["equilibrium"] == "hanging"]
    assert len(tongue_lines) == 4
    for b in tongue_lines:
        assert [y for _, y in b["points"]] == pytest.approx([r["y"] for r in d["rows"]])
    # Tongues: mathieu_a(n, 0) = n^2 puts the n-th at 2 f0 / n, f0 = sqrt(g/l_eq) / 2 pi;
    # n = 1, 2 lie in 60-3000 rpm (n = 3 is at 44.6 rpm)
    f0 = math.sqrt(G / l_eq) / (2 * math.pi)
    assert [(t["order"], t["mode"], t["label"]) for t in d["tongues"]] == \
        [(1, 0, "n=1"), (2, 0, "n=2")]
    for t in d["tongues"]:
        assert t["speed_rpm"] == pytest.approx(2 * f0 / t["order"] * 60, rel=1e-9)
        assert mathieu_a(t["order"], 0) == pytest.approx(
            4 * G / (l_eq * (2 * math.pi * t["speed_rpm"] / 60) ** 2), rel=1e-9)


def test_a_followed_row_costs_less_than_its_walk(counted):
    # The rows between computed neighbours follow their edges (brackets near the
    # interpolated edges + spot checks) to save the whole walk: that is the method's point, so
    # a followed row must take fewer evaluations than the same row walked whole, measured
    # here side by side (line_edges with no prediction).
    rig = rod_rig(limits={"speed_rpm": [60, 3000], "stroke_m": [0.01, 0.03]})
    c = chart(rig, rows=5)
    model = derive(rig)
    # rows 0 and 4 are walked first (coarse), then 2, then 1 and 3 follow their neighbours;
    # row 3 lies between rows 2 and 4 that agree in both equilibria
    row = c.rows[3]
    walked = 0
    for eq in ("inverted", "hanging"):
        point, lo, hi = row_line(model, "stroke", row.y)
        probe = lines.Probe(model, eq, point, row_settings(model, point, lo, hi, eq))
        _, edges = line_edges(probe, lo, hi)
        assert [e.gained for e in edges] == [e.gained for e in row.edges[eq]]  # the same edges
        assert [e.x for e in edges] == pytest.approx([e.x for e in row.edges[eq]], rel=1e-7)
        walked += probe.count
    assert row.evaluations < walked / 2
    # ... and no more than following needs at worst: its first verdict, the spot checks and
    # the row's end, and per edge the tight bracket's two ends plus the bisection steps that
    # take that bracket (FOLLOW_TIGHT of the neighbours' spread + FOLLOW_TIGHT_SLACK) to
    # CHART_RTOL; Brent's method on a smooth margin needs fewer than bisection
    need = 1 + FOLLOW_CHECKS + 1
    for eq in ("inverted", "hanging"):
        for p, q in zip(c.rows[2].edges[eq], c.rows[4].edges[eq]):
            x = (p.x + q.x) / 2
            half = abs(q.x - p.x) * FOLLOW_TIGHT + FOLLOW_TIGHT_SLACK * x
            need += 2 + math.ceil(math.log2(2 * half / (x * CHART_RTOL)))
    assert row.evaluations <= need


@pytest.mark.parametrize("waveform", ["sine", "crank"])
def test_accel_rows_sit_where_the_peak_accel_formulas_put_them(waveform, counted):
    # Peak pivot acceleration: sine (stroke/2) w^2; slider-crank r w^2 (1 + r/l), r = stroke/2
    # (textbook slider-crank kinematics), solved here for the stroke by scipy brentq.
    rig = rod_rig(waveform)
    top = 0.05  # rod_rig's stroke limit (the crank's 2 r < rod)
    c = chart(rig, rows=13, y_axis="accel")
    d = chart_dict(c)
    w_hi = 2 * math.pi * 3000 / 60

    def peak(stroke, w):
        r = stroke / 2
        return r * w * w * ((1 + r / ROD) if waveform == "crank" else 1)

    def stroke_at(y, speed):
        w = 2 * math.pi * speed / 60
        return brentq(lambda s: peak(s, w) - y, 0, 2 * ROD)

    assert d["y_unit"] == "m/s^2" and c.y_range[0] == 0
    assert c.y_range[1] == pytest.approx(peak(top, w_hi), rel=1e-12)
    assert c.evaluations == counted[0]
    assert accel_lines(c, rig) == []  # iso-accel lines are drawn over stroke charts only
    ys = np.linspace(0, peak(top, w_hi), 13)
    assert [r.y for r in c.rows] == pytest.approx(list(ys[:len(c.rows)]), rel=1e-12)
    checked = 0
    for row in c.rows[1:]:
        # the row starts where its stroke first fits the mechanism: peak(top, w) = y
        w_min = brentq(lambda w: peak(top, w) - row.y, 1e-3, 1e4)
        assert row.speed_min == pytest.approx(max(60, w_min * 60 / (2 * math.pi)), rel=1e-9)
        point = row_line(rig, "accel", row.y)[0]
        for x in (row.speed_min, 0.5 * (row.speed_min + 3000), 3000):
            assert point(x)[1] == pytest.approx(stroke_at(row.y, x), rel=1e-9)
        for eq in ("inverted", "hanging"):
            for e in row.edges[eq][:2]:
                if waveform == "sine":
                    l_eq = ss.properties(rig).l_eq_m
                    assert _curve(l_eq, eq, e.x, stroke_at(row.y, e.x))[1] < 1e-6
                else:  # undamped crank: solve_ivp multipliers either side (1e-6 above 1)
                    below = _ref_max_multiplier(rig, eq, e.x * (1 - 1e-3),
                                                stroke_at(row.y, e.x * (1 - 1e-3))) < 1 + 1e-6
                    above = _ref_max_multiplier(rig, eq, e.x * (1 + 1e-3),
                                                stroke_at(row.y, e.x * (1 + 1e-3))) < 1 + 1e-6
                    assert (below, above) == ((False, True) if e.gained else (True, False))
                checked += 1
    assert checked >= 2  # the Kapitza edge at w = y / sqrt(2 g l) crosses rows 2-3 (y > 157)


def test_chart_options_are_refused_by_name():
    rig = rod_rig()
    for options, words in (({"rows": 1}, "rows: 1 must be from 2 to 2000"),
                           ({"rows": 2001}, "rows: 2001 must be from 2 to 2000"),
                           ({"y_axis": "speed"}, "y_axis: 'speed' is not 'stroke' or 'accel'"),
                           ({"equilibria": ("sideways",)}, "equilibria: 'sideways' is not")):
        with pytest.raises(ValueError, match=words.replace("(", r"\(")):
            chart(rig, **options)
    c = chart(rig, rows=2, columns=False)  # the smallest chart: the limits' two strokes
    assert [r.y for r in c.rows] == [0.0, 0.05] and c.columns == {}


def test_two_link_damped_chart_edges_tongues_and_tally(counted):
    # Coupled modes (joint dampers): every edge is confirmed by the chain's exact monodromy.
    # Checked: solve_ivp verdicts either side of row edges (in speed) and of column edges (in
    # stroke); the tongues at 2 f_i / n with f_i from scipy eigh of the linearised K g, M.
    rig = rod_rig("crank", damping=3e-4, links=TWO_LINKS,
                  limits={"speed_rpm": [300, 3000], "stroke_m": [0.01, 0.04]})
    c = chart(rig, rows=5)
    assert c.complete and c.evaluations == counted[0]
    # Column edges of a coupled chain are aimed on the straight line through the same edge at
    # the two speeds before (a boundary along speed is smooth) and placed in one tight
    # bracket: its two ends plus the secant-led Brent steps from that bracket (relative
    # 1e-4) to CHART_RTOL (1e-8): superlinear, order 1.6, so 3 steps. The method lands that
    # aim nine times in ten (chart_columns' _trace); the rest cost a modal edge and its
    # confirmation, each at most two ends and the bisection steps of a tight bracket.
    spent = c.evaluations - sum(r.evaluations for r in c.rows)
    aimed = 2 + 3
    missed = 2 * (2 + math.ceil(math.log2(2 * CONFIRM_HALF_WIDTHS[0] / CHART_RTOL)))
    assert spent <= (0.9 * aimed + 0.1 * missed) * sum(len(v) for v in c.columns.values())
    checked = 0
    for row in c.rows:
        for eq in ("inverted", "hanging"):
            for e in row.edges[eq]:
                below = _ref_max_multiplier(rig, eq, e.x * (1 - 1e-3), row.y) < 1
                above = _ref_max_multiplier(rig, eq, e.x * (1 + 1e-3), row.y) < 1
                assert (below, above) == ((False, True) if e.gained else (True, False))
                checked += 1
    assert checked >= 4
    for eq in ("inverted", "hanging"):
        cols = c.columns[eq]
        assert cols
        for e in cols[::max(1, len(cols) // 4)]:
            below = _ref_max_multiplier(rig, eq, e.speed_rpm, e.y * (1 - 1e-3)) < 1
            above = _ref_max_multiplier(rig, eq, e.speed_rpm, e.y * (1 + 1e-3)) < 1
            assert (below, above) == ((False, True) if e.gained else (True, False))
    lin = ss.linearise(rig, "hanging")
    f = np.sqrt(eigh(G * np.array(lin.K), np.array(lin.M), eigvals_only=True)) / (2 * math.pi)
    want = sorted((2 * fi / n * 60, n, i) for i, fi in enumerate(f) for n in range(1, 50)
                  if 300 <= 2 * fi / n * 60 <= 3000)
    got = sorted((t["speed_rpm"], t["order"], t["mode"]) for t in c.tongues)
    assert [(n, i) for _, n, i in got] == [(n, i) for _, n, i in want]
    assert [s for s, _, _ in got] == pytest.approx([s for s, _, _ in want], rel=1e-9)
    assert all(t["label"] == f"n={t['order']} (mode {t['mode'] + 1})" for t in c.tongues)


def test_speed_floor_and_off_vertical_map():
    # The scans resolve drives down to a 25th of the pendulum's own frequency (the rule the
    # refusal states): f0 = sqrt(g / l_eq) / 2 pi (small-swing compound pendulum, textbook).
    rig = rod_rig(limits={"speed_rpm": [1, 2], "stroke_m": [0.0, 0.05]})
    f0 = math.sqrt(G / ss.properties(rig).l_eq_m) / (2 * math.pi)
    with pytest.raises(OutOfReach, match=r"limits.speed_rpm: \[1.0, 2.0\] rpm is outside") as no:
        chart(rig, rows=2)
    assert f"below {60 * f0 / 25:.4g} rpm" in str(no.value)
    low = chart(rod_rig(limits={"speed_rpm": [1, 400], "stroke_m": [0.01, 0.02]}), rows=2,
                columns=False)
    assert low.speed_range == pytest.approx((60 * f0 / 25, 400), rel=1e-6)
    assert any(n.startswith(f"the chart starts at {60 * f0 / 25:.4g} rpm") for n in low.notes)
    # a drive tilted off vertical: the map is of the vertical drive, and says so in its JSON
    tilted = ss.rig_from_dict({**ss.rig_to_dict(rod_rig()),
                               "drive": {"waveform": "sine", "stroke_m": 0.02,
                                         "speed_rpm": 1500, "axis_tilt_deg": 5.0}})
    d = chart_dict(chart(tilted, rows=2, columns=False))
    assert (d["drive_as_mapped"], d["rig_axis_tilt_deg"], d["rig_side_stroke_m"]) == \
        ("vertical", 5.0, 0.0)
    assert d["notes"][1:] == [  # its words by hand (common practice, no source)
        "the map is of the positions with the drive vertical: off vertical the check's verdict "
        "and windows are those of the held orbit (on the stroke view, bars through the "
        "operating point), and the lean chart shows how far it leans"]
    assert "held_orbit" not in d and "drive_as_mapped" not in chart_dict(low)


def test_stroke_for_a_peak_accel_of_a_sampled_drive():
    # Samples of y = (s/2)(cos phi + 0.1 cos 2 phi): span s (max at 0, min at pi), and
    # |y''| = (s/2)|cos phi + 0.4 cos 2 phi| peaks at phi = 0 as 0.7 s (differentiated by
    # hand). So the stroke giving a peak acceleration A at w is A / (0.7 w^2).
    s, n = 0.02, 64
    samples = [s / 2 * (math.cos(2 * math.pi * k / n) + 0.1 * math.cos(4 * math.pi * k / n))
               for k in range(n)]
    rig = ss.rig_from_dict({**ss.rig_to_dict(rod_rig()),
                            "drive": {"waveform": "samples", "samples_m": samples,
                                      "speed_rpm": 1500}})
    assert rig.drive.stroke_m == pytest.approx(s, rel=1e-12)
    for accel, speed in ((50.0, 600.0), (400.0, 2400.0)):
        w = 2 * math.pi * speed / 60
        stroke = row_line(rig, "accel", accel)[0](speed)[1]
        assert stroke == pytest.approx(accel / (0.7 * w * w), rel=1e-9)


def test_accel_lines_chosen_under_the_chart_corner():
    # The chart's corner (top stroke 0.05 m at 3000 rpm) reaches (0.05/2) w^2 = 251.6 g (sine
    # formula); the iso-lines are the five largest of 1-2-5 steps below it, and each line has
    # every one of the 49 evenly spaced speeds at which its stroke 2 g G / w^2 fits the chart.
    rig = rod_rig()
    c = chart(rig, rows=2, columns=False)
    corner = 0.025 * (2 * math.pi * 3000 / 60) ** 2 / G
    assert corner == pytest.approx(251.6, abs=0.1)
    got = accel_lines(c, rig)
    assert [g for g, _ in got] == [10, 20, 50, 100, 200]
    for g_value, line in got:
        speeds = [60 + 2940 * k / 48 for k in range(49)]
        fits = [v for v in speeds if 2 * g_value * G / (2 * math.pi * v / 60) ** 2 <= 0.05]
        assert [v for v, _ in line] == pytest.approx(fits, rel=1e-12)
    # The ends are in the chart: a top stroke on which the 10 g line's stroke lands exactly at
    # the 41st speed (2510 rpm; the stroke (10 G / w^2) / 0.5, the sine formula, in the order
    # of operations that makes it the same double) keeps that speed in the line: 9 speeds from
    # 2510 to 3000 rpm, the first at the top.
    v = 60 + (3000 - 60) * 40 / 48
    top = (10 * G / (2 * math.pi * v / 60) ** 2) / 0.5
    rig = rod_rig(limits={"speed_rpm": [60, 3000], "stroke_m": [0.0, top]})
    line = dict(accel_lines(chart(rig, rows=2, columns=False), rig))[10]
    assert [x for x, _ in line] == pytest.approx([60 + 2940 * k / 48 for k in range(40, 49)],
                                                 rel=1e-12)
    assert line[0][1] == top


def test_boundaries_link_each_edge_to_the_nearest_of_its_kind_within_the_gap():
    # chart.boundaries' rule (its docstring): an edge continues the open line of its kind
    # nearest to it within 8% of the span (speeds 1000-2000 rpm: 80 rpm; y 0-1: 0.08).
    # Expected lines worked by hand (common practice, no source).
    from shakestill.equilibria.chart import Chart, boundaries
    from shakestill.equilibria.chart_columns import ColumnEdge
    from shakestill.equilibria.chart_rows import Row
    from shakestill.equilibria.lines import Edge

    def row(y, *edges):
        return Row(y, 1000.0, 2000.0, {"hanging": tuple(Edge(x, g) for x, g in edges)},
                   {"hanging": True}, 0)

    c = Chart("stroke", (1000.0, 2000.0), (0.0, 1.0),
              (row(0.0, (1100, False), (1500, False)),
               row(0.5, (1040, False), (1150, False), (1540, True), (1560, False)),
               row(1.0, (1700, False))),
              (), 0, True, (),
              columns={"hanging": (ColumnEdge(1900.0, 0.2, True), ColumnEdge(1950.0, 0.25, True),
                                   ColumnEdge(1950.0, 0.9, True))})
    got = sorted((b["gained"], [tuple(p) for p in b["points"]]) for b in boundaries(c, "hanging"))
    assert got == sorted([
        (False, [(1100, 0.0), (1150, 0.5)]),  # 50 rpm away, nearer than 1040 (60 rpm)
        (False, [(1040, 0.5)]),  # left over: a line of its own
        (False, [(1500, 0.0), (1560, 0.5)]),  # not 1540: a gained edge, the other kind
        (False, [(1700, 1.0)]),  # 140 rpm from 1560: beyond the 80 rpm gap
        (True, [(1540, 0.5)]),
        (True, [(1900, 0.2), (1950, 0.25)]),  # columns: 0.05 apart in y, within 0.08
        (True, [(1950, 0.9)]),  # 0.7 from 0.2: a line of its own
    ])
    assert {b["kind"] for b in boundaries(c, "hanging")} == {"tongue edge"}


def test_column_and_island_helpers_by_hand():
    # Worked by hand from each helper's docstring (common practice, no source).
    from shakestill.equilibria.chart_columns import _evenly_spaced, _swept, column_speeds
    from shakestill.equilibria.chart_modes import _verdict
    from shakestill.equilibria.chart_rows import Row
    from shakestill.equilibria.lines import Edge

    def row(*edges):
        return Row(0.0, 1000.0, 2000.0, {"inverted": tuple(Edge(x, g) for x, g in edges)},
                   {"inverted": False}, 0)

    below, above = row((1200, True), (1800, False)), row((1300, True))
    # an edge of one row and one of the same kind in the other on either side of x (ends in)
    assert [_swept(below, above, "inverted", x) for x in (1199, 1200, 1250, 1300, 1301, 1790)] \
        == [False, True, True, True, False, False]
    # the columns: the middles of 200 equal cells of the chart's speeds (300-3000 rpm: 13.5
    # rpm wide), 306.75, 320.25, ..., 2993.25 rpm
    speeds = column_speeds((300.0, 3000.0))
    assert len(speeds) == 200 and speeds[:2] == pytest.approx([306.75, 320.25], rel=1e-15)
    assert speeds[-1] == pytest.approx(2993.25, rel=1e-15)
    # neighbouring columns: the same step twice, to 1e-9 relative
    assert [_evenly_spaced(*xs) for xs in ((1, 2, 3), (1, 2, 4), (1, 3, 4), (1, 2, 2))] == \
        [True, False, False, False]
    # a row's verdict at x: the last edge before x says, else the verdict at the row's start
    edges = (Edge(100, True), Edge(200, False), Edge(300, True))
    assert [_verdict(edges, False, x) for x in (50, 100, 150, 250, 350)] == \
        [False, False, True, False, True]


def test_the_notes_say_how_the_chart_was_made():
    # The notes a user reads with the chart (chart.chart_steps): the row scan's step (10% of
    # speed, chart_rows.CHART_SPEED_STEP, or 0.08 of a tongue spacing, lines.PHASE_STEP), the
    # edges' precision (1e-8, CHART_RTOL), what a feature between two coarse rows is (every
    # 8th row is coarse: 8 / (rows - 1) of the y range, here 3 rows: 4), and the columns'
    # count (200, chart_columns.COLUMNS); a one-link rig in its limits has no other note.
    # Documented values, the words by hand (common practice, no source).
    c = chart(rod_rig(), rows=3)
    assert c.notes == (
        "coarse rows are walked whole (a scan every 10% of speed or 0.08 of a tongue spacing, "
        "every local peak of the margin searched); the rows between follow the edges of their "
        "nearest computed neighbours (filled in by bisection) by bracketed root finding, and "
        "are walked whole where the neighbours disagree; edges are refined to 1e-08 relative "
        "in speed; a feature that starts and ends between two coarse rows (4 of the y range) "
        "is not seen",
        "at 200 evenly spaced speeds, an edge between two rows that no pair of the rows' edges "
        "explains (a boundary running along speed, such as the upright pendulum's upper edge) "
        "is traced in y by root finding to the same precision")
    assert chart_dict(c)["notes"] == list(c.notes)


def test_the_notes_name_where_the_map_leaves_the_rigs_speeds():
    # chart.chart_steps' notes where the map is not the rig's whole range or drive (words by
    # hand, common practice, no source): below the scan floor, a 25th of the pendulum's own
    # frequency f0 = sqrt(g / l_eq) / 2 pi (small swings; a uniform rod about its end has
    # l_eq = I / (m c) = (m L^2 / 3) / (m L / 2) = 2 L / 3, textbook), here under 1 rpm (a 3 m
    # rod: 0.846 rpm, from a speed limit of 0); above MAX_SPEED_RPM (1e6 rpm), which the rig
    # file refuses but a Rig made in Python may ask for (a drive tilted off vertical: in
    # test_speed_floor_and_off_vertical_map).
    from dataclasses import replace

    rod = ss.rig_from_dict({**ss.rig_to_dict(rod_rig()),
                            "links": [{"length_m": 3.0, "rod_mass_kg": 0.1}],
                            "limits": {"speed_rpm": [0, 60], "stroke_m": [0.0, 0.05]}})
    f0 = math.sqrt(G / (2 * 3.0 / 3)) / (2 * math.pi)
    floor = 60 * f0 / 25
    assert floor < 1
    c = chart(rod, rows=2, columns=False)
    assert c.speed_range == pytest.approx((floor, 60), rel=1e-9)
    assert c.notes[1:] == (
        f"the chart starts at {floor:.4g} rpm, above the rig's lowest speed: below "
        f"{floor:.4g} rpm the pendulum's own frequency ({f0:.3g} Hz) is more than 25 times the "
        "drive's, too many parametric resonances to resolve",)
    fast = rod_rig()
    fast = replace(fast, limits=replace(fast.limits, speed_rpm=(300.0, 2e6)))
    c = chart(fast, rows=2, columns=False)
    assert c.speed_range == (300.0, 1e6)
    assert c.notes[1:] == ("the chart stops at 1e+06 rpm, below the rig's highest speed: above "
                           "1e+06 rpm the drive is outside the range this method is built for",)


def test_a_rows_points_share_the_settings_sized_at_its_ends(monkeypatch):
    # chart_rows.scan_row / row_settings (their docstrings): every point of a row is
    # evaluated with one Settings, sized at the row's two ends (not each point's own
    # defaults, as the check takes them): here a crank row, whose settings are the 2 x 2 RK
    # trace with fixed steps ("monodromy"), where a point's defaults would take Hill's method.
    from shakestill.equilibria.chart_rows import scan_row

    rig = rod_rig("crank")
    model = derive(rig)
    given = []
    real = lines.stability

    def recording(*args, settings=None, **kwargs):
        given.append(settings)
        return real(*args, settings=settings, **kwargs)

    monkeypatch.setattr(lines, "stability", recording)
    row = scan_row(model, "stroke", 0.03, ("hanging",))
    point, lo, hi = row_line(model, "stroke", 0.03)
    want = row_settings(model, point, lo, hi, "hanging")
    assert (want.method, want.steps is not None) == ("monodromy", True)
    assert len(given) == row.evaluations and all(s == want for s in given)
    assert real(model, "hanging", 1500.0, 0.03).method == "hill"  # a point's defaults
