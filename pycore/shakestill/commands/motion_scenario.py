"""A simulation's scenario as the user gives it: from a bridge request (JSON fields, numbers
with units) or from the command line's options (--knock 2s:3rad/s, --ramp 1s:2s:3000rpm,
--speed-table), every bad value named by its field or option."""

from __future__ import annotations

import csv
import io
import math
from dataclasses import replace

from ..model.rig import Problem, RigError
from ..model.units import UnitError, parse_quantity
from ..motion.scenario import Jump, Knock, Scenario
from ..motion.speed import ramp_profile, table_profile
from .common import Reader, bad, quantity, read_text

# ----------------------------------------------------------------------------- bridge requests


def _link(r: Reader, where: str, raw, n: int) -> int:
    if raw is None:
        return 0
    if isinstance(raw, bool) or not isinstance(raw, int) or not 1 <= raw <= n:
        r.problems.append(Problem(where, f"{raw!r} is not allowed: links are numbered 1 to {n}"))
        return 0
    return raw - 1


def scenario_from_request(request: dict, rig) -> Scenario:
    """The Scenario a ``simulate`` request describes (RigError naming each bad field)."""
    r, n = Reader(request), rig.n_links
    knocks = tuple(Knock(r.quantity(f"knocks[{i}].t_s", k.get("t_s"), "time", minimum=0.0) or 0.0,
                         r.quantity(f"knocks[{i}].rate_rad_s", k.get("rate_rad_s"),
                                    "angular_rate") or 0.0,
                         _link(r, f"knocks[{i}].link", k.get("link", 1), n))
                   for i, k in enumerate(r.items("knocks")))
    jumps = tuple(Jump(r.quantity(f"jumps[{i}].t_s", j.get("t_s"), "time", minimum=0.0) or 0.0,
                       r.values(f"jumps[{i}].angles_rad", j.get("angles_rad"), "angle", n),
                       r.values(f"jumps[{i}].rates_rad_s", j.get("rates_rad_s"), "angular_rate",
                                n))
                  for i, j in enumerate(r.items("jumps")))
    profile = None
    start_rpm = r.field("start_rpm", "speed", None, minimum=0.0)
    ramps = [_ramp(r, f"ramps[{i}]", x) for i, x in enumerate(r.items("ramps"))]
    table = request.get("speed_table")
    reference = request.get("reference", "inverted")
    angles = r.values("angles_rad", request.get("angles_rad"), "angle", n)
    sc = Scenario(
        duration_s=r.field("duration_s", "time", 5.0, above=0.0),
        angles_rad=angles if angles is not None or reference != "hanging" else (math.pi,) * n,
        rates_rad_s=r.values("rates_rad_s", request.get("rates_rad_s"), "angular_rate", n),
        knocks=knocks, jumps=jumps,
        frame_rate_hz=r.field("frame_rate_hz", "plain", 60.0, minimum=0.0),
        strobe_phase_rad=r.field("strobe_phase_rad", "angle", 0.0),
        reference=reference,
        fall_band_rad=r.field("fall_band_rad", "angle", math.pi / 2, above=0.0),
        recover_band_rad=r.field("recover_band_rad", "angle", 0.2, above=0.0),
        settle_s=r.field("settle_s", "time", 1.0, minimum=0.0))
    r.done()
    if table and (ramps or start_rpm is not None):
        raise RigError([Problem("ramps" if ramps else "start_rpm",
                                "give ramps (and start_rpm) or speed_table, not both")])
    if ramps or start_rpm is not None:
        start = rig.drive.speed_rpm if start_rpm is None else start_rpm  # held until a ramp
        profile = ramp_profile(start, _ramp_times(ramps, start))
    elif table:
        if not isinstance(table, dict):
            raise RigError([Problem("speed_table", "must be {\"t_s\": [...], \"speed_rpm\": [...]}")])
        ts = r.values("speed_table.t_s", table.get("t_s"), "time", len(table.get("t_s") or []))
        vs = r.values("speed_table.speed_rpm", table.get("speed_rpm"), "speed",
                      len(table.get("speed_rpm") or []))
        r.done()
        profile = table_profile(ts or (), vs or ())
    return replace(sc, profile=profile)


