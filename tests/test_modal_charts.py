"""Several links by their sway modes: multipliers, chart edges and windows against outside
references (the source is named beside each check)."""

from __future__ import annotations

import itertools
import math
import random

import numpy as np
import pytest
import scipy.linalg
from scipy.optimize import brentq
from scipy.special import mathieu_a, mathieu_b

import refsolvers as ref
import shakestill as ss
from shakestill.equilibria.chart import chart
from shakestill.equilibria.floquet import MODAL_METHOD
from shakestill.model.derived import derive
from shakestill.render.report import report_text

G = ref.G_STANDARD
LIMITS = {"speed_rpm": [300.0, 6000.0], "stroke_m": [0.0, 0.03]}


def _two(damping=0.0, drive=None):
    links = [ref.link(0.2, 0.04, damping=damping),
             ref.link(0.12, 0.02, [(0.01, 0.12)], damping=damping / 3)]
    return ref.rig(links, drive or ref.sine(0.016, 2700.0), limits=LIMITS)


def _three(damping=0.0, drive=None):
    links = [ref.link(0.18, 0.03, [(0.02, 0.18)], damping=damping),
             ref.link(0.12, 0.02, [(0.012, 0.12)], damping=damping),
             ref.link(0.08, 0.01, [(0.006, 0.08)], damping=damping)]
    return ref.rig(links, drive or ref.sine(0.004, 24000.0), limits=LIMITS)


def _mode_lengths(data):
    """Equivalent lengths 1 / lambda of scipy.linalg.eigh(K, M) on the reference chain."""
    mass, _, stiff = ref.chain_matrices(data, "hanging")
    return sorted(1.0 / scipy.linalg.eigh(stiff, mass, eigvals_only=True), reverse=True)


@pytest.mark.parametrize("drive", [ref.sine(0.012, 2000.0), ref.crank(0.012, 0.05, 2000.0)],
                         ids=["sine", "crank"])
@pytest.mark.parametrize("make", [_two, _three], ids=["two links", "three links"])
@pytest.mark.parametrize("equilibrium", ["inverted", "hanging"])
def test_undamped_modal_multipliers_are_the_chains(make, drive, equilibrium):
    # Acheson 1993 (Proc. R. Soc. Lond. A 443, 239): with no damping the chain splits into
    # its sway modes exactly. Reference: scipy.integrate.solve_ivp monodromy of the whole
    # chain (DOP853, rtol 1e-12) and numpy.linalg.eigvals; every multiplier to 1e-8.
    for speed in (700.0, 2000.0, 5200.0):
        data = make(drive=dict(drive, speed_rpm=speed))
        got = ss.stability(ss.rig_from_dict(data), equilibrium)
        assert got.method == MODAL_METHOD
        want = ref.multipliers(ref.monodromy(data, equilibrium))
        assert ref.same_multipliers(got.multipliers, want, 1e-8) < 1e-8


@pytest.mark.parametrize("make", [_two, _three], ids=["two links", "three links"])
def test_undamped_chart_edges_lie_on_a_modes_mathieu_curve(make):
    # Each sway mode of length L is the Mathieu equation y'' + (a - 2q cos 2z) y = 0 with
    # a = +-4 g / (L omega^2) and |q| = stroke / L (Acheson 1993; McLachlan, Theory and
    # Application of Mathieu Functions, ch. 2), so every edge of an undamped chart sits on
    # a transition curve of scipy.special.mathieu_a / mathieu_b for one of the lengths
    # from scipy.linalg.eigh. Tolerance 1e-6 relative in speed.
    data = make()
    lengths = _mode_lengths(data)
    c = chart(ss.rig_from_dict(data), rows=8)
    checked = 0
    for row in c.rows[1:]:
        for eq, sign in (("inverted", -1), ("hanging", 1)):
            for e in row.edges[eq]:
                w = 2 * math.pi * e.x / 60
                best = math.inf
                for length in lengths:
                    a, q = sign * 4 * G / (length * w * w), row.y / length
                    curves = [mathieu_a(n, q) for n in range(12)] + \
                             [mathieu_b(n, q) for n in range(1, 12)]
                    best = min([best] + [abs(math.sqrt(a / cv) - 1) for cv in curves
                                         if cv * a > 0])
                assert best < 1e-6
                checked += 1
    assert checked >= 10  # tongue and Kapitza edges in every row
    # edges traced in stroke at fixed speeds: on a mode's curve to 1e-6 relative in stroke
    for eq, sign in (("inverted", -1), ("hanging", 1)):
        for e in c.columns[eq]:
            w = 2 * math.pi * e.speed_rpm / 60
            assert min(ref.transition_q_error(sign * 4 * G / (length * w * w), e.y / length)
                       for length in lengths) < 1e-6


