"""The planner against outside references: Kapitza and the Mathieu boundaries for the robust
region, a brute-force optimiser over an independent scipy monodromy for the recommendation,
and every reported worst-case rig checked on its own by scipy's Mathieu values."""
import math
import random

import numpy as np
import pytest
from scipy import special
from scipy.integrate import solve_ivp

import refsolvers as ref
import shakestill as ss
from shakestill.equilibria.plan import plan
from shakestill.equilibria.plan_report import plan_dict, region_dict
from shakestill.equilibria.uncertainty import rig_set
from shakestill.model.spreads import number_at, with_number

G = ref.G_STANDARD


def rpm(omega):
    return omega * 60 / (2 * math.pi)


def tip_rig(at, stroke, speed, limits, spreads, length=0.5, damping=0.0):
    data = ref.rig([ref.link(length, 0.0, [(0.1, at)], damping=damping)],
                   ref.sine(stroke, speed), limits)
    data["spreads"] = spreads
    return data


def row_at(region, y, eq="inverted"):
    row = min(region["rows"], key=lambda r: abs(r["y"] - y))
    assert abs(row["y"] - y) < 1e-12
    return row[eq]["stable_intervals_rpm"]


def test_robust_edges_are_kapitza_at_longest_and_mathieu_at_shortest():
    # l_eq = at_m (a point mass on a massless rod) from 0.38 to 0.42 m.
    data = tip_rig(0.4, 0.02, 600, {"speed_rpm": [10, 60000], "stroke_m": [0, 0.4]},
                   {"links[0].point_masses[0].at_m": "+-5%"})
    rig = ss.rig_from_dict(data)
    p = plan(rig, rows=41)
    # the JSON's robust_region itself (plan_dict puts region_dict's there), without the
    # sensitivity and run-up that plan_dict also works out and this test does not read
    # (11.8 of its 12.1 s; test_region_size_... below reads it through plan_dict)
    region = region_dict(p, rig)
    l_min, l_max = 0.38, 0.42
    # Small stroke: the lower edge is Kapitza's (A w)^2 = 2 g l at the longest l
    # (Landau & Lifshitz, Mechanics, sec. 30); relative error (7/32)(A/l)^2 (DLMF 28.6.1).
    amp = 0.02 / 2
    (lo, hi), = row_at(region, 0.02)
    kapitza = rpm(math.sqrt(2 * G * l_max) / amp)
    assert lo == pytest.approx(kapitza, rel=1.5 * 7 / 32 * (amp / l_max) ** 2)
    # exactly: a = a_0(q) at q = stroke / l_max (scipy.special.mathieu_a), 1e-6 relative
    assert lo == pytest.approx(rpm(math.sqrt(-4 * G / (l_max * special.mathieu_a(0, 0.02 / l_max)))),
                               rel=1e-6)
    assert hi == 60000  # no upper edge at small stroke: the limit
    # Large stroke, q = stroke / l_min > 0.908: the upper edge is b_1(q) = a at the shortest l
    # (scipy.special.mathieu_b), 1e-6 relative; the lower edge a_0 at the longest.
    (lo, hi), = row_at(region, 0.36)
    assert hi == pytest.approx(rpm(math.sqrt(-4 * G / (l_min * special.mathieu_b(1, 0.36 / l_min)))),
                               rel=1e-6)
    assert lo == pytest.approx(rpm(math.sqrt(-4 * G / (l_max * special.mathieu_a(0, 0.36 / l_max)))),
                               rel=1e-6)
    # At high speed the upper edge tends to A = 0.454 l (b_1(0.908) = 0, value from memory):
    # no row with stroke <= 0.908 l_min = 0.345 m has an upper edge; the rows above do.
    for row in region["rows"]:
        tops = [b for _, b in row["inverted"]["stable_intervals_rpm"]]
        if 0 < row["y"] <= 0.34:
            assert tops == [60000]
        if row["y"] >= 0.35:
            assert tops and tops[-1] < 60000