def _ramp(r: Reader, where: str, x: dict) -> tuple:
    """(at_s, over_s or None, to_rpm, rate_rpm_s or None): a ramp gives its time or its rate."""
    if ("over_s" in x) == ("rate_rpm_s" in x):
        r.problems.append(Problem(where, "give over_s (the ramp's time) or rate_rpm_s (its rate), "
                                         "one of the two"))
    return (r.quantity(f"{where}.at_s", x.get("at_s"), "time", minimum=0.0),
            r.quantity(f"{where}.over_s", x["over_s"], "time", above=0.0) if "over_s" in x else None,
            r.quantity(f"{where}.to_rpm", x.get("to_rpm"), "speed", minimum=0.0),
            r.quantity(f"{where}.rate_rpm_s", x["rate_rpm_s"], "rate", above=0.0)
            if "rate_rpm_s" in x else None)


def _ramp_times(ramps, start_rpm: float) -> list:
    """(at_s, over_s, to_rpm) for speed.ramp_profile: a rate lasts |to - speed before| / rate.

    A ramp by rate to the speed it starts from changes nothing and is left out.
    """
    out, before = [], start_rpm
    for at, over, to, rate in ramps:
        if rate is not None:
            if to == before:
                continue
            over = abs(to - before) / rate
        out.append((at, over, to))
        before = to
    return out


# ----------------------------------------------------------------------------- command line


_OPTION_OF = {"duration_s": "--duration", "angles_rad": "--angle", "rates_rad_s": "--rate",
              "knocks": "--knock", "jumps": "--set", "frame_rate_hz": "--fps",
              "strobe_phase_rad": "--strobe-phase", "fall_band_rad": "--fall-band",
              "recover_band_rad": "--recover-band", "settle_s": "--settle", "rtol": "--rtol"}


def _per_link(items, kind: str, option: str, n: int, default: float) -> tuple[float, ...] | None:
    """One value per link from a repeated option; missing links copy the last one given."""
    if not items:
        return None
    if len(items) > n:
        raise bad(option, " ".join(items), f"the rig has {n} link(s): give at most {n} values")
    values = [quantity(t, kind, option) for t in items]
    return tuple(values + [values[-1] if values else default] * (n - len(values)))


def _list(text: str, kind: str, option: str, n: int) -> tuple[float, ...]:
    parts = [p for p in text.split(",") if p.strip()]
    if len(parts) != n:
        raise bad(option, text, f"give {n} comma-separated value(s), one per link")
    return tuple(quantity(p, kind, option) for p in parts)


def _knocks(items, n: int):
    out = []
    for text in items or []:
        parts = text.split(":")
        if len(parts) not in (2, 3):
            raise bad("--knock", text, "use TIME:RATE or TIME:RATE:LINK, e.g. 2s:3rad/s:1")
        link = 1
        if len(parts) == 3:
            if not parts[2].strip().isdigit() or not 1 <= int(parts[2]) <= n:
                raise bad("--knock", text, f"the link is a number from 1 to {n}")
            link = int(parts[2])
        out.append(Knock(quantity(parts[0], "time", "--knock", minimum=0.0),
                         quantity(parts[1], "angular_rate", "--knock"), link - 1))
    return tuple(out)


def _jumps(items, n: int):
    out = []
    for text in items or []:
        parts = text.split(":")
        if len(parts) not in (2, 3) or not any(p.strip() for p in parts[1:]):
            raise bad("--set", text, "use TIME:ANGLES[:RATES] with comma-separated values "
                                      "per link, e.g. 3s:10deg,0deg or 3s::0,0")
        angles = _list(parts[1], "angle", "--set", n) if parts[1].strip() else None
        rates = (_list(parts[2], "angular_rate", "--set", n)
                 if len(parts) == 3 and parts[2].strip() else None)
        out.append(Jump(quantity(parts[0], "time", "--set", minimum=0.0), angles, rates))
    return tuple(out)


