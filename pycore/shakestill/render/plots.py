"""SVG plots of motion results: angles against time, loads over a cycle, the basin map.

Each function returns ``(svg_text, axes)``; ``axes`` maps values to pixels
linearly (px = px_min + (v - min) / (max - min) * (px_max - px_min)), so the
page can add a cursor read-out without computing anything itself. All text
passes through ``svg.esc``.
"""

from __future__ import annotations

import math

from ..fit.logfile import REFERENCE_ANGLE
from .shown import shown
from .svg import INK, esc, nice_ticks

LINE_COLOURS = ("#2f6690", "#c2571a", "#5b8e3e", "#8a4f9e")  # one per link / series
EVENT_COLOURS = {"fell": "#b0122b", "recovered": "#2e7d32", "rotation": "#6a1b9a",
                 "knock": "#555", "jump": "#555", "stick": "#8d6e00", "slip": "#8d6e00"}
RECOVERS, FALLS, UNKNOWN = "#7fb07f", "#e7dccb", "#f7f7f7"  # basin map cells
MARGIN = (62, 30, 18, 46)  # left, top, right, bottom (px)
MAX_POINTS = 2000  # points drawn per line; longer series are thinned evenly


def _num(x: float) -> str:
    return f"{x:.2f}".rstrip("0").rstrip(".")


