"""Command-line paths no other test walks: `chart` from the CLI, `demo -o`, `link`, RIG given as
`-` and as a share link, and `simulate --set`; each checked against an independent value.

The rig is an undamped point mass on a massless 0.2 m link on a 20 mm sine stroke at
2400 rpm, so windows and chart edges have the Mathieu chart as reference
(scipy.special.mathieu_a / mathieu_b via tests/refsolvers.py) and its motion has
scipy.integrate.solve_ivp of the exact pendulum equation.
"""

from __future__ import annotations

import json
import math
import subprocess
import sys

import numpy as np
import pytest
from scipy.integrate import solve_ivp

import refsolvers as R

G = R.G_STANDARD
LENGTH, STROKE, SPEED = 0.2, 0.02, 2400.0
LIMITS = {"speed_rpm": [300.0, 3600.0], "stroke_m": [0.0, 0.04]}


def run_cli(*args, stdin=None):
    out = subprocess.run([sys.executable, "-m", "shakestill", *args], capture_output=True,
                         text=True, input=stdin, timeout=300)
    assert out.returncode == 0, out.stderr
    return out.stdout


@pytest.fixture(scope="module")
def rig_file(tmp_path_factory):
    path = tmp_path_factory.mktemp("cli") / "rig.json"
    data = R.rig([R.link(LENGTH, 0.0, [(0.1, LENGTH)])], R.sine(STROKE, SPEED), limits=LIMITS)
    path.write_text(json.dumps(data))
    return path


def mathieu_speed_window():
    return R.speed_window(LENGTH, G, STROKE, SPEED, "inverted", LIMITS["speed_rpm"])


@pytest.mark.parametrize("how", ["path", "stdin", "link", "link-url"])
def test_every_way_of_giving_the_rig_reads_the_same_rig(rig_file, how):
    # The inverted window must be the Mathieu chart's whichever way the rig arrives
    # (1e-7 relative: the check's edges, measured ~1e-11 from scipy's).
    fragment = run_cli("link", str(rig_file)).strip()
    assert fragment.startswith("#")
    source, stdin = {"path": (str(rig_file), None), "stdin": ("-", rig_file.read_text()),
                     "link": (fragment[1:], None),
                     "link-url": ("https://example.invalid/shakestill/" + fragment, None)}[how]
    result = json.loads(run_cli("check", source, "--json", stdin=stdin))
    assert result["inverted"]["speed_window_rpm"] == pytest.approx(mathieu_speed_window(),
                                                                   rel=1e-7)
    assert result["properties"]["l_eq_m"] == pytest.approx(LENGTH, rel=1e-15)  # point mass


def test_demo_output_file_is_the_demo_rig(tmp_path):
    # The written file is a rig file v1 whose mass properties are the handbook sums
    # (refsolvers.properties: rod m L^2 / 3 plus point masses, parallel axes) that the check
    # of that file reports.
    path = tmp_path / "demo.json"
    run_cli("demo", "-o", str(path))
    data = json.loads(path.read_text())
    assert (data["format"], data["version"]) == ("shakestill-rig", 1)
    want = R.properties(data)
    got = json.loads(run_cli("check", str(path), "--json"))["properties"]
    for key in ("total_mass_kg", "first_moment_kg_m", "inertia_about_pivot_kg_m2", "l_eq_m"):
        assert got[key] == pytest.approx(want[key], rel=1e-12), key
    assert got["hanging_frequencies_hz"][0] == pytest.approx(want["hanging_frequency_hz"],
                                                             rel=1e-10)


@pytest.fixture(scope="module")
def chart_json(rig_file):
    return json.loads(run_cli("chart", str(rig_file), "--json", "--rows", "6"))


def test_chart_cli_rows_follow_the_mathieu_chart(chart_json):
    # Each row's stable intervals for the inverted pendulum start at the Kapitza/Mathieu edge
    # of that stroke (refsolvers.speed_window at the row's stroke), 1e-6 relative (the chart's
    # edges are refined far inside its 1e-4 target).
    rows = chart_json["rows"]
    assert len(rows) == 6 and chart_json["y_unit"] == "m"
    checked = 0
    for row in rows:
        stroke = row["y"]
        if stroke <= 0:
            continue
        lo, hi = chart_json["speed_range_rpm"]
        # the row's own window around a stable speed near the top of the range
        ref = R.speed_window(LENGTH, G, stroke, hi * 0.999, "inverted", [lo, hi])
        intervals = row["inverted"]["stable_intervals_rpm"]
        if ref is None:
            assert not any(b >= hi * 0.999 for _, b in intervals)
            continue
        top = [iv for iv in intervals if iv[1] >= hi * 0.999]
        assert len(top) == 1
        assert top[0][0] == pytest.approx(ref[0], rel=1e-6)
        checked += 1
    assert checked >= 3


def test_chart_cli_writes_the_svg(rig_file, tmp_path):
    out = tmp_path / "chart.svg"
    words = run_cli("chart", str(rig_file), "-o", str(out), "--rows", "4")
    assert out.read_text().startswith("<svg") and "</svg>" in out.read_text()
    assert "wrote" in words and "4 rows" in words


def test_simulate_set_restarts_from_the_given_state(rig_file):
    # At t = 0.5 s the state is set to 0.1 rad from upright at 0.5 rad/s; the end state at
    # t = 1 s must be that of the exact pendulum on a moving pivot,
    # L th'' = (g + y_p''(t)) sin th, y_p = (stroke / 2) cos(w t),
    # integrated by scipy.integrate.solve_ivp (DOP853, rtol 1e-12) from the set state.
    out = json.loads(run_cli("simulate", str(rig_file), "--duration", "1s", "--angle", "0.3rad",
                             "--set", "0.5s:0.1rad:0.5rad/s", "--fps", "0", "--rtol", "1e-10",
                             "--json"))
    w = 2 * math.pi * SPEED / 60

    def rhs(t, x):
        ypp = -STROKE / 2 * w * w * math.cos(w * t)
        return [x[1], (G + ypp) / LENGTH * math.sin(x[0])]

    sol = solve_ivp(rhs, (0.5, 1.0), [0.1, 0.5], method="DOP853", rtol=1e-12, atol=1e-12)
    assert out["end_t_s"] == pytest.approx(1.0, abs=1e-12)
    # 1e-6 rad: the engine's rtol 1e-10 over ~20 drive cycles (common practice, no source)
    assert out["end_state"][0] == pytest.approx(sol.y[0, -1], abs=1e-6)
    assert out["end_state"][1] == pytest.approx(sol.y[1, -1], abs=1e-4)
    assert np.isfinite(out["end_state"]).all() and out["fell"] is False
