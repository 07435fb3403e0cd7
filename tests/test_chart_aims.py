"""How the chart of several links aims and assembles its rows (module chart_modes), against its
documented rules worked by hand: the exact-to-modal shift of an edge in the neighbour rows,
interpolated in y; the islands the neighbours' exact rows lack; which modes a row asks for; a
chain row as the intersection of its modes' rows; a damped row refused part-way or aimed past a
false island (its edge by solve_ivp, the points asked by the rule); a chain's column edges found
on the modes, then aimed by the dampers' shift and by the line through the edges before
(chart_columns._trace: which method is asked how often, each edge by solve_ivp); the notes'
words on how several links were charted (the coupling by scipy eigh). These parts change what
the chart costs, and the stable intervals and notes a user reads; the rules are in each
function's docstring, and the expected values are worked by hand from them (common practice, no
source) unless a reference is named. Everything is built in each test's body, small (synthetic
rows where no stability is needed), so mutation runs map the tests to the chart modules and
judge a mutant in about a second."""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.linalg

import refsolvers as ref
import shakestill as ss
from shakestill.equilibria import chart_modes, lines
from shakestill.equilibria.chart import chart
from shakestill.equilibria.chart_modes import _aimed, _nearest, modal_row_steps
from shakestill.equilibria.chart_columns import _probe, _trace
from shakestill.equilibria.chart_rows import CHART_RTOL, Row, scan_row
from shakestill.equilibria.floquet import MODAL_METHOD
from shakestill.equilibria.lines import Edge, edge_between
from shakestill.model.derived import derive

LO, HI = 300.0, 3000.0


def _row(y, **eqs):
    """A row from LO to HI: eq=(stable at LO, (x, gained), ...) for each equilibrium given."""
    return Row(y, LO, HI, {eq: tuple(Edge(x, g) for x, g in spec[1:]) for eq, spec in eqs.items()},
               {eq: spec[0] for eq, spec in eqs.items()}, 0)


def test_modal_edges_aimed_by_the_neighbours_shift_and_islands_left_out():
    # chart_modes._aimed / _shift / _ratio / _absent (their docstrings): each modal edge of
    # the row is moved by the exact / modal ratio of the same edge (the neighbour's modal edge
    # of its kind nearest to it within 10%, and that one's exact partner within 2%) in the
    # neighbour rows, interpolated linearly in y (one neighbour: its ratio; none: 1); two
    # successive modal edges that every neighbour showing them lacks exactly are an island,
    # left out of the aim and returned as (its two modal ends) to be checked.
    predicted = _row(0.015, inverted=(False, (1000.0, True), (1500.0, False), (2000.0, True),
                                     (2100.0, False), (3000.0, True)))
    below_modal = _row(0.01, inverted=(False, (1000.0, True), (1500.0, False), (2000.0, True),
                                       (2100.0, False), (3000.0, True)))
    below_exact = _row(0.01, inverted=(False, (1005.0, True), (1515.0, False), (2970.0, True)))
    above_modal = _row(0.03, inverted=(False, (990.0, True), (1500.0, False), (2010.0, True),
                                       (2090.0, False)))
    above_exact = _row(0.03, inverted=(False, (1004.85, True)))
    near = ((below_exact, below_modal), (above_exact, above_modal))
    aimed, checks = _aimed(predicted, near, "inverted")
    # 1000: ratios 1005/1000 = 1.005 at y = 0.01 and 1004.85/990 = 1.015 at y = 0.03, so
    #       1.005 + (0.015 - 0.01) / 0.02 x 0.01 = 1.0075 at y = 0.015: aimed at 1007.5.
    # 1500: 1515/1500 = 1.01 below; above, its modal edge has no exact partner within 2%
    #       (that neighbour lacks it): the one ratio, 1.01 -> 1515.
    # 2000 and 2100: both neighbours show them in their modes and lack both exactly: an
    #       island, checked between its modal ends (2000, 2100), not aimed.
    # 3000: 2970/3000 = 0.99 below; above, no modal edge of its kind within 10%: 2970.
    assert [e.gained for e in aimed] == [True, False, True]
    assert [e.x for e in aimed] == pytest.approx([1007.5, 1515.0, 2970.0], rel=1e-12)
    assert checks == [(2000.0, 2100.0)]
    # A neighbour of another first speed (an accel row starting elsewhere) is not used: with
    # none left, every ratio is 1 and nothing is known to be absent.
    elsewhere = tuple((Row(exact.y, LO + 1.0, HI, exact.edges, exact.stable_at_min, 0), modal)
                      for exact, modal in near)
    aimed, checks = _aimed(predicted, elsewhere, "inverted")
    assert [e.x for e in aimed] == [e.x for e in predicted.edges["inverted"]] and checks == []


