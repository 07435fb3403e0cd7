"""The ``simulate``, ``tolerance`` and ``loads`` commands of the ``shakestill`` command line.

``add_commands(subparsers)`` adds them to cli.py's parser; each command loads
its rig with cli's own loader and speed/stroke overrides, and every bad value
becomes a ``RigError`` naming the option, the value and what is allowed (cli's
``main`` prints it). ``parser()`` is a parser with only these commands.
"""

from __future__ import annotations

import argparse
import csv
import json
import math
import sys

from .rig import Problem, RigError
from .units import UnitError, parse_quantity

_OPTION_OF = {"duration_s": "--duration", "angles_rad": "--angle", "rates_rad_s": "--rate",
              "knocks": "--knock", "jumps": "--set", "frame_rate_hz": "--fps",
              "strobe_phase_rad": "--strobe-phase", "fall_band_rad": "--fall-band",
              "recover_band_rad": "--recover-band", "settle_s": "--settle", "rtol": "--rtol"}


def _cli():
    from . import cli  # late: cli imports this module to add the commands
    return cli


def _value(text: str, kind: str, option: str, **bounds) -> float:
    return _cli()._quantity(text, kind, option, **bounds)


def _bad(option: str, text: str, allowed: str) -> RigError:
    return RigError([Problem(option, f"{text!r} is not allowed: {allowed}")])


def _per_link(items, kind: str, option: str, n: int, default: float) -> tuple[float, ...] | None:
    """One value per link from a repeated option; missing links copy the last one given."""
    if not items:
        return None
    if len(items) > n:
        raise _bad(option, " ".join(items), f"the rig has {n} link(s): give at most {n} values")
    values = [_value(t, kind, option) for t in items]
    return tuple(values + [values[-1] if values else default] * (n - len(values)))


def _list(text: str, kind: str, option: str, n: int) -> tuple[float, ...]:
    parts = [p for p in text.split(",") if p.strip()]
    if len(parts) != n:
        raise _bad(option, text, f"give {n} comma-separated value(s), one per link")
    return tuple(_value(p, kind, option) for p in parts)


def _knocks(items, n: int):
    from .motion import Knock
    out = []
    for text in items or []:
        parts = text.split(":")
        if len(parts) not in (2, 3):
            raise _bad("--knock", text, "use TIME:RATE or TIME:RATE:LINK, e.g. 2s:3rad/s:1")
        link = 1
        if len(parts) == 3:
            if not parts[2].strip().isdigit() or not 1 <= int(parts[2]) <= n:
                raise _bad("--knock", text, f"the link is a number from 1 to {n}")
            link = int(parts[2])
        out.append(Knock(_value(parts[0], "time", "--knock", minimum=0.0),
                         _value(parts[1], "angular_rate", "--knock"), link - 1))
    return tuple(out)


def _jumps(items, n: int):
    from .motion import Jump
    out = []
    for text in items or []:
        parts = text.split(":")
        if len(parts) not in (2, 3) or not any(p.strip() for p in parts[1:]):
            raise _bad("--set", text, "use TIME:ANGLES[:RATES] with comma-separated values "
                                      "per link, e.g. 3s:10deg,0deg or 3s::0,0")
        angles = _list(parts[1], "angle", "--set", n) if parts[1].strip() else None
        rates = (_list(parts[2], "angular_rate", "--set", n)
                 if len(parts) == 3 and parts[2].strip() else None)
        out.append(Jump(_value(parts[0], "time", "--set", minimum=0.0), angles, rates))
    return tuple(out)


def _profile(args, rig):
    from .speed import ramp_profile, table_profile
    if args.ramp and args.speed_table:
        raise _bad("--ramp", " ".join(args.ramp), "give ramps or --speed-table, not both")
    if args.speed_table:
        return _read_table(args.speed_table, table_profile)
    if not args.ramp:
        if args.start_speed is not None:
            raise _bad("--start-speed", args.start_speed, "it sets where the first --ramp "
                       "starts: give a --ramp too")
        return None
    start = (rig.drive.speed_rpm if args.start_speed is None else
             _value(args.start_speed, "speed", "--start-speed", minimum=0.0))
    ramps = []
    for text in args.ramp:
        parts = text.split(":")
        if len(parts) != 3:
            raise _bad("--ramp", text, "use AT:OVER:TO, e.g. 1s:2s:3000rpm or 6s:1s:stop")
        to = 0.0 if parts[2].strip().lower() == "stop" else _value(parts[2], "speed", "--ramp",
                                                                   minimum=0.0)
        ramps.append((_value(parts[0], "time", "--ramp", minimum=0.0),
                      _value(parts[1], "time", "--ramp", above=0.0), to))
    return ramp_profile(start, ramps, where="--ramp")


