"""What a chart says about itself (its progress, its count of evaluations, its notes and its
tongue labels), each against a count or a hand computation made outside the chart's code.

Small charts built in each test's body, so mutation runs judge the chart modules on them
in seconds (mutmut maps a test to the functions its body calls, not a fixture's).
"""

import math
import re

import numpy as np
import refsolvers as ref
import scipy.linalg
import shakestill as ss
from shakestill.equilibria import lines
from shakestill.equilibria.chart import chart, chart_dict, chart_steps
from test_stability_chart import TWO_LINKS, rod_rig


def test_progress_is_one_step_a_row_then_the_columns():
    # chart_steps yields after every row and once more after the column traces: the
    # fractions done are k / (rows + 1) for k = 1..rows, then 1 (hand); only the last chart
    # is complete.
    rows = 6
    steps = list(chart_steps(rod_rig(), rows=rows))
    assert [f for f, _ in steps] == [k / (rows + 1) for k in range(1, rows + 1)] + [1.0]
    assert [c.complete for _, c in steps] == [False] * rows + [True]
    assert [len(c.rows) for _, c in steps[:rows]] == list(range(1, rows + 1))


def test_evaluations_are_the_floquet_evaluations_made(monkeypatch):
    # The chart's `evaluations` (in the JSON) must be the number of stability evaluations it
    # made: counted here by a wrapper around the one function every probe calls, for one
    # link and for a damped two-link rig (modes, exact confirmations, column traces).
    made = []
    real = lines.stability

    def counted(*args, **kwargs):
        made.append(1)
        return real(*args, **kwargs)

    monkeypatch.setattr(lines, "stability", counted)
    for rig in (rod_rig(), rod_rig(links=TWO_LINKS)):
        made.clear()
        c = chart(rig, rows=5)
        assert c.evaluations == len(made) > 0
        assert chart_dict(c)["evaluations"] == len(made)


def test_notes_say_how_coarse_the_first_pass_is_and_how_many_columns():
    # Every 8th row is walked whole (the documented first pass), so a feature narrower than
    # 8 / (rows - 1) of the y range can hide between two of them: 8/8 = 1 for 9 rows,
    # 8/16 = 0.5 for 17 (hand); the column traces run at 200 speeds, evenly spaced from
    # lo + (hi - lo) / 400 (hand: the middles of 200 equal parts), and every column edge sits
    # at one of them.
    for rows, fraction in ((9, "1"), (17, "0.5")):
        c = chart(rod_rig(), rows=rows)
        first = c.notes[0]
        assert f"({fraction} of the y range)" in first, first
        assert "a scan every 10% of speed" in first and "refined to 1e-08 relative" in first
        assert first.endswith("is not seen")
        assert "at 200 evenly spaced speeds" in c.notes[-1]
        lo, hi = c.speed_range
        grid = [lo + (hi - lo) * (k + 0.5) / 200 for k in range(200)]
        for e in c.columns.get("inverted", ()) + c.columns.get("hanging", ()):
            assert min(abs(e.speed_rpm - g) for g in grid) <= 1e-9 * hi
    assert not any("several links" in n for n in chart(rod_rig(), rows=3).notes)
    assert chart(rod_rig(), rows=3, columns=False).notes[-1].startswith("coarse rows")


def test_notes_say_whether_the_modes_are_exact():
    # Several links: the note names the sway-mode method (Acheson 1993); with no damping it
    # says the modes are exact, with joint dampers it gives their coupling, the largest
    # |(X^T D X)_ij| / sqrt(D_ii D_jj) off the diagonal (scipy.linalg.eigh(K, M) modes,
    # X^T M X = I) to two figures, and says every edge is confirmed exactly.
    undamped = [dict(link, joint_damping_N_m_s=0.0) for link in TWO_LINKS]
    words = [n for n in chart(rod_rig(links=undamped), rows=3).notes if "several links" in n]
    assert len(words) == 1
    assert words[0].startswith("several links: each sway mode is charted as a one-link "
                               "pendulum of its equivalent length and the chain holds where "
                               "every mode holds (Acheson 1993); ")
    assert words[0].endswith("so this is exact")
    data = {"format": "shakestill-rig", "version": 1, "links": TWO_LINKS,
            "drive": {"waveform": "sine", "stroke_m": 0.02, "speed_rpm": 1500},
            "limits": {"speed_rpm": [60, 3000], "stroke_m": [0.0, 0.05]}}
    words = [n for n in chart(ss.rig_from_dict(data), rows=3).notes if "several links" in n]
    (said,) = re.findall(r"couple the modes \(([^)]*)\)", words[0])
    mass, damp, stiff = (np.array(m) for m in ref.chain_matrices(data, "hanging"))
    _, x = scipy.linalg.eigh(stiff, mass)
    d = x.T @ damp @ x
    coupling = max(abs(d[i, j]) / math.sqrt(d[i, i] * d[j, j])
                   for i in range(2) for j in range(2) if i != j)
    assert float(said) == float(f"{coupling:.2g}")
    assert "every edge is confirmed by the chain's exact monodromy" in words[0]


def test_tongue_labels_name_the_mode_only_for_several_links():
    # The hanging tongues sit at 2 f_i / n (f_i the hanging sway frequencies): one link,
    # f = sqrt(m g d / I) / (2 pi) for a uniform rod (d = L/2, I = m L^2 / 3; Landau &
    # Lifshitz sec. 21 compound pendulum), labelled "n=1", "n=2", ...; several links add
    # "(mode i)" after each (hand).
    c = chart(rod_rig(), rows=3)
    f = math.sqrt(9.80665 * 0.15 / (0.3 ** 2 / 3)) / (2 * math.pi)
    assert [t["label"] for t in c.tongues] == [f"n={t['order']}" for t in c.tongues]
    for t in c.tongues:
        assert math.isclose(t["speed_rpm"], 2 * f / t["order"] * 60, rel_tol=1e-9)
    assert [t["order"] for t in c.tongues][:2] == [1, 2]
    two = chart(rod_rig(links=TWO_LINKS), rows=3)
    assert {t["mode"] for t in two.tongues} == {0, 1}
    for t in two.tongues:
        assert t["label"] == f"n={t['order']} (mode {t['mode'] + 1})"