def test_nearest_edge_of_its_kind_within_the_reach():
    # chart_modes._nearest (its docstring): the edge of e's kind nearest to e, if within the
    # reach (relative); an edge of the other kind is never taken, however near.
    edges = (Edge(1005.0, True), Edge(1030.0, False), Edge(1090.0, False), Edge(950.0, False))
    assert _nearest(edges, Edge(1000.0, False), 0.1) == Edge(1030.0, False)  # 3% off
    assert _nearest(edges, Edge(1000.0, True), 0.1) == Edge(1005.0, True)
    assert _nearest(edges, Edge(1000.0, False), 0.02) is None  # 950 and 1030: 5% and 3%
    assert _nearest(edges, Edge(1080.0, False), 0.02) == Edge(1090.0, False)  # 0.93% off
    assert _nearest((), Edge(1000.0, True), 0.1) is None
    # the reach's end is within it: 1152 / 1024 - 1 = 0.125 exactly (binary fractions)
    assert _nearest((Edge(1152.0, True),), Edge(1024.0, True), 0.125) == Edge(1152.0, True)


def _links(damping):
    return [ref.link(0.2, 0.04, damping=damping), ref.link(0.12, 0.02, [(0.01, 0.12)])]


@pytest.mark.parametrize("damping", [0.0, 3e-4], ids=["modes decouple", "dampers couple"])
def test_modal_rows_ask_only_for_what_the_modes_before_leave_and_intersect(monkeypatch, damping):
    # chart_modes.modal_row_steps (its docstring): the modes' walkers run in step, mode 0
    # first; mode i is told to leave out an equilibrium of row j where the rows j of the modes
    # before it hold it stable nowhere (mode 0 is never told to); a row that one mode could
    # not make is None for the chain, and the rows after it still come; each chain row is
    # made (chain_row) with the nearest computed rows below and above it, confirmed exactly
    # iff the dampers couple the modes (a joint damper on the first link only couples them:
    # floquet.modes_decouple). chart_modes.chain_row: the chain holds where every mode holds
    # (Acheson 1993), so uncoupled its row's edges are the ends of the intersection of the
    # modes' stable stretches inside the row, stable at its start where all are.
    model = derive(ss.rig_from_dict(ref.rig(_links(damping), ref.sine(0.01, 1500.0))))
    order = [0, 4, 2, 1, 3]
    asked = []  # (mode, row, equilibrium, needed?)
    mode0 = {0: _row(0.0, inverted=(False,), hanging=(True, (1000.0, False), (1200.0, True))),
             4: _row(0.04, inverted=(False, (2000.0, True)), hanging=(True, (1000.0, False))),
             2: None,
             1: _row(0.01, inverted=(True, (600.0, False)), hanging=(True,)),
             3: _row(0.03, inverted=(False,), hanging=(False, (800.0, True)))}
    mode1 = {0: {"inverted": (False, (400.0, True)),
                 "hanging": (True, (500.0, False), (600.0, True))},
             4: {"inverted": (False, (2500.0, True)), "hanging": (True, (900.0, False))},
             2: {"inverted": (False,), "hanging": (True,)},
             1: {"inverted": (True, (700.0, False)), "hanging": (False, (350.0, True))},
             3: {"inverted": (True,), "hanging": (True, (1000.0, False))}}

    def row_steps(mode, needed):
        i = len(walked)
        walked.append(mode)
        for j in order:
            wanted = [eq for eq in ("inverted", "hanging") if needed(j, eq)]
            asked.extend((i, j, eq, eq in wanted) for eq in ("inverted", "hanging"))
            if i == 0:
                yield j, mode0[j]
            else:
                yield j, _row(j / 100, **{eq: mode1[j][eq] for eq in wanted})

    walked = []
    made = []
    real = chart_modes.chain_row

    def spy(model_, rows, y_axis, equilibria, coupled, near=()):
        made.append((rows[0].y, coupled, tuple(pair[0].y for pair in near)))
        if coupled:  # the exact confirmation is another test's: the modes' rows suffice here
            return real(model_, rows, y_axis, equilibria, False, near)
        return real(model_, rows, y_axis, equilibria, coupled, near)

    monkeypatch.setattr(chart_modes, "chain_row", spy)
    got = list(modal_row_steps(model, LO, "stroke", ("inverted", "hanging"), row_steps))
    assert [len(w.rig.links) for w in walked] == [1, 1]  # one walker per sway mode
    # mode 0 always asked for both; mode 1 only where mode 0's row holds the equilibrium
    # stable somewhere: row 0 inverted nowhere (unstable at LO, no edge), row 3 likewise,
    # row 2 not made at all
    want_asked = [(0, j, eq, True) for j in order for eq in ("inverted", "hanging")]
    want_asked += [(1, 0, "inverted", False), (1, 0, "hanging", True),
                   (1, 4, "inverted", True), (1, 4, "hanging", True),
                   (1, 2, "inverted", False), (1, 2, "hanging", False),
                   (1, 1, "inverted", True), (1, 1, "hanging", True),
                   (1, 3, "inverted", False), (1, 3, "hanging", True)]
    assert sorted(asked) == sorted(want_asked)
    assert [j for j, _ in got] == order and got[2][1] is None
    coupled = damping > 0
    # the neighbours by y: row 4 has row 0 below; row 1 rows 0 and 4 (row 2 was not made);
    # row 3 rows 1 and 4
    assert made == [(0.0, coupled, ()), (0.04, coupled, (0.0,)), (0.01, coupled, (0.0, 0.04)),
                    (0.03, coupled, (0.01, 0.04))]
    assert all(type(c) is bool for _, c, _ in made)
    rows = {j: row for j, row in got if row is not None}
    # intersections by hand: row 0 hanging [300, 500] + [600, 1000] + [1200, 3000] (mode 0
    # [300, 1000] + [1200, 3000], mode 1 [300, 500] + [600, 3000]); inverted left out of
    # mode 1: held nowhere.
    want = {0: {"inverted": (False,), "hanging": (True, (500.0, False), (600.0, True),
                                                  (1000.0, False), (1200.0, True))},
            4: {"inverted": (False, (2500.0, True)), "hanging": (True, (900.0, False))},
            1: {"inverted": (True, (600.0, False)), "hanging": (False, (350.0, True))},
            3: {"inverted": (False,), "hanging": (False, (800.0, True), (1000.0, False))}}
    for j, eqs in want.items():
        row = rows[j]
        assert (row.y, row.speed_min, row.speed_max) == (j / 100, LO, HI)
        for eq, (at_lo, *edges) in eqs.items():
            assert row.stable_at_min[eq] is at_lo, (j, eq)
            assert [(e.x, e.gained) for e in row.edges[eq]] == list(edges), (j, eq)
            assert all(type(e.gained) is bool for e in row.edges[eq])