def _read_table(path: str, table_profile):
    """A CSV of time, speed rows (a header row is skipped); cells may carry units."""
    try:
        with open(path, encoding="utf-8", newline="") as fh:
            rows = [r for r in csv.reader(fh) if r and any(c.strip() for c in r)]
    except OSError as exc:
        raise RigError([Problem("--speed-table", f"cannot read {path!r}: {exc.strerror}")]) \
            from None
    times, speeds = [], []
    for k, row in enumerate(rows):
        try:
            t, v = parse_quantity(row[0].strip(), "time"), parse_quantity(row[1].strip(), "speed")
        except (UnitError, IndexError) as exc:
            if k == 0:
                continue  # a header
            raise _bad("--speed-table", ",".join(row), f"row {k + 1} must be TIME,SPEED "
                                                       f"(e.g. 0.5,1800 or 0.5s,30Hz): {exc}")
        times.append(t)
        speeds.append(v)
    return table_profile(times, speeds, where="--speed-table")


def _scenario(args, rig):
    from .motion import Scenario
    n = rig.n_links
    duration = _value(args.duration, "time", "--duration", above=0.0)
    fps = _value(args.fps, "plain", "--fps", minimum=0.0)
    angles = _per_link(args.angle, "angle", "--angle", n, 0.0)
    if angles is None and args.hanging:
        angles = (math.pi,) * n
    return Scenario(
        duration_s=duration, angles_rad=angles, rates_rad_s=_per_link(args.rate, "angular_rate",
                                                                      "--rate", n, 0.0),
        knocks=_knocks(args.knock, n), jumps=_jumps(args.set, n), profile=_profile(args, rig),
        frame_rate_hz=fps, strobe_phase_rad=_value(args.strobe_phase, "angle", "--strobe-phase"),
        reference="hanging" if args.hanging else "inverted",
        fall_band_rad=_value(args.fall_band, "angle", "--fall-band", above=0.0),
        recover_band_rad=_value(args.recover_band, "angle", "--recover-band", above=0.0),
        settle_s=_value(args.settle, "time", "--settle", minimum=0.0),
        rtol=_value(args.rtol, "plain", "--rtol", above=0.0),
        atol=_value(args.rtol, "plain", "--rtol", above=0.0))


def _rename(exc: RigError) -> RigError:
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


def _rig(args):
    cli = _cli()
    rig, warnings = cli._load(args.rig)
    return cli._override(rig, args), warnings


def _write(path: str, text: str) -> None:
    with open(path, "w", encoding="utf-8", newline="") as fh:
        fh.write(text)


def motion_csv(motion, m) -> str:
    """Frames as CSV: time, speed, pivot height, angles, rates, link ends (m), energy."""
    from io import StringIO
    from .dynamics import points_m
    n = m.n
    buf = StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(["t_s", "speed_rpm", "pivot_y_m"] + [f"angle{i + 1}_rad" for i in range(n)]
               + [f"rate{i + 1}_rad_s" for i in range(n)]
               + [c for i in range(n) for c in (f"x{i + 1}_m", f"y{i + 1}_m")] + ["energy_J"])
    for k, t in enumerate(motion.t_s):
        q = motion.angles_rad[k]
        ends = points_m(m, q, motion.pivot_y_m[k])[1:]
        w.writerow([f"{t:.10g}", f"{motion.speed_rpm[k]:.10g}", f"{motion.pivot_y_m[k]:.10g}"]
                   + [f"{x:.10g}" for x in q] + [f"{x:.10g}" for x in motion.rates_rad_s[k]]
                   + [f"{c:.10g}" for p in ends for c in p] + [f"{motion.energy_J[k]:.10g}"])
    return buf.getvalue()


