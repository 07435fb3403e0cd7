"""Where a window stops when no edge stops it: the rig's limits, the scan's floor and ceiling
(the method's reach), a still pivot; and the words the check prints for each.

References: the Mathieu transition curves (scipy.special.mathieu_a / mathieu_b through
tests/refsolvers.speed_window and stroke_window) for the edges; the simple pendulum's
frequency f0 = sqrt(g / l) / (2 pi) (any mechanics text) for the floor; the rules the
windows document (architecture.md "Windows": each side stops at the first edge, else at the
rig's limit; equilibria/reach.py: scans stop at 2 f0 / MAX_TONGUE_ORDER and at the rig
file's largest speed, and say so) for the clipping and its words.
"""

import dataclasses
import math

import pytest

import refsolvers as ref
import shakestill as ss
from shakestill.model.rig import Limits

G = ref.G_STANDARD
L = 0.2  # point mass on a massless rod: l_eq = L exactly
F0 = math.sqrt(G / L) / (2 * math.pi)  # simple pendulum, any mechanics text
TONGUES = 50  # the scan's floor is 2 f0 / 50 (equilibria/reach.py, MAX_TONGUE_ORDER)
FLOOR_RPM = 2 * F0 / TONGUES * 60
REACH_RPM = 1e6  # the rig file's largest speed (model/rig.py REACH["speed"])


def pendulum(stroke_m, speed_rpm, limits=None, damping=0.0):
    data = ref.rig([ref.link(L, 0.0, [(0.1, L)], damping=damping)], ref.sine(stroke_m, speed_rpm))
    if limits is None:
        del data["limits"]  # the file's default: a quarter to four times the operating speed
    else:
        data["limits"] = limits
    return ss.rig_from_dict(data)


def test_a_still_pivot_has_no_speed_edge():
    """The reported bug: with stroke 0 the hanging speed window's low end was an "edge" at
    twice the sway frequency. A still pivot leaves a plain pendulum, whose one-cycle
    multipliers are exp(+-2 pi i f0 / f) (harmonic oscillator, any mechanics text): on the
    unit circle at every speed, so undamped it never leaves stability, and no speed changes
    the verdict. The window is the rig's speed limits, said in words, with no scan."""
    assert 10.0 < 2 * F0 * 60 < 300.0  # 2 f0 (133.8 rpm), where the bug put the edge, inside
    rig = pendulum(0.0, 300.0, {"speed_rpm": [10.0, 3000.0], "stroke_m": [0.0, 0.3]})
    w = ss.window(rig, "hanging", "speed")
    assert (w.axis, w.interval, w.low_is_edge, w.high_is_edge) == ("speed", [10.0, 3000.0],
                                                                  False, False)
    assert w.message == ("with no stroke the pivot stands still: there is no parametric "
                         "resonance and the speed does not change stability, so the speed "
                         "window is the rig's speed limits")
    assert w.resolution == "not scanned: no stroke" and w.evaluations == 1
    hanging = ss.check(rig)["hanging"]
    assert hanging["window_ends"]["speed_low"] == "limit"
    assert hanging["margins_percent"]["speed_down"] == pytest.approx(
        (300.0 - 10.0) / 300.0 * 100, rel=1e-12)  # to the limit, by hand
    assert w.message in hanging["messages"]
    # the stroke window is still scanned from the operating stroke 0, the lower limit:
    # up to the first tongue crossed at this speed (Mathieu, 1e-6 relative)
    want = ref.stroke_window(L, G, 0.0, 300.0, "hanging", (0.0, 0.3))
    s = ss.window(rig, "hanging", "stroke")
    assert s.low == 0.0 and not s.low_is_edge
    assert s.high_is_edge and s.high == pytest.approx(want[1], rel=1e-6)
    # the upright pendulum on a still pivot falls at any speed: null, said as such
    up = ss.window(rig, "inverted", "speed")
    assert (up.axis, up.interval, up.message) == ("speed", None,
                                                  "unstable at the operating point")


