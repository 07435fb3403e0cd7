"""The ``shakestill`` command line."""

from __future__ import annotations

import argparse
import json
import os
import sys

from . import __version__, share
from .check import check
from .demo import demo_rig_dict
from .report import jsonable, report_text, runup_text
from .rig import Problem, RigError, dumps_rig, loads_rig, rig_from_dict, with_operating_point
from .units import UnitError, parse_quantity


def _load(source: str | None):
    """A rig from a path, '-' (standard input), a share link, or the demo when absent."""
    if source is None or source == "demo":
        return rig_from_dict(demo_rig_dict(), with_warnings=True)
    if source.startswith(share.PREFIX) or f"#{share.PREFIX}" in source:
        data, _ = share.decode(source)
        return rig_from_dict(data, with_warnings=True)
    if source == "-":
        return loads_rig(sys.stdin.read(), with_warnings=True)
    try:
        with open(source, encoding="utf-8") as fh:
            text = fh.read()
    except OSError as exc:
        raise RigError([Problem("(file)", f"cannot read {source!r}: {exc.strerror}")]) from None
    return loads_rig(text, with_warnings=True)


def _override(rig, args):
    problems = []
    speed = stroke = None
    if args.speed is not None:
        try:
            speed = parse_quantity(args.speed, "speed")
            if not speed > 0:
                raise UnitError("it must be greater than 0 rpm")
        except UnitError as exc:
            problems.append(Problem("--speed", f"{args.speed!r} is not allowed: {exc}"))
    if args.stroke is not None:
        try:
            stroke = parse_quantity(args.stroke, "length")
            if not stroke >= 0:
                raise UnitError("it must be at least 0 m")
        except UnitError as exc:
            problems.append(Problem("--stroke", f"{args.stroke!r} is not allowed: {exc}"))
    if problems:
        raise RigError(problems)
    if speed is None and stroke is None:
        return rig
    # re-validate so that a crank stroke beyond the rod is caught with its field named
    data = json.loads(dumps_rig(with_operating_point(rig, speed_rpm=speed, stroke_m=stroke)))
    return rig_from_dict(data, with_warnings=True)[0]


def _cmd_check(args) -> int:
    rig, warnings = _load(args.rig)
    rig = _override(rig, args)
    result = check(rig)
    if args.json:
        print(json.dumps(jsonable(result), indent=2, allow_nan=False))
    else:
        sys.stdout.write(report_text(result, warnings))
    return 0


def _quantity(text: str | None, kind: str, option: str, *, minimum: float | None = None,
              above: float | None = None):
    """An option's value in SI, or a RigError naming the option and what is allowed."""
    if text is None:
        return None
    try:
        value = parse_quantity(text, kind)
    except UnitError as exc:
        raise RigError([Problem(option, f"{text!r} is not allowed: {exc}")]) from None
    if above is not None and not value > above:
        raise RigError([Problem(option, f"{text!r} is not allowed: it must be above {above:g}")])
    if minimum is not None and not value >= minimum:
        raise RigError([Problem(option, f"{text!r} is not allowed: it must be at least "
                                        f"{minimum:g}")])
    return value


def _cmd_chart(args) -> int:
    from .chart import chart, chart_dict, render
    rig, _ = _load(args.rig)
    rig = _override(rig, args)
    if args.rows is not None and not 2 <= args.rows <= 2000:
        raise RigError([Problem("--rows", f"{args.rows} is not allowed: use 2 to 2000 rows")])
    c = chart(rig, rows=args.rows, y_axis=args.y_axis)
    svg, axes = render(c, rig)
    if args.output:
        with open(args.output, "w", encoding="utf-8") as fh:
            fh.write(svg)
    if args.json:
        print(json.dumps(jsonable({**chart_dict(c), "axes": axes}), allow_nan=False))
    elif not args.output:
        sys.stdout.write(svg + "\n")
    else:
        print(f"wrote {args.output}: {len(c.rows)} rows, {c.evaluations} stability evaluations")
    return 0