class _Recorder(chart_modes.Probe):
    """The chart's exact probe, remembering every point it is asked about."""

    points: list = []

    def __call__(self, x):
        _Recorder.points.append(x)
        return super().__call__(x)


@pytest.mark.parametrize("neighbour", [False, True], ids=["refused part-way", "island aimed past"])
def test_a_damped_chain_row_refused_or_aimed_past_a_false_island(monkeypatch, neighbour):
    # Two links, joint dampers (coupled modes: every edge confirmed by the exact monodromy).
    # Mode 0's row is given a false island (unstable 1500-1600 rpm) the chain does not have.
    # chart_modes.chain_row (its docstring and confirm's): with no neighbours the prediction
    # is confirmed edge by edge; refused at the false island, the edges confirmed before it
    # are kept and the row is walked exactly only from just past the last of them. With a
    # neighbour row whose modes show the island and whose exact row lacks it, the island is
    # left out of the aim and checked by one exact verdict at its middle sqrt(1500 x 1600)
    # (chart_modes._island). Either way no point below the first edge's widest confirmation
    # bracket (2% relative, confirm.CONFIRM_HALF_WIDTHS) is asked: the stretch before a
    # confirmed edge is never walked. The chain's row: its one edge, the hanging chain
    # gaining stability at ~578 rpm, by the solve_ivp monodromy (DOP853, rtol 1e-11,
    # tests/refsolvers.py) 1e-4 either side, and stable inside the false island.
    links = [ref.link(0.2, 0.04, damping=3e-4),
             ref.link(0.12, 0.02, [(0.01, 0.12)], damping=1e-4)]
    data = ref.rig(links, ref.sine(0.02, 1500.0),
                   limits={"speed_rpm": [LO, HI], "stroke_m": [0.0, 0.04]})
    model = derive(ss.rig_from_dict(data))
    modes = chart_modes.mode_models(model, LO)
    rows = [scan_row(m, "stroke", 0.02, ("hanging",)) for m in modes]
    first = rows[1].edges["hanging"][0]  # the short mode's principal tongue ends here
    assert rows[0].edges["hanging"] == () and rows[0].stable_at_min["hanging"]
    assert [e.gained for e in rows[1].edges["hanging"]] == [True]
    rows[0] = Row(0.02, LO, HI, {"hanging": (Edge(1500.0, False), Edge(1600.0, True))},
                  {"hanging": True}, rows[0].evaluations)
    near = ()
    if neighbour:
        near = ((_row(0.021, hanging=(False, (first.x, True))),
                 _row(0.021, hanging=(False, (first.x, True), (1500.0, False), (1600.0, True)))),)
    _Recorder.points = []
    monkeypatch.setattr(chart_modes, "Probe", _Recorder)
    row, predicted = chart_modes.chain_row(model, rows, "stroke", ("hanging",), True, near)
    # the modes' prediction: the intersection, worked by hand
    assert [(e.x, e.gained) for e in predicted.edges["hanging"]] == \
        [(first.x, True), (1500.0, False), (1600.0, True)]
    assert row.stable_at_min["hanging"] is False
    (edge,) = row.edges["hanging"]
    assert edge.gained is True and abs(edge.x / first.x - 1) < 1e-3
    for f, stable in ((1 - 1e-4, False), (1 + 1e-4, True)):
        rho = ref.multipliers(ref.monodromy(data, "hanging", speed_rpm=edge.x * f,
                                            stroke_m=0.02, rtol=1e-11, atol=1e-12))
        assert bool(max(abs(rho)) < 1) == stable
    rho = ref.multipliers(ref.monodromy(data, "hanging", speed_rpm=1550.0, stroke_m=0.02,
                                        rtol=1e-11, atol=1e-12))
    assert max(abs(rho)) < 1
    assert min(_Recorder.points) >= first.x * (1 - 0.02)
    assert row.evaluations == sum(r.evaluations for r in rows) + len(_Recorder.points)
    if neighbour:
        assert _Recorder.points.count(math.sqrt(1500.0 * 1600.0)) == 1
        assert [x for x in _Recorder.points if x > first.x * 1.02] == \
            [math.sqrt(1500.0 * 1600.0)]


