"""The commands and bridge ops of every subject, registered into one table (``table``).

Subjects: ``stability`` (check, chart, runup, point, chart jobs), ``planning``
(plan, the plan job), ``lean`` (the lean chart of a drive off vertical), ``motion``
(simulate, loads, motion jobs), ``tolerance`` (tolerance, basin), ``fit``
(fit), ``rigs`` (demo, link, validate, schematic, share links, version).
``common`` holds what they share (reading rigs, options and request fields);
``jobs`` steps long work. The front ends ``cli`` and ``bridge`` read
``COMMANDS`` and ``OPS`` and import nothing else from here.
"""

# Each subject registers itself on import; this order is the order of `shakestill --help`.
from . import stability, planning, lean, motion, tolerance, fit, rigs  # noqa: F401,I001
from .table import COMMANDS, JOB_KINDS, OPS

__all__ = ["COMMANDS", "JOB_KINDS", "OPS"]