def _cmd_runup(args) -> int:
    from .runup import runup
    rig, _ = _load(args.rig)
    rig = _override(rig, args)
    rate = _quantity(args.rate, "rate", "--rate", above=0.0)
    start = _quantity(args.start, "speed", "--from", minimum=0.0) or 0.0
    end = _quantity(args.to, "speed", "--to", above=0.0)
    factor = _quantity(args.factor, "plain", "--factor", above=1.0) or 10.0
    result = runup(rig, rate_rpm_s=rate, start_rpm=start, end_rpm=end, factor=factor)
    if args.json:
        print(json.dumps(jsonable(result), indent=2, allow_nan=False))
    else:
        sys.stdout.write(runup_text(result))
    return 0


def _cmd_demo(args) -> int:
    text = json.dumps(demo_rig_dict(), indent=2) + "\n"
    if args.output:
        with open(args.output, "w", encoding="utf-8") as fh:
            fh.write(text)
    else:
        sys.stdout.write(text)
    return 0


def _cmd_link(args) -> int:
    rig, _ = _load(args.rig)
    print("#" + share.encode(json.loads(dumps_rig(rig))))
    return 0


def parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(prog="shakestill", description=(
        "Plan and check rigs with a pendulum on a vertically driven pivot. "
        "RIG is a rig file, '-' for standard input, a share link, or omitted for the demo rig."))
    p.add_argument("--version", action="version", version=f"shakestill {__version__}")
    sub = p.add_subparsers(dest="command", required=True)
    c = sub.add_parser("check", help="stability of both equilibria at the operating point")
    c.add_argument("rig", nargs="?", metavar="RIG")
    c.add_argument("--json", action="store_true", help="print the result as JSON")
    c.add_argument("--speed", help="override the drive speed, e.g. 1800rpm or 30Hz")
    c.add_argument("--stroke", help="override the stroke, e.g. 25mm")
    c.set_defaults(func=_cmd_check)
    d = sub.add_parser("demo", help="print the built-in demo rig file")
    d.add_argument("-o", "--output", help="write it to this file")
    d.set_defaults(func=_cmd_demo)
    ch = sub.add_parser("chart", help="stability chart over speed x stroke (SVG, or --json)")
    ch.add_argument("rig", nargs="?", metavar="RIG")
    ch.add_argument("-o", "--output", help="write the SVG to this file")
    ch.add_argument("--json", action="store_true", help="print rows, edges, boundaries as JSON")
    ch.add_argument("--rows", type=int, help="rows across the y range (120; 30 for several links)")
    ch.add_argument("--y-axis", choices=("stroke", "accel"), default="stroke",
                    help="stroke, or peak pivot acceleration")
    ch.add_argument("--speed", help="move the operating point's speed, e.g. 1800rpm")
    ch.add_argument("--stroke", help="move the operating point's stroke, e.g. 25mm")
    ch.set_defaults(func=_cmd_chart)
    ru = sub.add_parser("runup", help="resonances crossed while the speed ramps")
    ru.add_argument("rig", nargs="?", metavar="RIG")
    ru.add_argument("--rate", required=True, help="ramp rate, e.g. 200rpm/s")
    ru.add_argument("--from", dest="start", help="start speed (default 0: from rest)")
    ru.add_argument("--to", help="end speed (default: the operating speed)")
    ru.add_argument("--factor", help="largest acceptable growth of a disturbance (10)")
    ru.add_argument("--json", action="store_true", help="print the result as JSON")
    ru.add_argument("--speed", help="move the operating point's speed, e.g. 1800rpm")
    ru.add_argument("--stroke", help="move the operating point's stroke, e.g. 25mm")
    ru.set_defaults(func=_cmd_runup)
    from .motion_cli import add_commands
    add_commands(sub)  # simulate, tolerance, loads
    from .fit_cli import add_commands as add_fit
    add_fit(sub)
    link = sub.add_parser("link", help="print a share-link fragment for a rig")
    link.add_argument("rig", nargs="?", metavar="RIG")
    link.set_defaults(func=_cmd_link)
    return p


def main(argv=None) -> int:
    args = parser().parse_args(argv)
    try:
        return args.func(args)
    except RigError as exc:
        print(f"shakestill {args.command}: cannot go on:", file=sys.stderr)
        for problem in exc.problems:
            print(f"  {problem.path}: {problem.message}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        return 130
    except BrokenPipeError:  # output piped into a reader that stopped early (| head)
        sys.stdout = open(os.devnull, "w")
        return 0


if __name__ == "__main__":
    sys.exit(main())
