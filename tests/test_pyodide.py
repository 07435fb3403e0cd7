"""The core inside Pyodide under Node.js gives CPython's answers.

Builds the site (Pyodide core, pinned wheels, the core's wheel, the rewritten
lock file) into a temporary folder (or reads the dist/ that build_scripts/test.sh
has just built from this tree, tests/fresh_dist.py), runs the site's own worker
(site/engine/worker.js) under Node.js through tests/pyodide_run.mjs (the worker
loads micropip and packaging from the lock, then micropip installs the core
from its local wheel, hash in the lock), and drives it with the worker
message protocol. Every bridge reply is compared field by field with
shakestill.bridge.handle on CPython, the independent reference here:
numbers to a relative 1e-12, everything else exactly.
"""

from __future__ import annotations

import json
import math
import re
import shutil
import subprocess
import sys
import tomllib
from pathlib import Path

import pytest

from fresh_dist import fresh_dist
from prereq import missing

TOP = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(TOP / "build_scripts"))

pytestmark = pytest.mark.pyodide

# Both interpreters use IEEE 754 doubles; only libm may differ in the last
# bits, so replies agree far tighter than this (common practice, no source).
RELATIVE = 1e-12
NODE_MIN_MAJOR = 18  # "engines" of the npm package pyodide 314.0.7

# An invented two-link arm on a sine drive (not the demo rig).
TWO_LINK = {
    "format": "shakestill-rig", "version": 1, "title": "Two-link test arm",
    "links": [
        {"length_m": 0.20, "rod_mass_kg": 0.04, "point_masses": [{"mass_kg": 0.01, "at_m": 0.20}],
         "extra_inertia_kg_m2": 0.0, "joint_damping_N_m_s": 1e-4, "joint_friction_N_m": 0.0},
        {"length_m": 0.15, "rod_mass_kg": 0.03, "point_masses": [],
         "extra_inertia_kg_m2": 0.0, "joint_damping_N_m_s": 1e-4, "joint_friction_N_m": 0.0},
    ],
    "drive": {"waveform": "sine", "stroke_m": 0.015, "speed_rpm": 3000},
    "limits": {"speed_rpm": [300, 3600], "stroke_m": [0.0, 0.03]},
}


def _node() -> str:
    node = shutil.which("node")
    if node is None:
        missing("node is not on PATH: the Pyodide pass runs the core under Node.js "
                    f"{NODE_MIN_MAJOR} or newer (Debian package nodejs)")
    version = subprocess.run([node, "--version"], capture_output=True, text=True, check=True).stdout
    major = int(re.match(r"v(\d+)", version).group(1))
    assert major >= NODE_MIN_MAJOR, f"node {version.strip()} is too old for Pyodide 314"
    return node


def _cpython(request: dict) -> dict:
    from shakestill import bridge
    fields = {k: v for k, v in request.items() if k != "id"}
    return json.loads(bridge.handle(json.dumps(fields)))


def _demo_rig() -> dict:
    reply = _cpython({"op": "demo"})
    assert reply["ok"], reply
    return reply["rig"]


def _requests() -> list[list[dict]]:
    demo = _demo_rig()
    bad = json.loads(json.dumps(TWO_LINK))
    bad["drive"]["stroke_m"] = "-5 mm"
    return [
        # Posted while the worker boots: 2 is replaced by 3 (same op, not started),
        # 4 is cancelled; 1, 3 and 5 run once the worker is ready.
        [{"id": 1, "op": "version"},
         {"id": 2, "op": "validate", "rig": demo},
         {"id": 3, "op": "validate", "rig": TWO_LINK},
         {"id": 4, "op": "schematic", "rig": demo},
         {"id": 4, "cancel": True},
         {"id": 5, "op": "demo"}],
        [{"id": 10, "op": "check", "rig": demo}],
        [{"id": 11, "op": "check", "rig": TWO_LINK}],
        [{"id": 12, "op": "check", "rig": bad}],
        [{"id": 13, "op": "schematic", "rig": TWO_LINK}],
        [{"id": 14, "op": "fit", "rig": demo, "log": _decay_log(demo), "drive_stopped": True,
          "parameters": ["damping"]}],
    ]


def _decay_log(demo: dict) -> str:
    """A short free decay of the demo rig with twice its damping, made on CPython."""
    import shakestill as ss
    from shakestill.fit.fitting import with_values
    from shakestill import Scenario, simulate
    from shakestill.motion.speed import constant_speed
    rig = ss.rig_from_dict(demo)
    rig = with_values(rig, ["links[0].joint_damping_N_m_s"],
                      [2 * rig.links[0].joint_damping_N_m_s])
    run = simulate(rig, Scenario(duration_s=2.0, angles_rad=(math.pi + 0.3,), rates_rad_s=(0.0,),
                                 profile=constant_speed(0.0), frame_rate_hz=25,
                                 strobe_phase_rad=None, rtol=1e-11, atol=1e-11))
    return "t_s,angle_rad\n" + "\n".join(f"{t!r},{q[0] - math.pi!r}"
                                           for t, q in zip(run.t_s, run.angles_rad))