def test_edges_move_monotonically_with_length_and_damping():
    # The reason the corners bound the region (one link): each edge moves one way with l_eq and
    # with the damping (the Kapitza edge rises a little with damping: theta0 loses gamma^2). Against scipy.special.mathieu_a (undamped, 1e-6) and monotone order.
    base = tip_rig(0.4, 0.05, 1500, {"speed_rpm": [10, 60000], "stroke_m": [0, 0.4]}, {})
    lows = []
    for at in (0.36, 0.38, 0.40, 0.42, 0.44):
        base["links"][0]["point_masses"][0]["at_m"] = at
        w = ss.window(ss.rig_from_dict(base), "inverted", "speed")
        exact = rpm(math.sqrt(-4 * G / (at * special.mathieu_a(0, 0.05 / at))))
        assert w.low == pytest.approx(exact, rel=1e-6)
        lows.append(w.low)
    assert lows == sorted(lows)  # longer pendulum, higher Kapitza edge
    base["links"][0]["point_masses"][0]["at_m"] = 0.4
    for eq, axis in (("inverted", "speed"), ("hanging", "speed"), ("inverted", "stroke")):
        ends = []
        for c in (0.0, 2e-4, 4e-4, 8e-4):
            base["links"][0]["joint_damping_N_m_s"] = c
            base["drive"]["speed_rpm"] = 1500 if eq == "inverted" else 300
            w = ss.window(ss.rig_from_dict(base), eq, axis)
            ends.append((w.low, w.high))
        for side in zip(*ends):  # each end moves one way (either) as the damping grows
            assert list(side) in (sorted(side), sorted(side, reverse=True)), (eq, axis, ends)
        assert len(set(ends)) == 4  # and it does move: the check can fail


def monodromy_traces(l_values, speeds_rpm, strokes_m):
    """|trace| / 2 - 1 of the inverted sine-driven pendulum's monodromy for every (l, speed,
    stroke), by one vectorised scipy.integrate.solve_ivp over the drive phase (independent of
    the engine): theta'' = (g / (l w^2) - (A / l) cos(tau)) theta."""
    L, W, S = np.meshgrid(l_values, 2 * np.pi * np.asarray(speeds_rpm) / 60, strokes_m,
                          indexing="ij")
    c0 = (G / (L * W ** 2)).ravel()
    c1 = (S / 2 / L).ravel()
    n = c0.size

    def rhs(tau, x):
        th1, om1, th2, om2 = x.reshape(4, n)
        k = c0 - c1 * np.cos(tau)
        return np.concatenate([om1, k * th1, om2, k * th2])
    x0 = np.concatenate([np.ones(n), np.zeros(n), np.zeros(n), np.ones(n)])
    sol = solve_ivp(rhs, (0, 2 * np.pi), x0, method="DOP853", rtol=1e-11, atol=1e-12)
    xs = sol.y[:, -1].reshape(4, n)
    return (np.abs(xs[0] + xs[3]) / 2 - 1).reshape(L.shape)


def _edges_1d(xs, f):
    """Robust stable runs of f < 0 along xs, ends by linear interpolation (None: the limit)."""
    out, k = [], 0
    while k < len(xs):
        if f[k] >= 0:
            k += 1
            continue
        j = k
        while j + 1 < len(xs) and f[j + 1] < 0:
            j += 1
        lo = None if k == 0 else xs[k - 1] + (xs[k] - xs[k - 1]) * f[k - 1] / (f[k - 1] - f[k])
        hi = None if j == len(xs) - 1 else xs[j] + (xs[j + 1] - xs[j]) * f[j] / (f[j] - f[j + 1])
        out.append((k, j, lo, hi))
        k = j + 1
    return out


def brute_margins(speeds, strokes, worst):
    """The planner's metric on the grid (min of speed and stroke margins in per cent)."""
    m = np.full(worst.shape, -1.0)
    for j, s in enumerate(strokes):
        for k0, k1, lo, hi in _edges_1d(speeds, worst[:, j]):
            for k in range(k0, k1 + 1):
                d = [100 * (speeds[k] - lo) / speeds[k]] if lo else []
                d += [100 * (hi - speeds[k]) / speeds[k]] if hi else []
                m[k, j] = min(d + [1000.0])
    for k, v in enumerate(speeds):
        for j0, j1, lo, hi in _edges_1d(strokes, worst[k, :]):
            for j in range(j0, j1 + 1):
                d = [100 * (strokes[j] - lo) / strokes[j]] if lo else []
                d += [100 * (hi - strokes[j]) / strokes[j]] if hi else []
                m[k, j] = min([m[k, j]] + d)
    return m