def _cmd_simulate(args) -> int:
    from .dynamics import model
    from .motion import simulate
    from .motion_report import motion_text
    from .plots import motion_svg
    from .report import jsonable
    rig, _ = _rig(args)
    scenario = _scenario(args, rig)
    m = model(rig)
    try:
        motion = simulate(rig, scenario, chain_model=m)
    except RigError as exc:
        raise _rename(exc) from None
    if args.output:
        _write(args.output, motion_csv(motion, m))
    if args.svg:
        if not motion.t_s:
            raise _bad("--svg", args.svg, "a plot needs frames: give --fps above 0")
        _write(args.svg, motion_svg(motion, rig.title or "Link angles")[0])
    if args.json:
        summary = {"end_t_s": motion.end_t_s, "end_state": list(motion.end_state),
                   "fell": motion.fell, "turns": list(motion.turns),
                   "events": [e.as_dict() for e in motion.events],
                   "strobe": {"t_s": list(motion.strobe_t_s),
                              "angles_rad": [list(q) for q in motion.strobe_angles_rad],
                              "rates_rad_s": [list(w) for w in motion.strobe_rates_rad_s]},
                   "frames": len(motion.t_s), "success": motion.success,
                   "message": motion.message, "work": motion.work}
        print(json.dumps(jsonable(summary), indent=2, allow_nan=False))
    else:
        sys.stdout.write(motion_text(motion, rig.title))
        for name, path in (("frames", args.output), ("plot", args.svg)):
            if path:
                print(f"wrote {name} to {path}")
    return 0 if motion.success else 1


def _progress(enabled: bool):
    """Progress on standard error (a terminal only), overwriting one line."""
    def show(fraction: float, words: str) -> None:
        if enabled:
            print(f"\r{words}: {fraction * 100:5.1f}%", end="", file=sys.stderr, flush=True)
    show.enabled = enabled
    return show


def _cmd_tolerance(args) -> int:
    from .motion_report import tolerance_text
    from .plots import basin_svg
    from .report import jsonable
    from .basin import basin_steps
    from .tolerance import tolerance_steps
    rig, _ = _rig(args)
    show = _progress(not args.json and sys.stderr.isatty())
    size = args.size
    if not 3 <= size <= 401:
        raise _bad("--size", str(size), "use 3 to 401 points per axis")
    if not 0 <= args.validate <= size * size:
        raise _bad("--validate", str(args.validate), f"use 0 to {size * size} points")
    if not 1 <= args.refine <= 16:
        raise _bad("--refine", str(args.refine), "use 1 to 16 cells per grid spacing")
    steps = tolerance_steps(rig)
    try:
        while True:
            show(next(steps), "tolerance")
    except StopIteration as stop:
        tol = stop.value
    result = tol.as_dict()
    basin = None
    if args.map or args.svg:
        for fraction, last in basin_steps(rig, size=size, refine=args.refine,
                                          validate=args.validate):
            show(fraction, "basin map")
        basin = last.as_dict()
        if args.svg:
            _write(args.svg, basin_svg(last, knock_rad_s=tol.max_knock_rad_s or None,
                                       release_rad=tol.max_release_angle_rad or None)[0])
    if show.enabled:
        print(file=sys.stderr)
    if args.json:
        print(json.dumps(jsonable({**result, "basin": basin}), indent=2, allow_nan=False))
    else:
        sys.stdout.write(tolerance_text(result, basin))
    return 0


def _cmd_loads(args) -> int:
    from .loads import loads
    from .motion_report import loads_text
    from .plots import loads_svg
    from .report import jsonable
    rig, _ = _rig(args)
    knock = _value(args.knock, "angular_rate", "--knock") if args.knock else 0.0
    if not 1 <= args.cycles <= 1000:
        raise _bad("--cycles", str(args.cycles), "use 1 to 1000 cycles")
    result = loads(rig, equilibrium="hanging" if args.hanging else "inverted",
                   knock_rad_s=knock, cycles=args.cycles)
    if args.svg:
        _write(args.svg, loads_svg(result)[0])
    if args.json:
        print(json.dumps(jsonable(result), indent=2, allow_nan=False))
    else:
        sys.stdout.write(loads_text(result))
    return 0