def _profile(args, rig):
    if args.ramp and args.speed_table:
        raise bad("--ramp", " ".join(args.ramp), "give ramps or --speed-table, not both")
    if args.speed_table:
        return _read_table(args.speed_table, table_profile)
    if not args.ramp:
        if args.start_speed is not None:
            raise bad("--start-speed", args.start_speed, "it sets where the first --ramp "
                       "starts: give a --ramp too")
        return None
    start = (rig.drive.speed_rpm if args.start_speed is None else
             quantity(args.start_speed, "speed", "--start-speed", minimum=0.0))
    ramps = []
    for text in args.ramp:
        parts = text.split(":")
        if len(parts) != 3:
            raise bad("--ramp", text, "use AT:OVER:TO, e.g. 1s:2s:3000rpm or 6s:1s:stop")
        to = 0.0 if parts[2].strip().lower() == "stop" else quantity(parts[2], "speed", "--ramp",
                                                                   minimum=0.0)
        ramps.append((quantity(parts[0], "time", "--ramp", minimum=0.0),
                      quantity(parts[1], "time", "--ramp", above=0.0), to))
    return ramp_profile(start, ramps, where="--ramp")


def _read_table(path: str, table_profile):
    """A CSV of time, speed rows (a header row is skipped); cells may carry units."""
    text = read_text(path, "--speed-table")
    rows = [r for r in csv.reader(io.StringIO(text, newline="")) if r and any(c.strip() for c in r)]
    times, speeds = [], []
    for k, row in enumerate(rows):
        try:
            t, v = parse_quantity(row[0].strip(), "time"), parse_quantity(row[1].strip(), "speed")
        except (UnitError, IndexError) as exc:
            if k == 0:
                continue  # a header
            raise bad("--speed-table", ",".join(row), f"row {k + 1} must be TIME,SPEED "
                                                       f"(e.g. 0.5,1800 or 0.5s,30Hz): {exc}")
        times.append(t)
        speeds.append(v)
    return table_profile(times, speeds, where="--speed-table")


def scenario_from_args(args, rig):
    n = rig.n_links
    duration = quantity(args.duration, "time", "--duration", above=0.0)
    fps = quantity(args.fps, "plain", "--fps", minimum=0.0)
    angles = _per_link(args.angle, "angle", "--angle", n, 0.0)
    if angles is None and args.hanging:
        angles = (math.pi,) * n
    return Scenario(
        duration_s=duration, angles_rad=angles, rates_rad_s=_per_link(args.rate, "angular_rate",
                                                                      "--rate", n, 0.0),
        knocks=_knocks(args.knock, n), jumps=_jumps(args.set, n), profile=_profile(args, rig),
        frame_rate_hz=fps, strobe_phase_rad=quantity(args.strobe_phase, "angle", "--strobe-phase"),
        reference="hanging" if args.hanging else "inverted",
        fall_band_rad=quantity(args.fall_band, "angle", "--fall-band", above=0.0),
        recover_band_rad=quantity(args.recover_band, "angle", "--recover-band", above=0.0),
        settle_s=quantity(args.settle, "time", "--settle", minimum=0.0),
        rtol=quantity(args.rtol, "plain", "--rtol", above=0.0),
        atol=quantity(args.rtol, "plain", "--rtol", above=0.0))


def rename_options(exc: RigError) -> RigError:
    """Scenario field paths as the options the user typed."""
    out = []
    for p in exc.problems:
        head = p.path.split("[")[0].split(".")[0]
        option = _OPTION_OF.get(head)
        if option is None:
            out.append(p)
            continue
        which = p.path[len(head):].split("]")[0].lstrip("[")
        out.append(Problem(option + (f" (number {int(which) + 1})" if which.isdigit() else ""),
                           p.message))
    return RigError(out)
