"""The ``fit`` command of the ``shakestill`` command line: fit rig numbers to a logged run.

    shakestill fit [RIG] --log run.csv [--fit damping,friction] [--zero hanging]
                   [--json] [-o fitted-rig.json] [--svg fit.svg]
"""

from __future__ import annotations

import json
import sys

from .rig import Problem, RigError


def _cmd_fit(args) -> int:
    from .fit import fit_dict, fit_steps
    from .logfile import drive_stopped, read_angle_log
    from .motion_cli import _progress, _rig, _write
    from .motion_report import fit_text
    from .plots import fit_svg
    from .report import jsonable
    from .rig import save_rig
    rig, _ = _rig(args)
    try:
        with open(args.log, encoding="utf-8-sig") as fh:
            text = fh.read()
    except OSError as exc:
        raise RigError([Problem("--log", f"{args.log!r} cannot be read: {exc.strerror}")]) \
            from None
    if not 1 <= args.iterations <= 200:
        raise RigError([Problem("--iterations", f"{args.iterations!r} is not allowed: 1 to 200")])
    log = read_angle_log(text, rig.n_links, reference=args.zero)
    if args.stopped:
        log = drive_stopped(log, "--stopped")
    names = [n.strip() for n in args.fit.split(",") if n.strip()]
    show = _progress(not args.json and sys.stderr.isatty())
    try:
        steps = fit_steps(rig, log, names, max_iterations=args.iterations)
        while True:
            fraction, words = next(steps)
            show(fraction, "fit")
    except StopIteration as stop:
        res = stop.value
    except ValueError as exc:
        where, _, why = str(exc).partition(": ")
        raise RigError([Problem("--fit" if where == "parameters" else "--log", why)]) from None
    if show.enabled:
        print(file=sys.stderr)
    result = fit_dict(res)
    if args.output:
        save_rig(res.rig, args.output)
    if args.svg:
        _write(args.svg, fit_svg(res, f"{rig.title or 'Rig'}: logged and fitted angles")[0])
    if args.json:
        print(json.dumps(jsonable(result), indent=2, allow_nan=False))
    else:
        sys.stdout.write(fit_text(result))
        if args.output:
            print(f"wrote the fitted rig to {args.output}")
    return 0 if res.converged else 1


def add_commands(sub) -> None:
    """Add ``fit`` to an argparse subparsers object."""
    f = sub.add_parser("fit", help="fit damping, friction or inertia to a run logged on the rig")
    f.add_argument("rig", nargs="?", metavar="RIG")
    f.add_argument("--log", required=True, metavar="CSV", help="the logged run: a header row "
                   "such as t_s,angle_deg[,speed_rpm] (one angle column per link), then samples")
    f.add_argument("--fit", default="damping", help="numbers to fit, comma-separated: damping, "
                   "friction, inertia (every link), or links[i].joint_damping_N_m_s ... (damping)")
    f.add_argument("--zero", choices=("hanging", "inverted"), default="hanging",
                   help="where the log's angles are zero (hanging)")
    f.add_argument("--iterations", type=int, default=30, help="most iterations (30)")
    f.add_argument("--stopped", action="store_true", help="the drive stood still during the "
                   "run (a free decay), when the log has no speed column")
    f.add_argument("--speed", help="the drive speed during the run when the log has no speed "
                   "column, e.g. 1800rpm (default: the rig's)")
    f.add_argument("--stroke", help="the stroke during the run, e.g. 25mm")
    f.add_argument("--json", action="store_true", help="print the result as JSON")
    f.add_argument("-o", "--output", metavar="RIG", help="write the fitted rig file here")
    f.add_argument("--svg", help="write a plot of logged and fitted angles to this SVG file")
    f.set_defaults(func=_cmd_fit)