def test_recommendation_against_brute_force_over_scipy_monodromy():
    limits = {"speed_rpm": [300, 1500], "stroke_m": [0.0, 0.3]}
    data = tip_rig(0.2, 0.1, 1000, limits, {"links[0].point_masses[0].at_m": "+-3%"})
    rig = ss.rig_from_dict(data)
    p = plan(rig)
    # brute force: a dense grid of the same objective, every point by scipy's monodromy of the
    # two corner lengths (the test above shows the edges are monotone in l between them)
    speeds = np.geomspace(300, 1500, 161)
    strokes = np.linspace(0.0015, 0.3, 200)
    worst = monodromy_traces([0.194, 0.206], speeds, strokes).max(axis=0)
    m = brute_margins(speeds, strokes, worst)
    k, j = np.unravel_index(np.argmax(m), m.shape)
    cell = 100 * max(speeds[1] / speeds[0] - 1, (strokes[1] - strokes[0]) / strokes[j])
    # the planner finds the grid's best margin to within a grid cell (per cent), and its point
    # scores on the grid within a cell of the best (interpolated on the grid's nearest node)
    assert p.score.margin == pytest.approx(m[k, j], abs=cell)
    kk = int(np.argmin(abs(np.log(speeds / p.speed_rpm))))
    jj = int(np.argmin(abs(strokes - p.stroke_m)))
    assert m[kk, jj] >= m[k, j] - 2 * cell


def test_binding_rig_checked_on_its_own_has_the_margin():
    # Undamped sine, with wander of the point: the binding rig of the JSON, read back as a rig
    # file, has the reported margin from the worst end of the wander, by the Mathieu windows
    # of refsolvers (scipy.special.mathieu_a / mathieu_b), 1e-6 relative.
    limits = {"speed_rpm": [300, 1500], "stroke_m": [0.0, 0.3]}
    data = tip_rig(0.2, 0.1, 1000, limits, {"links[0].point_masses[0].at_m": "+-3%",
                                            "drive.speed_rpm": "+-2%", "drive.stroke_m": "+-1 mm"})
    rig = ss.rig_from_dict(data)
    for weight in (1.0, 3.0):
        out = plan_dict(plan(rig, stroke_weight=weight), rig)
        b = out["binding"]
        member = ss.rig_from_dict(b["rig"])
        l_eq = member.links[0].point_masses[0].at_m
        v, s = out["speed_rpm"], out["stroke_m"]
        (vl, vh), (sl, sh) = out["wander"]["speed_rpm"], out["wander"]["stroke_m"]
        e = b["edge"]
        if e["axis"] == "speed":
            lo, hi = ref.speed_window(l_eq, G, e["at_m"], v, "inverted", limits["speed_rpm"])
            dist = 100 * ((vl - lo) if e["side"] == "low" else (hi - vh)) / v
        else:
            lo, hi = ref.stroke_window(l_eq, G, s, e["at_rpm"], "inverted", limits["stroke_m"])
            dist = 100 * ((sl - lo) if e["side"] == "low" else (hi - sh)) / s / weight
        assert dist == pytest.approx(out["worst_margin_percent"], rel=1e-6)


def test_corners_bound_every_interior_rig():
    # Damped, several numbers spread: interior rigs of the set (seeded samples), each checked by
    # scipy's monodromy of its own linear equation (refsolvers.monodromy, solve_ivp), are stable
    # at every sampled point of the robust region (common practice, no source).
    data = ss.demo_rig_dict()
    data["drive"] = {"waveform": "sine", "stroke_m": 0.024, "speed_rpm": 2700}
    data["spreads"] = {"links[0].length_m": "+-2%", "links[0].joint_damping_N_m_s": "0.5x..2x",
                       "links[0].point_masses[0].at_m": "+-1 mm",
                       "links[0].point_masses[0].mass_kg": "+-3%"}
    rig = ss.rig_from_dict(data)
    p = plan(rig, rows=20)
    region = plan_dict(p, rig)["robust_region"]
    pick = random.Random(5)
    paths = [s.path for s in rig.spreads]
    ranges = [s.range(number_at(rig, s.path)) for s in rig.spreads]
    checked = 0
    for _ in range(4):
        member = rig
        for path, (lo, hi) in zip(paths, ranges):
            member = with_number(member, path, pick.uniform(lo, hi))
        member_data = ss.rig_to_dict(member)
        for row in pick.sample(region["rows"][1:], 4):
            for a, b in row["inverted"]["stable_intervals_rpm"]:
                speed = a * (b / a) ** pick.uniform(0.02, 0.98)
                rho = ref.multipliers(ref.monodromy(member_data, "inverted", speed, row["y"]))
                assert max(abs(r) for r in rho) < 1.0  # stable: every multiplier inside
                checked += 1
    assert checked >= 10
    assert len(rig_set(rig).rigs) == 4