@pytest.mark.parametrize("damping, speed", [(0.0, 1000.0), (0.0, 300.0), (3e-4, 2700.0)])
def test_the_demo_at_stroke_0_has_no_edge_at_twice_its_sway(damping, speed):
    """Where the bug showed: the demo's crank at stroke 0 (the old scan put the low end at
    2 f0 = 131.6 rpm, an "edge", from 1000 rpm undamped). Its plain pendulum is stable at any
    speed (as above), so the window is the demo's speed limits, 120 to 3600 rpm."""
    demo = ss.model.demo.demo_rig_dict()
    demo["links"][0]["joint_damping_N_m_s"] = damping
    demo["drive"].update(stroke_m=0.0, speed_rpm=speed)
    w = ss.window(ss.rig_from_dict(demo), "hanging", "speed")
    assert w.interval == [120.0, 3600.0] and not (w.low_is_edge or w.high_is_edge)


def test_an_unknown_axis_is_named():
    rig = pendulum(0.02, 600.0, {"speed_rpm": [10.0, 3000.0], "stroke_m": [0.0, 0.1]})
    with pytest.raises(ValueError, match=r"^axis: 'tilt' is not 'speed' or 'stroke'$"):
        ss.window(rig, "hanging", "tilt")


@pytest.mark.parametrize("axis", ["speed", "stroke"])
def test_outside_the_limits_is_null_and_said(axis):
    limits = {"speed_rpm": [10.0, 3000.0], "stroke_m": [0.0, 0.1]}
    rig = pendulum(0.02, 600.0, limits)
    outside = ss.with_operating_point(rig, **({"speed_rpm": 3001.0} if axis == "speed"
                                              else {"stroke_m": 0.1001}))
    w = ss.window(outside, "hanging", axis)
    assert (w.axis, w.interval, w.evaluations) == (axis, None, 0)
    assert w.message == "the operating point is outside the limits"


def test_an_operating_point_on_a_limit_is_inside():
    """Limits are closed: an operating point on one has a window starting there (the rule:
    null only outside the limits). Speed at its upper limit, stroke at its lower one; the
    other ends against the Mathieu references (1e-6 relative)."""
    limits = (10.0, 600.0)
    rig = pendulum(0.02, 600.0, {"speed_rpm": list(limits), "stroke_m": [0.02, 0.3]})
    w = ss.window(rig, "hanging", "speed")
    want = ref.speed_window(L, G, 0.02, 600.0, "hanging", limits)
    assert w.axis == "speed" and w.high == 600.0 and not w.high_is_edge
    assert w.low_is_edge and w.low == pytest.approx(want[0], rel=1e-6)
    assert w.resolution == ("scanned every 4% of speed or 0.08 of a tongue spacing, each "
                            "local peak searched")  # DEVELOPERS.md: steps of 4% or 0.08
    s = ss.window(rig, "hanging", "stroke")
    want = ref.stroke_window(L, G, 0.02, 600.0, "hanging", (0.02, 0.3))
    assert s.low == 0.02 and not s.low_is_edge
    assert s.high_is_edge and s.high == pytest.approx(want[1], rel=1e-6)
    assert s.message == ""


FLOOR_WORDS = ("the speed window stops at the slowest speed this method resolves: below "
               f"{FLOOR_RPM:.4g} rpm the pendulum's own frequency ({F0:.3g} Hz) is more than "
               "25 times the drive's, too many parametric resonances to resolve")