class _Axes:
    """A rectangle with linear x and y scales, ticks and labels."""

    def __init__(self, x_range, y_range, width, height, x_label, y_label):
        left, top, right, bottom = MARGIN
        self.left, self.top = left, top
        self.right, self.bottom = width - right, height - bottom
        self.x0, self.x1 = x_range
        self.y0, self.y1 = y_range
        self.width, self.height = width, height
        self.labels = (x_label, y_label)

    def px(self, x: float) -> float:
        return self.left + (x - self.x0) / ((self.x1 - self.x0) or 1.0) * (self.right - self.left)

    def py(self, y: float) -> float:
        return self.bottom - (y - self.y0) / ((self.y1 - self.y0) or 1.0) * (self.bottom - self.top)

    def mapping(self, x_unit: str, y_unit: str) -> dict:
        return {"x": {"min": self.x0, "max": self.x1, "px_min": self.left,
                      "px_max": self.right, "unit": x_unit},
                "y": {"min": self.y0, "max": self.y1, "px_min": self.bottom,
                      "px_max": self.top, "unit": y_unit},
                "width_px": self.width, "height_px": self.height}

    def frame(self) -> list[str]:
        out = [f'<rect x="{self.left}" y="{self.top}" width="{self.right - self.left}" '
               f'height="{self.bottom - self.top}" fill="none" stroke="{INK}"/>']
        for v in nice_ticks(self.x0, self.x1):
            x = _num(self.px(v))
            out.append(f'<path d="M{x} {self.bottom}v5" stroke="{INK}"/><text x="{x}" '
                       f'y="{self.bottom + 17}" font-size="11" text-anchor="middle" '
                       f'fill="{INK}">{v:g}</text>')
        for v in nice_ticks(self.y0, self.y1):
            y = _num(self.py(v))
            out.append(f'<path d="M{self.left - 5} {y}h5" stroke="{INK}"/><text '
                       f'x="{self.left - 8}" y="{_num(self.py(v) + 4)}" font-size="11" '
                       f'text-anchor="end" fill="{INK}">{v:g}</text>')
        cx, cy = (self.left + self.right) / 2, (self.top + self.bottom) / 2
        out.append(f'<text x="{_num(cx)}" y="{self.height - 10}" font-size="12" '
                   f'text-anchor="middle" fill="{INK}">{esc(self.labels[0])}</text>')
        out.append(f'<text transform="translate(15 {_num(cy)}) rotate(-90)" font-size="12" '
                   f'text-anchor="middle" fill="{INK}">{esc(self.labels[1])}</text>')
        return out

    def line(self, xs, ys, colour: str, label: str) -> str:
        stride = max(1, len(xs) // MAX_POINTS)
        pts = " ".join(f"{_num(self.px(x))},{_num(self.py(y))}"
                       for x, y in list(zip(xs, ys))[::stride])
        return (f'<polyline points="{pts}" fill="none" stroke="{colour}" stroke-width="1.4">'
                f"<title>{esc(label)}</title></polyline>")


def _open(width: int, height: int, cls: str, title: str) -> list[str]:
    return [f'<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 {width} {height}" '
            f'width="{width}" height="{height}" role="img" class="{cls}" '
            'font-family="system-ui, sans-serif">', f"<title>{esc(title)}</title>"]


def _range(values, pad: float = 0.05, min_span: float = 0.0) -> tuple[float, float]:
    lo, hi = min(values), max(values)
    if hi - lo < 1e-12 * max(1.0, abs(hi)):
        lo, hi = lo - 1.0, hi + 1.0
    elif hi - lo < min_span:  # a steady value is drawn flat, not its rounding noise as waves
        mid = 0.5 * (lo + hi)
        lo, hi = mid - 0.5 * min_span, mid + 0.5 * min_span
    span = hi - lo
    return lo - pad * span, hi + pad * span


def _legend(ax: _Axes, names, swatch: bool = False) -> list[str]:
    out = []
    for k, (name, colour) in enumerate(names):
        x = ax.left + 8 + k * 110
        mark = (f'<rect x="{x}" y="{ax.top - 18}" width="14" height="10" fill="{colour}" '
                f'stroke="{INK}" stroke-width="0.5"/>' if swatch else
                f'<path d="M{x} {ax.top - 12}h16" stroke="{colour}" stroke-width="2"/>')
        out.append(f'{mark}<text x="{x + 20}" y="{ax.top - 8}" font-size="11" fill="{INK}">'
                   f"{esc(name)}</text>")
    return out


def line_plot(series, *, title: str, x_label: str, y_label: str, x_unit: str = "",
              y_unit: str = "", markers=(), width_px: int = 720, height_px: int = 320,
              cls: str = "time-plot", min_span: float = 0.0) -> tuple[str, dict]:
    """Lines [(label, xs, ys)] on one pair of axes; markers [(x, kind, words)] as rules; the
    y axis spans at least ``min_span``."""
    xs_all = [x for _, xs, _ in series for x in xs]
    ys_all = [y for _, _, ys in series for y in ys]
    ax = _Axes((min(xs_all), max(xs_all)), _range(ys_all, min_span=min_span), width_px,
               height_px, x_label, y_label)
    out = _open(width_px, height_px, cls, title) + ax.frame()
    for x, kind, words in markers:
        if ax.x0 <= x <= ax.x1:
            colour = EVENT_COLOURS.get(kind, INK)
            out.append(f'<path d="M{_num(ax.px(x))} {ax.top}V{ax.bottom}" stroke="{colour}" '
                       f'stroke-dasharray="3 3"><title>{esc(words)}</title></path>')
    names = []
    for k, (label, xs, ys) in enumerate(series):
        colour = LINE_COLOURS[k % len(LINE_COLOURS)]
        out.append(ax.line(xs, ys, colour, label))
        names.append((label, colour))
    out += _legend(ax, names)
    out.append("</svg>")
    return "".join(out), ax.mapping(x_unit, y_unit)


def motion_svg(motion, title: str = "Link angles") -> tuple[str, dict]:
    """Each link's angle from the upward vertical (deg) against time, events marked."""
    if not motion.t_s:
        raise ValueError("motion: it has no frames to plot (frame_rate_hz was 0)")
    n = len(motion.angles_rad[0])
    series = [(f"link {i + 1}", motion.t_s, [math.degrees(q[i]) for q in motion.angles_rad])
              for i in range(n)]
    markers = [(e.t_s, e.kind, f"{e.kind} at {e.t_s:.3f} s: {e.message}")
               for e in motion.events if e.kind in ("fell", "recovered", "rotation", "knock",
                                                    "jump")]
    return line_plot(series, title=title, x_label="time (s)",
                     y_label="angle from upward vertical (deg)", x_unit="s", y_unit="deg",
                     markers=markers, cls="motion-plot")


def loads_svg(result: dict, units: str = "metric") -> tuple[str, dict]:
    """Drive force and link axial loads (N, or lbf in imperial ``units``) over the cycles of
    a loads result; the axis mapping is in the unit drawn."""
    s = result["samples"]
    per, unit = shown(1.0, "force", units)
    phase = [math.degrees(p) for p in s["phase_rad"]]

    def force(values):
        return [v * per for v in values]

    series = [("drive force", phase, force(s["drive_force_N"]))]
    if "guide_force_N" in s:  # a drive off vertical
        series.append(("guide (sideways)", phase, force(s["guide_force_N"])))
    series += [(f"link {i + 1} axial", phase, force(a)) for i, a in enumerate(s["axial_N"])]
    return line_plot(series, title=f"Loads over {result['cycles']} drive cycle(s) at "
                                   f"{result['speed_rpm']:.0f} rpm",
                     x_label="drive phase (deg)", y_label=f"force ({unit}; axial: + compression)",
                     x_unit="deg", y_unit=unit, cls="loads-plot")


def basin_svg(basin, *, knock_rad_s: float | None = None,
              release_rad: float | None = None, width_px: int = 560,
              height_px: int = 460) -> tuple[str, dict]:
    """The basin map: a cell per grid point, recovering or falling; tolerances marked."""
    angles = [math.degrees(a) for a in basin.angles_rad]
    rates = basin.rates_rad_s
    da, dr = angles[1] - angles[0], rates[1] - rates[0]
    ax = _Axes((angles[0] - da / 2, angles[-1] + da / 2), (rates[0] - dr / 2, rates[-1] + dr / 2),
               width_px, height_px, "first link angle at release (deg)",
               "first link rate (rad/s)")
    out = _open(width_px, height_px, "basin-map", "Recovery of the inverted position over "
                                                   "start angle and rate")
    w = abs(ax.px(da) - ax.px(0)) + 0.4
    h = abs(ax.py(dr) - ax.py(0)) + 0.4
    for j, row in enumerate(basin.recovered):
        for i, ok in enumerate(row):
            fill = UNKNOWN if ok is None else (RECOVERS if ok else FALLS)
            out.append(f'<rect x="{_num(ax.px(angles[i] - da / 2))}" '
                       f'y="{_num(ax.py(rates[j] + dr / 2))}" width="{_num(w)}" '
                       f'height="{_num(h)}" fill="{fill}"/>')
    marks = []
    if knock_rad_s:
        marks += [(0.0, knock_rad_s, "largest knock that recovers"), (0.0, -knock_rad_s, "")]
    if release_rad:
        deg = math.degrees(release_rad)
        marks += [(deg, 0.0, "largest release angle that recovers"), (-deg, 0.0, "")]
    for x, y, words in marks:
        out.append(f'<circle cx="{_num(ax.px(x))}" cy="{_num(ax.py(y))}" r="4" fill="none" '
                   f'stroke="#b0122b" stroke-width="2"><title>{esc(words or "its mirror image")}'
                   "</title></circle>")
    out += ax.frame()
    out += _legend(ax, (("recovers", RECOVERS), ("falls", FALLS)), swatch=True)
    out.append("</svg>")
    return "".join(out), ax.mapping("deg", "rad/s")


FIT_PLOT_POINTS = 1500  # samples per line in the fit plot (a long log is thinned to this)


# The log's own zero: angles are shown as the user logged them, from this position.
_ZERO_WORDS = {"hanging": "angle from hanging straight down (deg)",
               "inverted": "angle from upward vertical (deg)"}


def _fit_series(result, reference: str):
    """(times, [(name, degrees)]) of the fit's logged and fitted angles, from the log's zero,
    every sample (the plot thins them). Not wrapped to a half turn: a log that reads 205 deg
    from upright is drawn at 205 deg, as logged."""
    zero = REFERENCE_ANGLE[reference]

    def degrees(rows, i):
        return [math.degrees(q[i] - zero) for q in rows]

    series = []
    for i in range(len(result.measured_rad[0])):
        series.append((f"link {i + 1} logged", degrees(result.measured_rad, i)))
        series.append((f"link {i + 1} fitted model", degrees(result.model_rad, i)))
    return list(result.t_s), series


def fit_svg(result, title: str = "Logged and fitted angles",
            reference: str = "inverted") -> tuple[str, dict]:
    """Each link's logged angle and the fitted model's, in degrees against time, measured
    from the log's own zero (``reference``: "hanging" or "inverted")."""
    every = max(1, math.ceil(len(result.t_s) / FIT_PLOT_POINTS))
    ts, series = _fit_series(result, reference)
    return line_plot([(name, ts[::every], ys[::every]) for name, ys in series], title=title,
                     x_label="time (s)", y_label=_ZERO_WORDS[reference], x_unit="s",
                     y_unit="deg", cls="fit-plot")


def fit_csv(result, reference: str = "inverted") -> str:
    """The fit plot's numbers as CSV, every sample: t_s, then per link the logged and the
    fitted angle (deg, from the log's zero)."""
    ts, series = _fit_series(result, reference)
    names = [name.replace(" fitted model", "_fitted_deg").replace(" logged", "_logged_deg")
             .replace("link ", "link") for name, _ in series]
    lines = [",".join(["t_s", *names])]
    lines += [",".join([f"{t:.10g}", *(f"{ys[k]:.10g}" for _, ys in series)])
              for k, t in enumerate(ts)]
    return "\n".join(lines) + "\n"