def test_cli_bridge_and_job_agree_and_name_bad_fields(tmp_path, capsys):
    # The three front doors give the same JSON (exact equality; common practice, no source).
    import json as js
    from shakestill import bridge
    from shakestill.cli import main
    data = tip_rig(0.2, 0.1, 1000, {"speed_rpm": [300, 1500], "stroke_m": [0.0, 0.3]},
                   {"links[0].point_masses[0].at_m": "+-3%"})
    path = tmp_path / "rig.json"
    path.write_text(js.dumps(data))
    assert main(["plan", str(path), "--json"]) == 0
    cli = js.loads(capsys.readouterr().out)
    reply = js.loads(bridge.handle(js.dumps({"op": "plan", "rig": data})))
    assert reply["ok"] and reply["result"] == cli
    for key in ("speed_rpm", "stroke_m", "worst_margin_percent", "binding", "robust_region",
                "sensitivity"):
        assert key in cli
    job = js.loads(bridge.handle(js.dumps({"op": "motion_job_start", "kind": "plan", "rig": data})))
    step = {"done": False}
    while not step["done"]:
        step = js.loads(bridge.handle(js.dumps({"op": "motion_job_step", "job": job["job"],
                                                "budget_ms": 5000})))
    assert step["result"] == cli
    bad = js.loads(bridge.handle(js.dumps({"op": "plan", "rig": data, "for": "sideways"})))
    assert not bad["ok"] and bad["problems"][0]["path"] == "for"


def test_runup_without_a_rate_answers_at_the_rate_it_recommends(capsys):
    # The recommended rate keeps the hanging pendulum's growth through every crossing under the
    # factor (the run-up's own simulated ramp, as runup --rate reports it; common practice, no
    # source): at that rate the report says ok, and at half of it it does not.
    import json as js
    from shakestill.cli import main
    assert main(["runup", "--json"]) == 0
    out = js.loads(capsys.readouterr().out)
    assert out["rate_recommended"] is True and out["rate_rpm_s"] > 0
    assert out["hanging"]["ok"] is True
    assert main(["runup", "--json", "--rate", f"{out['rate_rpm_s'] / 2}rpm/s"]) == 0
    half = js.loads(capsys.readouterr().out)
    assert half["rate_recommended"] is False and half["hanging"]["ok"] is False
    assert main(["runup"]) == 0  # the words say the rate was chosen, and why
    assert (f"Run-up at {out['rate_rpm_s']:.4g} rpm/s (recommended: the slowest ramp that keeps "
            "the hanging pendulum's growth under x10)") in capsys.readouterr().out


def test_region_size_is_the_trapezoid_integral_of_its_rows():
    # The robust region's size against numpy's trapezoid rule over the rows' stable lengths
    # (1e-12 relative), and never more than the limits' box: the hanging position of this rig
    # holds nearly everywhere (it reported 102% when every row counted a whole row).
    data = ss.demo_rig_dict()
    data["drive"] = {"waveform": "sine", "stroke_m": 0.024, "speed_rpm": 2700}
    data["spreads"] = {"links[0].length_m": "+-2%", "drive.speed_rpm": "+-1%"}
    rig = ss.rig_from_dict(data)
    region = plan_dict(plan(rig, equilibria=("inverted", "hanging")), rig)["robust_region"]
    ys = [r["y"] for r in region["rows"]]
    lo, hi = region["speed_range_rpm"]
    for eq in ("inverted", "hanging"):
        lengths = [sum(b - a for a, b in r[eq]["stable_intervals_rpm"]) for r in region["rows"]]
        want = np.trapezoid(lengths, ys) if hasattr(np, "trapezoid") else np.trapz(lengths, ys)
        assert region["area_rpm_m"][eq] == pytest.approx(want, rel=1e-12)
        assert 0 < region["area_percent_of_limits"][eq] <= 100.0
    assert region["area_percent_of_limits"]["hanging"] > 95.0