@pytest.mark.parametrize("damping", [0.0, 3e-4], ids=["modes decouple", "dampers couple"])
def test_the_notes_say_how_several_links_were_charted(damping):
    # The chart's note for several links (chart._modes_words): charted by sway modes (Acheson
    # 1993); exact when no damping couples the modes, else the coupling, the largest
    # |(X^T D X)_ij| / sqrt((X^T D X)_ii (X^T D X)_jj), i != j, with X from
    # scipy.linalg.eigh(K, M) of the reference chain (tests/refsolvers.py), printed to two
    # figures, and the confirmation bracket CONFIRM_HALF_WIDTHS[0] = 5e-5 (its documented
    # value, chart_rows/confirm). One link has no such note.
    data = ref.rig(_links(damping), ref.sine(0.02, 1500.0),
                   limits={"speed_rpm": [LO, HI], "stroke_m": [0.0, 0.04]})
    notes = chart(ss.rig_from_dict(data), rows=2, columns=False).notes
    mass, damp, stiff = (np.array(m) for m in ref.chain_matrices(data, "hanging"))
    _, x = scipy.linalg.eigh(stiff, mass)
    modal = x.T @ damp @ x
    coupling = abs(modal[0, 1]) / math.sqrt(modal[0, 0] * modal[1, 1]) if damping else 0.0
    words = ("several links: each sway mode is charted as a one-link pendulum of its "
             "equivalent length and the chain holds where every mode holds (Acheson 1993)")
    if damping:
        words += (f"; the joint dampers couple the modes ({coupling:.2g}), so every edge is "
                  "confirmed by the chain's exact monodromy within 5e-05 relative and placed "
                  "there, and a row the exact method does not bear out is walked by it")
    else:
        words += "; no damping couples the modes, so this is exact"
    assert [n for n in notes if n.startswith("several links")] == [words]
    one = ref.rig(_links(damping)[:1], ref.sine(0.02, 1500.0),
                  limits={"speed_rpm": [LO, HI], "stroke_m": [0.0, 0.04]})
    assert not any("several links" in n for n in chart(ss.rig_from_dict(one), rows=2,
                                                        columns=False).notes)