def test_the_scan_stops_at_its_floor_and_says_so():
    """Limits below the floor 2 f0 / 50: a window with no edge stops at the floor and says
    why. A stroke of 1e-5 l_eq (q = 1e-5) with light damping leaves no tongue open there
    (tongue n's width ~ q^n, far below the damping's 2 gamma / f)."""
    rig = pendulum(1e-5 * L, 1.5 * FLOOR_RPM, {"speed_rpm": [0.0, 3000.0],
                                                "stroke_m": [0.0, 0.1]}, damping=1e-4)
    w = ss.window(rig, "hanging", "speed")
    assert w.low == pytest.approx(FLOOR_RPM, rel=1e-12) and not w.low_is_edge
    assert w.message == FLOOR_WORDS
    # a floor that is not strictly inside the limits clips nothing and says nothing:
    # the lower limit exactly at the floor, and the upper limit exactly at it
    floor = ss.equilibria.reach.scan_floor_rpm(rig)
    assert floor == pytest.approx(FLOOR_RPM, rel=1e-12)
    at = pendulum(1e-5 * L, 1.5 * FLOOR_RPM, {"speed_rpm": [floor, 3000.0],
                                               "stroke_m": [0.0, 0.1]}, damping=1e-4)
    w = ss.window(at, "hanging", "speed")
    assert w.low == floor and not w.low_is_edge and w.message == ""
    # a pendulum 3 m long: its floor (0.69 rpm) lies below 1 rpm, still clipped from 0 rpm
    long_floor = 2 * math.sqrt(G / 3.0) / (2 * math.pi) / TONGUES * 60
    data = ref.rig([ref.link(3.0, 0.0, [(0.1, 3.0)], damping=1e-4)],
                   ref.sine(1e-5 * 3.0, 1.5 * long_floor))
    data["limits"] = {"speed_rpm": [0.0, 10.0], "stroke_m": [0.0, 0.1]}
    w = ss.window(ss.rig_from_dict(data), "hanging", "speed")
    assert long_floor < 1.0 and w.low == pytest.approx(long_floor, rel=1e-12)
    top = pendulum(1e-5 * L, floor, {"speed_rpm": [0.9 * floor, floor],
                                     "stroke_m": [0.0, 0.1]}, damping=1e-4)
    w = ss.window(top, "hanging", "speed")
    assert w.interval == [0.9 * floor, floor] and w.message == ""


def test_an_edge_above_the_floor_carries_no_floor_note():
    """The floor note belongs to a window that ran down to the floor, not to one stopped by
    a tongue first (tongue 1 of q = 0.1 sits at a = b_1(q), scipy.special.mathieu_b)."""
    rig = pendulum(0.1 * L, 600.0, {"speed_rpm": [0.0, 3000.0], "stroke_m": [0.0, 0.1]})
    w = ss.window(rig, "hanging", "speed")
    want = ref.speed_window(L, G, 0.1 * L, 600.0, "hanging", (FLOOR_RPM, 3000.0))
    assert w.low_is_edge and w.low == pytest.approx(want[0], rel=1e-6)
    assert w.message == ""


CEILING_WORDS = ("the speed window stops at the fastest speed this method resolves: above "
                 "1e+06 rpm the drive is outside the range this method is built for")


def test_the_scan_stops_at_the_rig_files_largest_speed_and_says_so():
    """No limits in the file: a quarter to four times the operating speed (DEVELOPERS.md,
    rig file). At 5e5 rpm that reaches past 1e6 rpm, the largest speed a rig file may hold:
    the window stops there, said in words. The hanging pendulum at a ~ 0 with q = 0.1 is
    inside the band a_0(q) < a < b_1(q) (scipy.special) all the way: no edge."""
    speed = 5e5
    rig = pendulum(0.1 * L, speed)
    a, q = ref.mathieu_aq(L, G, 0.1 * L, speed / 4, "hanging")
    assert ref.mathieu_band(a, q) == 0
    w = ss.window(rig, "hanging", "speed")
    assert w.interval == [speed / 4, REACH_RPM] and not (w.low_is_edge or w.high_is_edge)
    assert w.message == CEILING_WORDS
    # limits up to exactly that speed are the rig's own: no note
    at = pendulum(0.1 * L, speed, {"speed_rpm": [speed / 4, REACH_RPM], "stroke_m": [0, 0.1]})
    w = ss.window(at, "hanging", "speed")
    assert w.interval == [speed / 4, REACH_RPM] and w.message == ""


def test_both_scan_ends_are_said_together():
    """A rig built in Python (not read from a file) may hold limits past both ends of the
    scan: both notes, joined by "; " (the check's way of listing notes in one line)."""
    rig = pendulum(1e-5 * L, 5e5, damping=1e-4)
    wide = dataclasses.replace(rig, limits=Limits((0.0, 2e6), (0.0, 0.1)))
    w = ss.window(wide, "hanging", "speed")
    assert w.interval == [pytest.approx(FLOOR_RPM, rel=1e-12), REACH_RPM]
    assert w.message == FLOOR_WORDS + "; " + CEILING_WORDS