@pytest.mark.parametrize("make", [_two, _three], ids=["two links", "three links"])
def test_acheson_lower_edge_is_kapitza_of_the_longest_mode(make):
    # Acheson 1993: the upright chain needs (A omega)^2 > 2 g L_max; the exact lower edge
    # exceeds it by 7/32 (A / L_max)^2 relative (Landau & Lifshitz, Mechanics, sec. 30, with
    # the a_0(q) expansion of DLMF 28.6.1). The chart's edge at a small stroke within 5% of
    # that correction; L_max from scipy.linalg.eigh.
    data = make()
    longest = _mode_lengths(data)[0]
    data["limits"] = {"speed_rpm": [3000.0, 60000.0], "stroke_m": [0.0, 0.008]}
    c = chart(ss.rig_from_dict(data), rows=5, equilibria=("inverted",))
    row = c.rows[1]
    amplitude = row.y / 2
    kapitza = math.sqrt(2 * G * longest) / amplitude * 60 / (2 * math.pi)
    lower = [e.x for e in row.edges["inverted"] if e.gained][0]
    assert lower / kapitza - 1 == pytest.approx(7 / 32 * (amplitude / longest) ** 2, rel=0.05)


def _ref_max_multiplier(data, eq, speed, stroke):
    rhos = ref.multipliers(ref.monodromy(data, eq, speed_rpm=speed, stroke_m=stroke,
                                         rtol=1e-11, atol=1e-12))
    return max(abs(rhos))


@pytest.mark.parametrize("make", [_two, _three], ids=["two links", "three links"])
def test_damped_sine_chart_is_confirmed_by_solve_ivp(make):
    # Joint dampers couple the modes: the rows are predicted by them and confirmed by the
    # exact monodromy. Reference: solve_ivp monodromy (DOP853, rtol 1e-11): the verdict at
    # 60 random points of the rows (points within 1e-6 of an edge skipped), and the first
    # edges of the busiest row by scipy.optimize.brentq on it to 1e-4 relative (the target).
    data = make(damping=2e-4)  # dampers that mix the modes by 0.38 at most: predicted
    rig = ss.rig_from_dict(data)
    assert derive(rig).modes.coupling > 0.01  # the dampers do couple the modes
    c = chart(rig, rows=8)
    assert any("confirmed by the chain's exact monodromy" in n for n in c.notes)
    for row, x, eq, held in ref.chart_points(c, random.Random(11), 60):
        assert held == (_ref_max_multiplier(data, eq, x, row.y) < 1)
    row = max(c.rows, key=lambda r: len(r.edges["inverted"]) + len(r.edges["hanging"]))
    checked = 0
    for eq in ("inverted", "hanging"):
        for e in row.edges[eq][:2]:
            want = brentq(lambda v: _ref_max_multiplier(data, eq, v, row.y) - 1,
                          e.x * (1 - 2e-3), e.x * (1 + 2e-3), xtol=1e-9 * e.x)
            assert e.x == pytest.approx(want, rel=1e-4)
            checked += 1
    assert checked >= 2