@pytest.mark.parametrize("damping, y0, y1", [(1e-2, 0.032, 0.038), (0.0, 0.027, 0.033)],
                         ids=["dampers couple", "modes decouple"])
def test_column_edges_of_a_chain_found_on_the_modes_then_aimed_by_shift_and_line(
        monkeypatch, damping, y0, y1):
    # chart_columns._trace (its docstring), the upright two-link chain's upper edge in stroke
    # at successive column speeds (300-3000 rpm in 200 columns: 13.5 rpm apart). Undamped,
    # the modes are the chain (Acheson 1993): every verdict is the modes' (Hill on the sway
    # modes) and no other method is asked. With joint dampers heavy enough to move this edge
    # by ~3e-4 relative, beyond the tight bracket's 5e-5 (confirm.CONFIRM_HALF_WIDTHS): at
    # the first speed the edge is found on the modes, then confirmed and placed by the
    # chain's exact monodromy (the tight bracket about the modal edge misses: more than its
    # two verdicts); at the second, the modal edge moved by the exact / modal shift of the
    # first lands in the tight bracket: exactly two exact verdicts; from the third on, the
    # straight line through the two edges before lands it too and the modes are not asked:
    # two exact verdicts only. Every edge: the solve_ivp monodromy (DOP853, rtol 1e-11,
    # tests/refsolvers.py) stable 1e-4 below it in stroke and unstable 1e-4 above.
    links = [ref.link(0.2, 0.04, damping=damping),
             ref.link(0.12, 0.02, [(0.01, 0.12)], damping=damping / 3)]
    data = ref.rig(links, ref.sine(0.02, 1500.0),
                   limits={"speed_rpm": [LO, HI], "stroke_m": [0.0, 0.04]})
    model = derive(ss.rig_from_dict(data))
    methods = []
    real = lines.stability

    def counting(*args, **kwargs):
        s = real(*args, **kwargs)
        methods.append(s.method)
        return s

    monkeypatch.setattr(lines, "stability", counting)
    shifts, path, asked = {}, [], []
    for x in (1980.75, 1994.25, 2007.75, 2021.25):
        methods.clear()
        edge, spent = _trace(model, "stroke", "inverted", x, y0, y1, shifts, 0, False, path)
        assert spent == len(methods)
        asked.append((methods.count(MODAL_METHOD), len(methods) - methods.count(MODAL_METHOD)))
        assert (edge.speed_rpm, edge.gained) == (x, False)
        for f, stable in ((1 - 1e-4, True), (1 + 1e-4, False)):
            rho = ref.multipliers(ref.monodromy(data, "inverted", speed_rpm=x,
                                                stroke_m=edge.y * f, rtol=1e-11, atol=1e-12))
            assert bool(max(abs(rho)) < 1) == stable, (x, f)
    if damping:
        (m1, e1), (m2, e2), (m3, e3), (m4, e4) = asked
        # the modes' edge: its two ends and Brent's method to CHART_RTOL, side by side on a
        # modal probe of the same line (chart_columns._probe)
        for (m, _), x in zip(asked[:2], (1980.75, 1994.25)):
            modal = _probe(model, "inverted", lambda y, x=x: (x, y), y0, y1, modal=True)
            edge_between(modal, (y0, modal(y0)), (y1, modal(y1)), rtol=CHART_RTOL)
            assert m == modal.count
        # the first exact placing: the tight bracket and at most AIMS (2) re-aims of it
        # (confirm.place_edge), never the wider brackets or a walk
        assert 2 < e1 <= 2 + 2 * 2
        assert e2 == 2 and (m3, e3) == (m4, e4) == (0, 2)
    else:
        assert all(m > 0 and e == 0 for m, e in asked) and shifts == {} and path == []