def _common(p: argparse.ArgumentParser) -> None:
    p.add_argument("rig", nargs="?", metavar="RIG")
    p.add_argument("--speed", help="move the operating point's speed, e.g. 1800rpm")
    p.add_argument("--stroke", help="move the operating point's stroke, e.g. 25mm")
    p.add_argument("--json", action="store_true", help="print the result as JSON")


def add_commands(sub) -> None:
    """Add ``simulate``, ``tolerance`` and ``loads`` to an argparse subparsers object."""
    s = sub.add_parser("simulate", help="nonlinear motion with knocks, jumps and speed ramps")
    _common(s)
    s.add_argument("--duration", default="5s", help="rig time to simulate (5s)")
    s.add_argument("--angle", action="append", help="initial angle from upward vertical, one "
                   "per link in order (default: the reference position), e.g. 10deg")
    s.add_argument("--rate", action="append", help="initial angular rate per link, e.g. 1rad/s")
    s.add_argument("--knock", action="append", metavar="T:RATE[:LINK]",
                   help="rate step at a time, e.g. 2s:3rad/s (link 1) or 2s:3rad/s:2")
    s.add_argument("--set", action="append", metavar="T:ANGLES[:RATES]",
                   help="set the state at a time, e.g. 3s:10deg,0deg or 3s::0,0")
    s.add_argument("--ramp", action="append", metavar="AT:OVER:TO",
                   help="speed ramp, e.g. 1s:2s:3000rpm; a stop: 6s:1s:stop")
    s.add_argument("--start-speed", help="the speed until the first ramp, e.g. 0rpm for a "
                   "run-up from rest (default: the rig's)")
    s.add_argument("--speed-table", metavar="CSV", help="measured speed: rows TIME,SPEED")
    s.add_argument("--fps", default="60", help="frames per second written (60)")
    s.add_argument("--strobe-phase", default="0", help="drive phase of the once-per-cycle "
                   "samples (0)")
    s.add_argument("--hanging", action="store_true", help="start from and measure events "
                   "about the hanging position")
    s.add_argument("--fall-band", default="90deg", help="'fell' when an angle leaves this band "
                   "about the reference (90deg)")
    s.add_argument("--recover-band", default="0.2rad", help="'recovered' when all angles are "
                   "back within this band ... (0.2rad)")
    s.add_argument("--settle", default="1s", help="... for this long (1s)")
    s.add_argument("--rtol", default="1e-8", help="integration tolerance (1e-8)")
    s.add_argument("-o", "--output", metavar="CSV", help="write the frames to this CSV file")
    s.add_argument("--svg", help="write a plot of the angles to this SVG file")
    s.set_defaults(func=_cmd_simulate)
    t = sub.add_parser("tolerance", help="largest knock and release angle that recover; "
                                         "basin map")
    _common(t)
    t.add_argument("--map", action="store_true", help="also map recovery over start angle x "
                   "rate (cell-to-cell mapping)")
    t.add_argument("--size", type=int, default=41, help="map points per axis (41)")
    t.add_argument("--refine", type=int, default=2, help="cells per map spacing (2)")
    t.add_argument("--validate", type=int, default=16, help="map points checked by full "
                   "simulation (16)")
    t.add_argument("--svg", help="write the basin map to this SVG file (implies --map)")
    t.set_defaults(func=_cmd_tolerance)
    ld = sub.add_parser("loads", help="drive force, power and link loads over a cycle")
    _common(ld)
    ld.add_argument("--hanging", action="store_true", help="the pendulum hanging, not inverted")
    ld.add_argument("--knock", help="knock the first link first, e.g. 5rad/s: loads after "
                    "max(10 s, 20 slow periods)")
    ld.add_argument("--cycles", type=int, default=1, help="drive cycles in the window (1)")
    ld.add_argument("--svg", help="write the loads over the cycle to this SVG file")
    ld.set_defaults(func=_cmd_loads)


def parser() -> argparse.ArgumentParser:
    """A ``shakestill`` parser with only the motion commands (tests, standalone use)."""
    p = argparse.ArgumentParser(prog="shakestill")
    add_commands(p.add_subparsers(dest="command", required=True))
    return p
