"""SVG primitives shared by every drawing of the core: escaping, number text, ink, ticks.

The drawings (schematic, chart, plots) are one renderer for the CLI and the
page; all user text passes through ``esc``; each drawing carries a <title>
for screen readers.
"""

from __future__ import annotations

import math
from xml.sax.saxutils import escape

INK = "#1d2a33"
ROD = "#3f6e8c"
BOB = "#c2571a"
DRIVE = "#6b7780"


def esc(text: str) -> str:
    return escape(str(text), {'"': "&quot;"})


def num(x: float) -> str:
    """A coordinate as short text: two decimals, trailing zeros dropped."""
    return f"{x:.2f}".rstrip("0").rstrip(".")


def nice_ticks(lo: float, hi: float, count: int = 6) -> list[float]:
    """Round tick values covering [lo, hi]."""
    if hi <= lo:
        return [lo]
    raw = (hi - lo) / count
    mag = 10 ** math.floor(math.log10(raw))
    step = min((m * mag for m in (1, 2, 2.5, 5, 10) if m * mag >= raw), default=10 * mag)
    first = math.ceil(lo / step) * step
    ticks, v = [], first
    while v <= hi + 1e-12 * step:
        ticks.append(round(v, 12))
        v += step
    return ticks