def test_a_chain_chart_asks_no_later_mode_for_what_the_longest_holds_nowhere(monkeypatch):
    # chart_modes (module docstring): a mode is left out of a row for an equilibrium where the
    # modes before it (the longest first) leave no stable stretch. Here the upright chain is
    # held nowhere by its longest mode: Kapitza's condition (A w)^2 > 2 g L (Landau &
    # Lifshitz, Mechanics, sec. 30; Acheson 1993 for a chain's longest mode, L from scipy
    # eigh) fails everywhere on the chart, (0.005 x 104.7 rad/s)^2 = 0.27 m^2/s^2 against
    # 2 g L > 4. So the shorter mode is asked about the hanging position only, and every
    # evaluation is counted outside the chart (lines.stability wrapped) by the mode's length.
    data = ref.rig(_links(0.0), ref.sine(0.01, 600.0),
                   limits={"speed_rpm": [LO, 1000.0], "stroke_m": [0.0, 0.01]})
    mass, _, stiff = (np.array(m) for m in ref.chain_matrices(data, "hanging"))
    lengths = sorted(1.0 / scipy.linalg.eigh(stiff, mass, eigvals_only=True), reverse=True)
    w = 2 * math.pi * 1000.0 / 60
    assert (0.01 / 2 * w) ** 2 < 2 * ref.G_STANDARD * lengths[0]
    asked = {}
    real = lines.stability

    def counting(model, eq, *args, **kwargs):
        length = model.rig.links[0].length_m
        mode = min(range(2), key=lambda i: abs(lengths[i] / length - 1))
        assert abs(lengths[mode] / length - 1) < 1e-9  # a mode's one-link pendulum
        asked[mode, eq] = asked.get((mode, eq), 0) + 1
        return real(model, eq, *args, **kwargs)

    monkeypatch.setattr(lines, "stability", counting)
    c = chart(ss.rig_from_dict(data), rows=3, columns=False)
    assert all(row.stable_intervals("inverted") == [] for row in c.rows)
    assert sum(asked.values()) == c.evaluations
    assert asked.get((0, "inverted"), 0) > 0 and asked.get((0, "hanging"), 0) > 0
    assert asked.get((1, "hanging"), 0) > 0 and (1, "inverted") not in asked


def test_islands_the_prediction_lacks_and_their_merge():
    # chart_modes._unpredicted (its docstring): each island of a neighbour's exact row (of
    # the same first speed: a neighbour starting elsewhere is skipped, not the end of the
    # search) that the row's modes do not show, where no modal edge lies within MATCH of
    # it, widened by MATCH and clipped to the row; worked by hand. MATCH = 2%.
    m = chart_modes.MATCH
    predicted = _row(0.015, hanging=(True, (2000.0, False), (2100.0, True),
                                     (2400.0, False), (2500.0 * (1 - m), True)))
    modal = _row(0.01, hanging=(True,))
    elsewhere = Row(0.01, LO + 1.0, HI, {"hanging": (Edge(1500.0, False), Edge(1600.0, True))},
                    {"hanging": True}, 0)
    exact = _row(0.01, hanging=(True, (301.0, False), (320.0, True), (1000.0, False),
                                (1050.0, True), (2010.0, False), (2090.0, True),
                                (2500.0, False), (2600.0, True)))
    got = chart_modes._unpredicted(predicted, ((elsewhere, modal), (exact, modal)), "hanging")
    # 301-320: lacking, widened to 294.98-326.4 and clipped at the row's first speed 300;
    # 1000-1050: lacking, 980-1071; 2010-2090: the modes show it (unstable 2000-2100);
    # 2500-2600: lacking, but the modal edge at 2500 (1 - MATCH) lies within MATCH (the
    # reach is inclusive); the stable stretches between islands: shown. 1500-1600 of the
    # neighbour with another first speed: not used.
    assert got == [(300.0, 320.0 * (1 + m)), (1000.0 * (1 - m), 1050.0 * (1 + m))]
    # _merged (its docstring): overlapping spans joined, in order of speed; spans that
    # touch are joined, one inside another keeps the outer end (hand).
    spans = [(3.0, 4.0), (1.0, 2.0), (1.5, 2.5), (4.0, 5.0), (2.5, 2.6), (1.2, 1.3), (6.0, 7.0)]
    assert chart_modes._merged(spans) == [(1.0, 2.6), (3.0, 5.0), (6.0, 7.0)]
    assert chart_modes._merged([]) == []