@pytest.fixture(scope="module")
def run(tmp_path_factory):
    node = _node()
    built = fresh_dist()  # test.sh's build of this tree, when there is one
    if built is not None:
        site = built / "site"
    else:
        import build_site
        site = tmp_path_factory.mktemp("pyodide") / "site"
        build_site.build_site(site)
    batches = _requests()
    done = subprocess.run(
        [node, "--no-warnings", str(TOP / "tests" / "pyodide_run.mjs"), str(site)],
        input=json.dumps({"batches": batches, "timeout_s": 600}),
        capture_output=True, text=True, timeout=900,
    )
    assert done.returncode == 0, f"runner failed:\n{done.stdout[-2000:]}\n{done.stderr[-4000:]}"
    messages = json.loads(done.stdout)["messages"]
    requests = {r["id"]: r for batch in batches for r in batch if not r.get("cancel")}
    return messages, requests


def _final(messages, id_):
    finals = [m for m in messages if m.get("id") == id_ and m["type"] in ("result", "error")]
    assert len(finals) == 1, f"request {id_}: {finals}"
    return finals[0]


WORK_COUNTERS = {"evaluations"}


def _compare(pyodide, cpython, path="reply"):
    """Every leaf equal; numbers to RELATIVE. Returns how many numbers were compared."""
    if isinstance(cpython, bool) or cpython is None or isinstance(cpython, str):
        assert pyodide == cpython, path
        return 0
    if isinstance(cpython, (int, float)):
        assert isinstance(pyodide, (int, float)) and not isinstance(pyodide, bool), path
        assert math.isclose(pyodide, cpython, rel_tol=RELATIVE, abs_tol=RELATIVE), \
            f"{path}: Pyodide {pyodide!r}, CPython {cpython!r}"
        return 1
    if isinstance(cpython, list):
        assert isinstance(pyodide, list) and len(pyodide) == len(cpython), path
        return sum(_compare(a, b, f"{path}[{i}]") for i, (a, b) in enumerate(zip(pyodide, cpython)))
    assert isinstance(pyodide, dict) and sorted(pyodide) == sorted(cpython), path
    # Work counters are not results: the platforms' libm may differ in the last bit, which
    # can change a root finder's iteration count by one while every result still agrees.
    cpython = {k: v for k, v in cpython.items() if k not in WORK_COUNTERS}
    return sum(_compare(pyodide[k], cpython[k], f"{path}.{k}") for k in cpython)


def test_worker_boots_in_stages_then_is_ready(run):
    messages, _ = run
    boots = [m for m in messages if m.get("type") == "boot"]
    ready = [m for m in messages if m.get("type") in ("ready", "boot-failed")]
    assert ready and ready[0]["type"] == "ready", ready
    fractions = [m["fraction"] for m in boots]
    assert len(boots) >= 3 and all(isinstance(m["stage"], str) and m["stage"] for m in boots)
    assert fractions == sorted(fractions) and 0 <= fractions[0] and fractions[-1] < 1
    version = tomllib.loads((TOP / "pyproject.toml").read_text())["project"]["version"]
    assert ready[0]["version"] == version  # the wheel built from pyproject.toml is what runs


@pytest.mark.parametrize("id_", [10, 11], ids=["demo rig", "two-link rig"])
def test_check_matches_cpython(run, id_):
    messages, requests = run
    final = _final(messages, id_)
    assert final["type"] == "result", final
    reply, expected = final["reply"], _cpython(requests[id_])
    assert expected["ok"] is True and reply["ok"] is True
    numbers = _compare(reply, expected)
    assert numbers >= 8, "a check reply carries multipliers, frequencies and windows"
    for eq in ("inverted", "hanging"):
        assert isinstance(reply["result"][eq]["max_multiplier"], float)


@pytest.mark.parametrize("id_", [1, 3, 5, 12, 13], ids=["version", "validate", "demo", "bad input", "schematic"])
def test_other_replies_match_cpython(run, id_):
    messages, requests = run
    final = _final(messages, id_)
    assert final["type"] == "result", final
    _compare(final["reply"], _cpython(requests[id_]))


def test_fit_matches_cpython(run):
    # A fit stops once a step moves its scaled numbers by less than 1e-7 (fit.STEP_TOL), so
    # the platforms agree to that, not to round-off: fitted numbers, start and misfit to 1e-6.
    messages, requests = run
    final = _final(messages, 14)
    assert final["type"] == "result", final
    got, want = final["reply"]["result"], _cpython(requests[14])["result"]
    assert got["converged"] and want["converged"]
    pairs = [(g["value"], w["value"]) for g, w in zip(got["parameters"], want["parameters"])]
    pairs += list(zip(got["initial_angles_rad"], want["initial_angles_rad"]))
    for g, w in pairs:
        assert math.isclose(g, w, rel_tol=1e-6), (g, w)
    assert math.isclose(got["rms_start_rad"], want["rms_start_rad"], rel_tol=1e-9)


def test_bad_input_names_the_field(run):
    messages, _ = run
    reply = _final(messages, 12)["reply"]
    assert reply["ok"] is False
    assert any(p["path"] == "drive.stroke_m" for p in reply["problems"]), reply


def test_queued_requests_are_replaced_or_cancelled_before_they_start(run):
    messages, _ = run
    for id_ in (2, 4):
        final = _final(messages, id_)
        assert final["type"] == "error" and final["cancelled"] is True, final
        started = [m for m in messages if m.get("id") == id_ and m["type"] == "progress"]
        assert started == [], f"request {id_} started although it was dropped"
    order = [m["id"] for m in messages if m.get("type") == "result"]
    assert order == [1, 3, 5, 10, 11, 12, 13, 14]  # the rest in the order sent
