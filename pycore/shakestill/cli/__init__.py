"""The ``shakestill`` command line: a parser built from the commands' table.

Every subcommand is registered by its subject in ``commands``; bad input is
a ``RigError`` that ``main`` prints with each field or option named, exit 2.
"""

from __future__ import annotations

import argparse
import os
import re
import sys

from ..model.version import VERSION as __version__
from ..commands import COMMANDS
from ..model.rig import RigError


def parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(prog="shakestill", description=(
        "Plan and check rigs with a pendulum on a vertically driven pivot. "
        "RIG is a rig file, '-' for standard input, a share link, or omitted for the demo rig."))
    p.add_argument("--version", action="version", version=f"shakestill {__version__}")
    sub = p.add_subparsers(dest="command", required=True)
    for cmd in COMMANDS.values():
        c = sub.add_parser(cmd.name, help=cmd.help)
        cmd.arguments(c)
        c.set_defaults(func=cmd.run)
    return p


NEGATIVE = re.compile(r"-\.?\d")  # "-5mm", "-10deg", "-.5in": a value, never an option


def glue_negative_values(argv: list[str]) -> list[str]:
    """``--angle -10deg`` as ``--angle=-10deg``: argparse takes a token that starts with "-"
    and is not a bare number for an option, and says "expected one argument"."""
    out: list[str] = []
    for token in argv:
        if (out and NEGATIVE.match(token) and out[-1].startswith("--") and "=" not in out[-1]):
            out[-1] = f"{out[-1]}={token}"
        else:
            out.append(token)
    return out


def main(argv=None) -> int:
    args = parser().parse_args(glue_negative_values(sys.argv[1:] if argv is None else list(argv)))
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