@pytest.mark.parametrize("make", [_two, _three], ids=["two links", "three links"])
@pytest.mark.parametrize("equilibrium", ["inverted", "hanging"])
def test_undamped_window_edges_are_a_modes_mathieu_edges(make, equilibrium):
    # The speed and stroke windows of an undamped chain end where one mode's Mathieu
    # equation reaches a transition curve (Acheson 1993; scipy.special.mathieu_a / _b with
    # the lengths of scipy.linalg.eigh): each edge is checked by the relative distance in q
    # at its speed to the nearest curve of any mode, to 1e-8 (the target).
    data = make(drive=ref.sine(0.016, 4000.0))  # both equilibria stable here
    lengths = _mode_lengths(data)
    rig = ss.rig_from_dict(data)
    checked = 0
    for axis in ("speed", "stroke"):
        w = ss.window(rig, equilibrium, axis)
        for value, is_edge in ((w.low, w.low_is_edge), (w.high, w.high_is_edge)):
            if value is None or not is_edge:
                continue
            speed, stroke = (value, 0.016) if axis == "speed" else (4000.0, value)
            err = min(ref.transition_q_error(*ref.mathieu_aq(length, G, stroke, speed,
                                                            equilibrium))
                      for length in lengths)
            assert err < 1e-8
            checked += 1
    assert checked >= 1


@pytest.mark.parametrize("equilibrium", ["inverted", "hanging"])
def test_undamped_crank_near_its_dead_point_falls_back_to_the_chains_monodromy(equilibrium):
    # r/l = 0.906: each sway mode's Hill band (82 rows x 80 harmonics) is over MAX_HILL_WORK,
    # which refused the check although the chain's RK monodromy answers. Reference:
    # scipy.integrate.solve_ivp monodromy of the whole chain (DOP853, rtol 1e-12) and
    # numpy.linalg.eigvals; every multiplier to 1e-8 relative.
    data = _two(drive=ref.crank(0.145, 0.08, 2000.0))
    data["limits"] = {"speed_rpm": [300.0, 6000.0], "stroke_m": [0.0, 0.15]}
    got = ss.stability(ss.rig_from_dict(data), equilibrium)
    assert got.method == "monodromy" and got.converged
    want = ref.multipliers(ref.monodromy(data, equilibrium))
    assert ref.same_multipliers(got.multipliers, want, 1e-8) < 1e-8


@pytest.mark.parametrize("drive", [ref.sine(0.012, 2000.0), ref.crank(0.012, 0.05, 2000.0)],
                         ids=["sine", "crank"])
def test_damped_three_link_chart_edges_against_solve_ivp(drive):
    # The rows between computed rows aim their confirmation by the dampers' shift of the
    # neighbours' edges, follow the exact neighbours where the modes are not borne out, and
    # the column traces aim by the last shift in their row gap: every placed edge must still
    # be exact. Reference: scipy.integrate.solve_ivp monodromy of the whole chain (DOP853,
    # rtol 1e-11) and numpy.linalg.eigvals: the verdict 1e-4 relative (the chart's target)
    # either side of up to 12 row edges and 6 column edges, each side the one the edge says.
    data = _three(damping=3e-4, drive=drive)
    rig = ss.rig_from_dict(data)
    c = chart(rig, rows=24)
    rng = random.Random(5)
    picked = []
    for eq in ("inverted", "hanging"):
        rows = [(row, e) for row in c.rows for e in row.edges[eq]
                if all(f is e or abs(f.x - e.x) > 1e-3 * e.x for f in row.edges[eq])]
        picked += [(eq, row.y, e.x, e.gained, "speed")
                   for row, e in rng.sample(rows, min(6, len(rows)))]
    assert len(picked) >= 8
    cols = [(eq, e) for eq in ("inverted", "hanging") for e in c.columns.get(eq, ())]
    assert len(cols) >= 6
    picked += [(eq, e.y, e.speed_rpm, e.gained, "stroke") for eq, e in rng.sample(cols, 6)]
    for eq, y, x, gained, along in picked:
        sides = []
        for f in (1 - 1e-4, 1 + 1e-4):
            speed, stroke = (x * f, y) if along == "speed" else (x, y * f)
            sides.append(_ref_max_multiplier(data, eq, speed, stroke) < 1)
        assert sides == [not gained, gained], (eq, along, x, y)


