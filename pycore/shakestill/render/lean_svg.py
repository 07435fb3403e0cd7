"""The lean chart as one SVG: lean against the drive's tilt above, against speed below.

Both panels are ``plots.line_plot`` pictures placed in one outer picture; the axes of each
are returned with the vertical offset of its panel, so the page can read a cursor off them.
Only the held (stable) orbits are drawn: a curve stops where its orbit is lost or unstable.
"""

from __future__ import annotations

from .plots import line_plot
from .shown import text
from .svg import INK, esc

PANEL_HEIGHT = 300  # px per panel
WIDTH = 720


def _series(chart: dict, axis_key: str, by: str, n: int) -> list:
    out = []
    for name in ("inverted", "hanging"):
        curve = chart[by][name]
        for i in range(n):
            pts = [(x, lean[i]) for x, lean in zip(chart[axis_key], curve["lean_deg"])
                   if lean is not None]
            if pts:
                label = name if n == 1 else f"{name}, link {i + 1}"
                out.append((label, [p[0] for p in pts], [p[1] for p in pts]))
    return out


def _estimates(chart: dict) -> list:
    """The averaging's straight lines (one link only: it describes one equivalent link)."""
    out = []
    for name in ("inverted", "hanging"):
        slope = chart["estimate"][name]
        if slope is not None:
            xs = [chart["tilt_deg"][0], chart["tilt_deg"][-1]]
            out.append((f"{name} est.", xs, [slope * x for x in xs]))
    return out


def lean_svg(chart: dict, units: str = "metric") -> tuple[str, dict]:
    """(svg, {"tilt": axes, "speed": axes}) of a ``motion.lean_chart`` result; the stroke in
    the captions in ``units``."""
    n = chart["links"]
    stroke = text(chart["stroke_m"], "length", units, ".4g")
    panels, axes = [], {}
    tilt_series = _series(chart, "tilt_deg", "by_tilt", n)
    if n == 1:
        tilt_series += _estimates(chart)
    op_tilt = chart["operating_tilt_deg"]
    captions = ("held orbits; est.: Kapitza's averaging" if n == 1 else "held orbits",
                f"at {chart['speed_tilt_deg']:g} deg tilt, stroke {stroke}")
    specs = (
        ("tilt", tilt_series, "Mean lean of the held orbit against the drive's tilt",
         "drive axis tilt (deg)", "deg", [(op_tilt, "knock", f"this rig: {op_tilt:g} deg")]),
        ("speed", _series(chart, "speed_rpm", "by_speed", n),
         f"Mean lean against speed at {chart['speed_tilt_deg']:g} deg of tilt, stroke "
         f"{stroke}", "drive speed (rpm)", "rpm",
         [(chart["operating_speed_rpm"], "knock", "operating speed")]),
    )
    for k, (key, series, title, x_label, x_unit, markers) in enumerate(specs):
        top = k * PANEL_HEIGHT
        if not series:
            panels.append(f'<text x="{WIDTH / 2}" y="{top + PANEL_HEIGHT / 2}" font-size="13" '
                          f'text-anchor="middle">{esc(title)}: no held orbit on this axis</text>')
            continue
        svg, ax = line_plot(series, title=title, x_label=x_label,
                            y_label="mean lean (deg)", x_unit=x_unit, y_unit="deg",
                            markers=markers, width_px=WIDTH, height_px=PANEL_HEIGHT,
                            cls=f"lean-{key}")
        panels.append(svg.replace("<svg ", f'<svg x="0" y="{top}" ', 1))
        panels.append(f'<text x="{WIDTH - 18}" y="{top + 14}" font-size="11" '
                      f'text-anchor="end" fill="{INK}">{esc(captions[k])}</text>')
        axes[key] = dict(ax, offset_y_px=top)
    height = PANEL_HEIGHT * len(specs)
    head = (f'<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 {WIDTH} {height}" '
            f'width="{WIDTH}" height="{height}" role="img" class="lean-chart" '
            'font-family="system-ui, sans-serif"><title>Lean chart: the held orbit\'s mean '
            "lean against tilt and speed</title>")
    return head + "".join(panels) + "</svg>", axes
