"""What the stability methods can resolve, so that no rig makes them work without end.

Scans along speed step through the parametric tongues, which crowd together as
the drive slows (tongue n sits near a drive frequency of 2 f0 / n), and Hill's
determinant needs more rows there; below about 2 f0 / MAX_TONGUE_ORDER a scan
would take minutes and say nothing a technician can use (the pivot barely
accelerates). Scans stop at that floor and say so; an operating point below it
is refused with that message. A probe's evaluations are capped as a safety net.
"""

from __future__ import annotations

from ..model.derived import Model, as_model
from ..model.rig import REACH, OutOfReach, Problem, Rig

MAX_SPEED_RPM = REACH["speed"][1]  # the fastest drive the scans go to (the rig file's reach):
# past it the drive's terms (omega^2 near 1e300 for limits typed as 1e300) overflow
MAX_TONGUE_ORDER = 50  # tongues a speed scan steps through below the drive, at most
MAX_EVALUATIONS = 6000  # stability evaluations on one scan line (a rig inside the reach
# needs a few hundred; this bounds a line of Hill's determinants to seconds)
MAX_CYCLE_STEPS = 40_000  # integration steps of the monodromies on one scan line: under a
# second for two links; an ordinary two- or three-link window needs about 2,000, while a rig
# with joint dampers 10,000 times the demo's takes 4,000 a monodromy and minutes a check


def _fastest_hanging_hz(model: Rig | Model) -> float:
    return max(as_model(model).properties.hanging_frequencies_hz)


def scan_floor_rpm(model: Rig | Model) -> float:
    """The slowest drive speed a stability scan resolves for this rig (rpm)."""
    return 2.0 * _fastest_hanging_hz(model) / MAX_TONGUE_ORDER * 60.0


def floor_words(model: Rig | Model) -> str:
    f0 = _fastest_hanging_hz(model)
    return (f"below {scan_floor_rpm(model):.4g} rpm the pendulum's own frequency ({f0:.3g} Hz) is "
            f"more than {MAX_TONGUE_ORDER // 2} times the drive's, too many parametric "
            "resonances to resolve")


CEILING_WORDS = (f"above {MAX_SPEED_RPM:g} rpm the drive is outside the range this method is "
                 "built for")


def require_in_reach(model: Rig | Model) -> None:
    """OutOfReach naming drive.speed_rpm when the operating speed is below the scan floor
    or above MAX_SPEED_RPM."""
    speed = as_model(model).rig.drive.speed_rpm
    if speed > MAX_SPEED_RPM:
        raise OutOfReach([Problem("drive.speed_rpm", f"{speed:g} rpm is outside what this "
                                  f"method can resolve: {CEILING_WORDS}")])
    if speed < scan_floor_rpm(model):
        raise OutOfReach([Problem("drive.speed_rpm", f"{speed:g} rpm is outside "
                                  f"what this method can resolve: {floor_words(model)}")])


def too_much_work(where: str, what: str) -> OutOfReach:
    return OutOfReach([Problem(where, f"outside what this method can resolve: the scan needed "
                                      f"more than {what}")])