def test_an_island_the_modes_show_and_the_dampers_shrink_or_close():
    # Three links on a crank (rod 80 mm) whose joint dampers couple the sway modes. Near
    # 350 rpm at strokes of 14.5-15.7 mm the modes, each alone, hold the hanging chain in a
    # narrow island: one-link pendulums of length 1 / lambda_i and damping (X^T D X)_ii
    # (scipy.linalg.eigh(K, M), X^T M X = I; each by solve_ivp), stable at once. The whole
    # chain's monodromy (solve_ivp, DOP853 rtol 1e-11, numpy eigvals) says otherwise: the
    # dampers close the island. The chart aims its confirmations past such an island where
    # its neighbour rows lack it and checks it by one exact verdict; its verdicts must be the
    # chain's at every point here, stable and unstable alike.
    links = [ref.link(0.15, 0.03, damping=2e-4),
             ref.link(0.12, 0.02, [(0.01, 0.12)], damping=1e-4),
             ref.link(0.08, 0.01, [(0.006, 0.08)], damping=1e-4)]
    data = ref.rig(links, ref.crank(0.016, 0.08, 2700.0),
                   limits={"speed_rpm": [120.0, 3600.0], "stroke_m": [0.0, 0.036]})
    c = chart(ss.rig_from_dict(data))  # the default 120 rows: fine rows with two neighbours
    mass, damp, stiff = (np.array(m) for m in ref.chain_matrices(data, "hanging"))
    lam, x = scipy.linalg.eigh(stiff, mass)
    modal_damping = np.diag(x.T @ damp @ x)

    def modes_hold(speed, stroke):
        for lam_i, c_i in zip(lam, modal_damping):
            length = 1.0 / lam_i  # a point mass of 1 kg: its damper c_i L^2 (N m s)
            one = ref.rig([ref.link(length, 0.0, [(1.0, length)], damping=c_i * length ** 2)],
                          ref.crank(stroke, 0.08, speed))
            if _ref_max_multiplier(one, "hanging", speed, stroke) >= 1:
                return False
        return True

    island, checked = 0, 0
    for target in (0.0145, 0.0151, 0.0157):
        row = min(c.rows, key=lambda r: abs(r.y - target))
        stable = row.stable_intervals("hanging")
        for speed in (345.0, 352.0, 358.0):
            said = any(a <= speed <= b for a, b in stable)
            assert said == (_ref_max_multiplier(data, "hanging", speed, row.y) < 1), \
                (row.y, speed)
            island += modes_hold(speed, row.y) and not said
            checked += 1
    assert checked == 9 and island >= 3  # the modes alone would have drawn the island
    # Where the dampers only shrink it (strokes 12.4-13.4 mm; the rows next to its closing
    # lack it, so their aim leaves it out and the one exact verdict in its middle finds it):
    # both its edges are the chain's, the solve_ivp verdict 1e-4 either side as each says.
    rows = [r for r in c.rows if 0.0124 <= r.y <= 0.0134]
    assert len(rows) == 4
    for row in rows:
        edges = [e for e in row.edges["hanging"] if 320.0 < e.x < 380.0]
        assert [e.gained for e in edges] == [True, False], row.y
        for e in edges:
            sides = [_ref_max_multiplier(data, "hanging", e.x * f, row.y) < 1
                     for f in (1 - 1e-4, 1 + 1e-4)]
            assert sides == [not e.gained, e.gained], (row.y, e.x)


def test_the_modes_of_a_coupled_chain_predict_its_edges_with_longer_steps():
    # The sway modes of a chain whose joint dampers couple them only predict its edges (the
    # chain's exact monodromy confirms each within 5e-5 relative), so their rows take RK
    # steps twice as long (chart_rows.PREDICTOR_STEP_PHASE). Each mode of a damped three-link
    # rig on a crank drive, as the one-link rig the chart scans, has its predicted edges
    # against the zero of log max |rho| of the solve_ivp monodromy (scipy brentq),
    # within 1e-6 relative: a fiftieth of that bracket.
    from shakestill.equilibria.chart_modes import mode_models
    from shakestill.equilibria.chart_rows import scan_row

    data = _three(damping=4e-4, drive=ref.crank(0.004, 0.05, 24000.0))
    model = derive(ss.rig_from_dict(data))
    assert model.modes.coupling > 1e-3  # the dampers couple the modes: predictions only
    checked = 0
    for mode in mode_models(model, 300.0):
        mode_data = ss.rig_to_dict(mode.rig)
        for eq, stroke in itertools.product(("hanging", "inverted"), (0.02, 0.03)):
            row = scan_row(mode, "stroke", stroke, (eq,), predictor=True)
            for edge in row.edges[eq]:
                def margin(v):
                    rho = np.linalg.eigvals(ref.monodromy(mode_data, eq, v, stroke))
                    return math.log(max(abs(rho)))
                want = brentq(margin, edge.x * (1 - 1e-3), edge.x * (1 + 1e-3), xtol=1e-9,
                              rtol=1e-10)
                assert edge.x == pytest.approx(want, rel=1e-6)
                checked += 1
    assert checked >= 10  # twelve rows, most of them with edges: none may go unchecked


