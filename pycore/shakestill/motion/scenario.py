"""What a simulation is asked (Scenario with its knocks and jumps) and what it gives back
(Motion with its events), and the check that names every bad field of a scenario."""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from ..model.rig import Problem, Rig, RigError
from ..numerics.integrate import ATOL, RTOL
from .speed import SpeedProfile

REFERENCES = {"inverted": 0.0, "hanging": math.pi}
MAX_DURATION_S = 3600.0  # an hour of rig time is far past any settling question
MAX_FRAMES = 500_000  # frames kept in memory


@dataclass(frozen=True)
class Knock:
    """An angular-rate step added to one link's rate at a time (0-based link)."""

    t_s: float
    rate_rad_s: float
    link: int = 0


@dataclass(frozen=True)
class Jump:
    """The state set at a time: all angles and/or all rates (None keeps them)."""

    t_s: float
    angles_rad: tuple[float, ...] | None = None
    rates_rad_s: tuple[float, ...] | None = None


@dataclass(frozen=True)
class Scenario:
    """What to simulate. Angles are absolute, from the upward vertical (rad)."""

    duration_s: float = 5.0
    angles_rad: tuple[float, ...] | None = None  # initial; default: the reference position
    rates_rad_s: tuple[float, ...] | None = None  # initial; default: at rest
    knocks: tuple[Knock, ...] = ()
    jumps: tuple[Jump, ...] = ()
    profile: SpeedProfile | None = None  # default: the rig's own speed throughout
    frame_rate_hz: float = 60.0  # 0: no frames
    strobe_phase_rad: float | None = 0.0  # None: no stroboscopic samples
    reference: str = "inverted"  # what the event bands are measured from
    fall_band_rad: float = math.pi / 2  # "fell": an angle leaves this band (passes horizontal)
    recover_band_rad: float = 0.2  # "recovered": all angles back within this band ...
    settle_s: float = 1.0  # ... and staying there this long
    stop_at_fall: bool = False  # end the run at the first "fell" (tolerance searches)
    rtol: float = RTOL
    atol: float = ATOL


@dataclass(frozen=True)
class Event:
    t_s: float
    kind: str  # fell, recovered, rotation, stick, slip, knock, jump
    link: int | None = None  # 0-based link, or joint for stick/slip
    message: str = ""

    def as_dict(self) -> dict:
        return {"t_s": self.t_s, "kind": self.kind, "link": self.link, "message": self.message}


@dataclass(frozen=True)
class Motion:
    """A simulated run. Per-frame tuples share the index of ``t_s``."""

    t_s: tuple[float, ...]
    angles_rad: tuple[tuple[float, ...], ...]
    rates_rad_s: tuple[tuple[float, ...], ...]
    pivot_y_m: tuple[float, ...]
    speed_rpm: tuple[float, ...]
    energy_J: tuple[float, ...]
    modes: tuple[tuple[int, ...], ...]  # per frame: 0 stuck, +-1 sliding, per joint
    strobe_t_s: tuple[float, ...]
    strobe_angles_rad: tuple[tuple[float, ...], ...]
    strobe_rates_rad_s: tuple[tuple[float, ...], ...]
    events: tuple[Event, ...]
    end_t_s: float
    end_state: tuple[float, ...]
    turns: tuple[float, ...]  # largest |angle change| / 2 pi per link
    fell: bool
    success: bool = True
    message: str = ""
    work: dict = field(default_factory=dict, compare=False)
    pivot_x_m: tuple[float, ...] = ()  # per frame, a drive off vertical only (else empty)


# ----------------------------------------------------------------------------- checks


def check_scenario(rig: Rig, sc: Scenario) -> None:
    n, bad = rig.n_links, []

    def need(ok: bool, path: str, text: str) -> None:
        if not ok:
            bad.append(Problem(path, text))

    need(_finite(sc.duration_s) and 0 < sc.duration_s <= MAX_DURATION_S, "duration_s",
         f"{sc.duration_s!r} is not allowed: give more than 0 and at most {MAX_DURATION_S:g} s")
    for name in ("angles_rad", "rates_rad_s"):
        value = getattr(sc, name)
        need(value is None or (len(value) == n and all(map(_finite, value))), name,
             f"{value!r} is not allowed: give {n} finite number(s), one per link")
    for i, k in enumerate(sc.knocks):
        need(_finite(k.t_s) and 0 <= k.t_s <= sc.duration_s, f"knocks[{i}].t_s",
             f"{k.t_s!r} is not allowed: a knock comes between 0 and {sc.duration_s:g} s")
        need(_finite(k.rate_rad_s), f"knocks[{i}].rate_rad_s",
             f"{k.rate_rad_s!r} is not allowed: a finite rate step in rad/s")
        need(isinstance(k.link, int) and 0 <= k.link < n, f"knocks[{i}].link",
             f"{k.link!r} is not allowed: links are numbered 0 to {n - 1}")
    for i, j in enumerate(sc.jumps):
        need(_finite(j.t_s) and 0 <= j.t_s <= sc.duration_s, f"jumps[{i}].t_s",
             f"{j.t_s!r} is not allowed: a jump comes between 0 and {sc.duration_s:g} s")
        for name in ("angles_rad", "rates_rad_s"):
            value = getattr(j, name)
            need(value is None or (len(value) == n and all(map(_finite, value))),
                 f"jumps[{i}].{name}", f"{value!r} is not allowed: {n} finite number(s)")
    need(_finite(sc.frame_rate_hz) and sc.frame_rate_hz >= 0
         and sc.frame_rate_hz * sc.duration_s <= MAX_FRAMES, "frame_rate_hz",
         f"{sc.frame_rate_hz!r} is not allowed: at least 0 Hz and at most {MAX_FRAMES} "
         "frames in the run")
    need(sc.strobe_phase_rad is None or _finite(sc.strobe_phase_rad), "strobe_phase_rad",
         f"{sc.strobe_phase_rad!r} is not allowed: a finite phase in rad")
    need(sc.reference in REFERENCES, "reference",
         f"{sc.reference!r} is not allowed: use one of {', '.join(REFERENCES)}")
    need(_finite(sc.fall_band_rad) and 0 < sc.fall_band_rad <= math.pi, "fall_band_rad",
         f"{sc.fall_band_rad!r} is not allowed: more than 0 and at most pi rad")
    need(_finite(sc.recover_band_rad) and 0 < sc.recover_band_rad <= sc.fall_band_rad,
         "recover_band_rad", f"{sc.recover_band_rad!r} is not allowed: more than 0 and at "
                             "most the fall band")
    need(_finite(sc.settle_s) and sc.settle_s >= 0, "settle_s",
         f"{sc.settle_s!r} is not allowed: at least 0 s")
    need(sc.rtol > 0 and sc.atol > 0, "rtol", "tolerances must be greater than 0")
    if bad:
        raise RigError(bad)


def _finite(x) -> bool:
    return isinstance(x, (int, float)) and not isinstance(x, bool) and math.isfinite(x)
