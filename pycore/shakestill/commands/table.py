"""The one table the front ends read: CLI commands and bridge ops, registered by subject.

Each subject module of this package calls ``command`` and ``op`` at import
time; ``cli`` builds its parser from ``COMMANDS`` (in registration order) and
``bridge`` answers from ``OPS``. Adding a command or an op touches its
subject's module only.
"""

from __future__ import annotations

import argparse
from dataclasses import dataclass
from typing import Callable


@dataclass(frozen=True)
class Command:
    """One ``shakestill`` subcommand: its help line, its options and what it runs."""

    name: str
    help: str
    arguments: Callable[[argparse.ArgumentParser], None]
    run: Callable[[argparse.Namespace], int]


COMMANDS: dict[str, Command] = {}
OPS: dict[str, Callable[[dict], dict]] = {}


def _register(table: dict, what: str, name: str, make=lambda fn: fn):
    """A decorator that files ``make(fn)`` under ``name`` in ``table``, once."""
    def register(fn):
        if name in table:
            raise ValueError(f"{what} {name!r} is registered twice")
        table[name] = make(fn)
        return fn
    return register


def command(name: str, help: str, arguments: Callable[[argparse.ArgumentParser], None]):
    """Register the decorated ``run(args) -> exit code`` as subcommand ``name``."""
    return _register(COMMANDS, "command", name, lambda run: Command(name, help, arguments, run))


def op(name: str):
    """Register the decorated ``handler(request) -> reply fields`` as bridge op ``name``."""
    return _register(OPS, "op", name)


JOB_KINDS: dict[str, Callable] = {}


def job_kind(name: str):
    """Register the decorated ``steps(rig, warnings, request)`` generator as a motion job kind:
    it yields (fraction, partial reply) and its last reply (fraction 1) is the result."""
    return _register(JOB_KINDS, "job kind", name)