def test_a_tongue_tip_the_dampers_move_is_charted_where_the_chain_has_it():
    # Three links with joint dampers (modal coupling 0.56): the second mode's principal
    # hanging tongue (2 f_2 = 283 rpm) opens at a smaller stroke in the chain than in the
    # mode (whose own damping closes it a row later), so a row between the two tips has
    # the tongue exactly but not in its prediction. At its centre, 286 rpm, each row's
    # verdict against the solve_ivp monodromy (DOP853, rtol 1e-11): the tip's row
    # (0.00605 m) was charted stable at |rho| = 1.0042 before the neighbours' exact
    # islands were checked there.
    data = ss.demo_rig_dict()
    data["drive"].update(waveform="sine", stroke_m=0.016)
    link = {"length_m": 0.12, "rod_mass_kg": 0.02,
            "point_masses": [{"mass_kg": 0.01, "at_m": 0.12}], "joint_damping_N_m_s": 1e-4}
    data["links"] = [{"length_m": 0.15, "rod_mass_kg": 0.03, "joint_damping_N_m_s": 2e-4},
                     link,
                     {"length_m": 0.08, "rod_mass_kg": 0.01,
                      "point_masses": [{"mass_kg": 0.006, "at_m": 0.08}],
                      "joint_damping_N_m_s": 1e-4}]
    rig = ss.rig_from_dict(data)
    assert derive(rig).modes.coupling == pytest.approx(0.56, abs=0.01)
    c = chart(rig, equilibria=("hanging",))
    checked = 0
    for row in c.rows:
        if 0.0045 <= row.y <= 0.0075:
            held = any(a <= 286.0 <= b for a, b in row.stable_intervals("hanging"))
            rho = _ref_max_multiplier(data, "hanging", 286.0, row.y)
            assert abs(rho - 1) > 1e-3  # no point this close to an edge
            assert held == (rho < 1), (row.y, rho)
            checked += 1
    assert checked >= 9


def test_dampers_that_mix_the_modes_strongly_chart_the_chain_exactly():
    # A heavy damper on a short last link (1.5e-3 N m s) mixes the second and third sway
    # modes: their cross damping (X^T D X)_23 against the gap of their hanging rates
    # sqrt(g / L) is 2.5 (scipy.linalg.eigh(K, M) below), and the chain's principal hanging
    # tongue near 400 rpm is one the undamped modes do not have. The chart walks the chain's
    # exact monodromy instead: verdicts across each row against solve_ivp (DOP853, rtol
    # 1e-11), and the busiest row's edges by scipy brentq on it, to 1e-6 relative.
    from shakestill.model.modes import STRONG_MIXING, damper_mixing

    links = [ref.link(0.12, 0.034, [(0.019, 0.12)]),
             ref.link(0.11, 0.026, [(0.026, 0.11)], damping=1.7e-4),
             ref.link(0.055, 0.027, [(0.023, 0.055)], damping=1.5e-3)]
    data = ref.rig(links, ref.crank(0.01, 0.165, 2000.0),
                   limits={"speed_rpm": [300.0, 1200.0], "stroke_m": [0.0, 0.007]})
    mass, damp, stiff = ref.chain_matrices(data, "hanging")
    lam, x = scipy.linalg.eigh(np.abs(stiff), mass)
    cross, rates = x.T @ damp @ x, np.sqrt(G * lam)
    want = max(abs(cross[i, j]) / abs(rates[i] - rates[j])
               for i in range(3) for j in range(3) if i != j)
    rig = ss.rig_from_dict(data)
    assert damper_mixing(derive(rig).modes, rig.g_m_s2) == pytest.approx(want, rel=1e-9)
    assert want > STRONG_MIXING
    checked = ss.check(rig)  # the check's JSON and words carry it
    assert checked["modes"]["damper_mixing"] == pytest.approx(want, rel=1e-9)
    assert checked["modes"]["strong_mixing"] == STRONG_MIXING
    assert (f"the joint dampers mix the sway modes strongly, by {want:.2g}"
            in report_text(checked))
    c = chart(rig, rows=8, equilibria=("hanging",))
    assert any("every row is walked by the chain's exact monodromy" in n for n in c.notes)
    for row in c.rows:
        for speed in (330.0, 380.0, 420.0, 470.0, 600.0):
            held = any(a <= speed <= b for a, b in row.stable_intervals("hanging"))
            rho = _ref_max_multiplier(data, "hanging", speed, row.y)
            if abs(rho - 1) > 1e-6:
                assert held == (rho < 1), (row.y, speed, rho)
    # its tongue is labelled where the damped chain swings: 2 f / n with f the free
    # oscillation frequencies of M q'' + D q' + g K q = 0 (numpy eigvals of the first-order
    # companion in q, q'), here 3.31 Hz where the undamped modes have 2.93 and 4.35 Hz
    a = np.block([[np.zeros((3, 3)), np.eye(3)],
                  [-np.linalg.solve(mass, G * np.abs(stiff)), -np.linalg.solve(mass, damp)]])
    swings = sorted(z.imag / (2 * math.pi) for z in np.linalg.eigvals(a) if z.imag > 0)
    assert [(t["order"], t["mode"]) for t in c.tongues] == [(1, 1)]
    assert c.tongues[0]["speed_rpm"] == pytest.approx(120 * swings[1], rel=1e-9)
    assert c.tongues[0]["label"] == "n=1 (mode 2)"
    row = c.rows[-1]
    assert len(row.edges["hanging"]) == 2  # the tongue's two sides (verdicts above)
    assert row.edges["hanging"][0].x < c.tongues[0]["speed_rpm"] < row.edges["hanging"][1].x
    for e in row.edges["hanging"]:
        edge = brentq(lambda v: _ref_max_multiplier(data, "hanging", v, row.y) - 1,
                      e.x * (1 - 1e-3), e.x * (1 + 1e-3), xtol=1e-10 * e.x)
        assert e.x == pytest.approx(edge, rel=1e-6)


def test_damper_mixing_of_modes_closer_than_one_rad_s():
    # Two 15 m links (a slow chain: its hanging sway modes' rates sqrt(g / L) are 1.49 and
    # 0.62 rad/s, 0.87 apart) with a damper on the second joint: the mixing is the cross
    # damping (X^T D X)_12 over that gap, finite however close the rates (scipy.linalg.eigh
    # (K, M), as in the test above, 1e-9 relative); a mix under STRONG_MIXING predicts by
    # the modes, hand.
    from shakestill.equilibria.chart_modes import modes_predict
    from shakestill.model.modes import STRONG_MIXING, damper_mixing
    links = [ref.link(15.0, 0.0, [(1.0, 15.0)]), ref.link(15.0, 0.0, [(1.0, 15.0)], damping=0.05)]
    data = ref.rig(links, ref.sine(0.01, 10.0),
                   limits={"speed_rpm": [1.0, 100.0], "stroke_m": [0.0, 0.05]})
    mass, damp, stiff = ref.chain_matrices(data, "hanging")
    lam, x = scipy.linalg.eigh(np.abs(stiff), mass)
    cross, rates = x.T @ damp @ x, np.sqrt(G * lam)
    assert 0.0 < abs(rates[0] - rates[1]) < 1.0
    want = abs(cross[0, 1]) / abs(rates[0] - rates[1])
    model = derive(ss.rig_from_dict(data))
    assert damper_mixing(model.modes, model.rig.g_m_s2) == pytest.approx(want, rel=1e-9)
    assert want < STRONG_MIXING and modes_predict(model)
