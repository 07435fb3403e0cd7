"""The stability chart as SVG with its axis mapping (the page adds interaction from the mapping)."""

from __future__ import annotations

import math

from ..equilibria.chart import Chart, accel_lines, boundaries
from ..model.rig import Rig
from ..model.units import INCH
from .svg import INK, esc, nice_ticks, num


REGION_FILL = {  # verdict classes of the chart, with their legend words
    "both": ("#6aa56e", "both stable"),
    "inverted": ("#3d7fb3", "inverted stable only"),
    "hanging": ("#e6b84a", "hanging stable only"),
    "neither": ("#efe9df", "neither stable"),
}
EDGE_INK = {"inverted": "#123a5a", "hanging": "#7a4f00"}
# Acceleration view: speeds at which that peak acceleration needs more than the
# mechanism's stroke are hatched, not painted as "neither stable".
OUT_OF_REACH = ('<pattern id="out-of-reach" width="6" height="6" patternUnits="userSpaceOnUse" '
                'patternTransform="rotate(45)"><rect width="6" height="6" fill="#ffffff"/>'
                '<line x1="0" y1="0" x2="0" y2="6" stroke="#9a9a9a" stroke-width="1.5"/></pattern>',
                "needs more stroke")
PLOT_BOX = (64, 24, 150, 52)  # left, top, right (legend room), bottom margins in px


def _classes(row) -> list[tuple[float, float, str]]:
    """Split a row's speed range into spans of one verdict class."""
    cuts = {row.speed_min, row.speed_max}
    for eq in row.edges:
        cuts.update(e.x for e in row.edges[eq])
    cuts = sorted(cuts)
    spans = []
    for a, b in zip(cuts, cuts[1:]):
        mid = 0.5 * (a + b)
        inside = {eq: any(lo <= mid <= hi for lo, hi in row.stable_intervals(eq)) for eq in row.edges}
        inv, hang = inside.get("inverted", False), inside.get("hanging", False)
        cls = "both" if inv and hang else "inverted" if inv else "hanging" if hang else "neither"
        if spans and spans[-1][2] == cls and abs(spans[-1][1] - a) < 1e-12:
            spans[-1] = (spans[-1][0], b, cls)
        else:
            spans.append((a, b, cls))
    return spans


def _row_spans(row, x0: float) -> list[tuple[float, float, str]]:
    spans = _classes(row)
    if row.speed_min > x0:  # acceleration rows start where the stroke fits
        spans.insert(0, (x0, row.speed_min, "out-of-reach"))
    return spans


def _region_paths(chart, px, py, exits: list | None = None) -> dict[str, str]:
    """SVG path data per verdict class (background "neither" left out); boundaries that
    leave through the side between two rows are appended to ``exits`` as
    ((edge speed, row y), (side speed, crossing y)).

    Between two rows whose spans have the same classes in the same order, each
    span is a trapezoid joining its ends on both rows, so the fill follows the
    refined edges instead of stepping; elsewhere each row paints half-way to
    its neighbours. One path per class keeps anti-aliasing seams away.
    """
    rows = chart.rows
    x0 = chart.speed_range[0]
    y0, y1 = chart.y_range
    spans = [_row_spans(r, x0) for r in rows]
    parts: dict[str, list[str]] = {}

    def poly(cls, pts):
        if cls != "neither":
            parts.setdefault(cls, []).append(
                "M" + "L".join(f"{num(px(x))},{num(py(y))}" for x, y in pts) + "Z")

    def band(i, lo_y, hi_y):
        for a, b, cls in spans[i]:
            poly(cls, [(a, lo_y), (b, lo_y), (b, hi_y), (a, hi_y)])

    if rows:
        band(0, max(y0, rows[0].y - 0.5 * (rows[1].y - rows[0].y) if len(rows) > 1 else y0),
             rows[0].y)
        band(-1, rows[-1].y, min(y1, rows[-1].y + 0.5 * (rows[-1].y - rows[-2].y)
                                  if len(rows) > 1 else y1))
    for i in range(len(rows) - 1):
        lo, hi = rows[i], rows[i + 1]
        if [c for *_, c in spans[i]] == [c for *_, c in spans[i + 1]]:
            for (a, b, cls), (c, d, _) in zip(spans[i], spans[i + 1]):
                poly(cls, [(a, lo.y), (b, lo.y), (d, hi.y), (c, hi.y)])
        elif not _side_exit(spans, rows, i, poly, exits if exits is not None else []):
            mid = 0.5 * (lo.y + hi.y)
            band(i, lo.y, mid)
            band(i + 1, mid, hi.y)
    return {cls: "".join(p) for cls, p in parts.items()}


def _side_exit(spans, rows, i: int, poly, exits: list) -> bool:
    """Join rows i and i+1 when one of them has one span more at the right end of the range
    (a boundary leaving the chart through its side between the rows): trapezoids for the
    shared spans, the boundary carried on to the side where its line through the long row's
    edge and that edge on the row beyond meets it (half-way when there is no such line)."""
    for long_i, short_i in ((i, i + 1), (i + 1, i)):
        long_s, short_s = spans[long_i], spans[short_i]
        if len(long_s) < 2 or [c for *_, c in long_s[:-1]] != [c for *_, c in short_s]:
            continue
        y_long, y_short = rows[long_i].y, rows[short_i].y
        edge, side = long_s[-1][0], long_s[-1][1]
        y_side = 0.5 * (y_long + y_short)
        beyond = 2 * long_i - short_i  # the row on the long row's other side
        if 0 <= beyond < len(rows) and len(spans[beyond]) == len(long_s) and \
                spans[beyond][-2][1] != edge:
            e_beyond, y_beyond = spans[beyond][-2][1], rows[beyond].y
            y_line = y_long + (side - edge) * (y_long - y_beyond) / (edge - e_beyond)
            if min(y_long, y_short) < y_line < max(y_long, y_short):
                y_side = y_line
        for (a, b, cls), (c, d, _) in zip(long_s[:-2], short_s[:-1]):
            poly(cls, [(a, y_long), (b, y_long), (d, y_short), (c, y_short)])
        a, _, cls = long_s[-2]
        c = short_s[-1][0]
        poly(cls, [(a, y_long), (edge, y_long), (side, y_side), (side, y_short), (c, y_short)])
        poly(long_s[-1][2], [(edge, y_long), (side, y_long), (side, y_side)])
        exits.append(((edge, y_long), (side, y_side)))
        return True
    return False


def _carried_to_side(points, exits) -> list:
    """A boundary line with the side crossing of the fill added at an end that left."""
    points = [tuple(p) for p in points]
    for start, end in exits:
        if points[-1] == start:
            points.append(end)
        elif points[0] == start:
            points.insert(0, end)
    return points


# The stroke axis in the unit chosen for display: its name and how many make a metre
# (1 in = 0.0254 m exactly, NIST SP 811).
STROKE_SHOWN = {"metric": ("mm", 1000.0), "imperial": ("in", 1 / INCH)}


ACCEL_LABEL_GAP_PX = 11  # one 10 px line of text: closer labels would overprint


def _accel_labels(accel_lines, px, py, axis_y: float) -> list[str]:
    """Labels at the lines' right-hand ends, top down; a label that would overprint the one
    above it or the speed axis is left out (its line keeps the value as a tooltip)."""
    ends = sorted((py(ly) + 11, px(lx) - 2, g) for g, pts in accel_lines for lx, ly in pts[-1:])
    out, last = [], -math.inf
    for y, x, g_value in ends:
        if y - last < ACCEL_LABEL_GAP_PX or y > axis_y - 2:
            continue
        out.append(f'<text x="{num(x)}" y="{num(y)}" font-size="10" '
                   f'text-anchor="end" fill="#333">{esc(f"{g_value:g} g")}</text>')
        last = y
    return out


TONGUE_CHAR_PX = 6.0  # a 10 px system-ui character is at most about this wide
TONGUE_LINES = 3  # label lines under the top edge; a label that fits on none is left out


def _tongue_labels(tongues, px, x0: float, x1: float, left: float, right: float,
                   top: float) -> list[str]:
    """Tongue labels centred over their speeds (kept inside the plot), the lowest orders
    first as they are the widest tongues; a label that would overprint one already placed on
    a line goes to the next line down."""
    placed: list[list[tuple[float, float]]] = [[] for _ in range(TONGUE_LINES)]
    out = []
    for t in sorted(tongues, key=lambda t: (t["order"], t["mode"])):
        if not x0 <= t["speed_rpm"] <= x1:
            continue
        half = len(t["label"]) * TONGUE_CHAR_PX / 2
        tx = min(max(px(t["speed_rpm"]), left + half), right - half)
        span = (tx - half - 1, tx + half + 1)
        line = next((i for i, spans in enumerate(placed)
                     if all(span[1] <= a or span[0] >= b for a, b in spans)), None)
        if line is None:
            continue
        placed[line].append(span)
        out.append(f'<text x="{num(tx)}" y="{num(top + 14 + 11 * line)}" font-size="10" '
                   f'text-anchor="middle" fill="#5a3b00">{esc(t["label"])}'
                   "<title>hanging resonance of this order (drive near 2 f0 / n)</title>"
                   "</text>")
    return out


def chart_svg(chart, rig: Rig, *, width_px: int = 760, height_px: int = 470,
              boundaries: list[dict] | None = None, accel_lines: list[tuple] = (),
              units: str = "metric") -> tuple[str, dict]:
    """The stability chart as SVG, and its axis mapping {x: {...}, y: {...}}.

    x is speed (rpm), y stroke (mm, or in for ``units="imperial"``) or peak acceleration (g).
    The mapping is linear and in SI whatever the units shown:
    px = px_min + (value - min) / (max - min) * (px_max - px_min).
    """
    if units not in STROKE_SHOWN:
        raise ValueError(f"units: {units!r} is not 'metric' or 'imperial'")
    left, top, right, bottom = PLOT_BOX
    x0, x1 = chart.speed_range
    y0, y1 = chart.y_range
    stroke_axis = chart.y_axis == "stroke"
    stroke_unit, per_m = STROKE_SHOWN[units]
    y_scale = per_m if stroke_axis else 1 / 9.80665  # shown in mm (or in) or g
    mapping = {
        "x": {"min": x0, "max": x1, "px_min": left, "px_max": width_px - right, "unit": "rpm",
              "quantity": "speed_rpm"},
        "y": {"min": y0, "max": y1, "px_min": height_px - bottom, "px_max": top,
              "unit": "m" if stroke_axis else "m/s^2",
              "quantity": "stroke_m" if stroke_axis else "peak_accel_m_s2",
              "shown_unit": stroke_unit if stroke_axis else "g"},
        "width_px": width_px, "height_px": height_px,
    }

    def px(v):
        return left + (v - x0) / (x1 - x0) * (width_px - right - left)

    def py(v):
        return (height_px - bottom) - (v - y0) / ((y1 - y0) or 1.0) * (height_px - bottom - top)

    title = f"Stability map: {rig.title or 'rig'} ({rig.drive.waveform} drive)"
    out = [f'<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 {width_px} {height_px}" '
           f'width="{width_px}" height="{height_px}" role="img" class="stability-chart" '
           'font-family="system-ui, sans-serif">', f"<title>{esc(title)}</title>",
           f'<rect x="{left}" y="{top}" width="{width_px - left - right}" '
           f'height="{height_px - top - bottom}" fill="{REGION_FILL["neither"][0]}"/>']
    if not stroke_axis:
        out.append(f"<defs>{OUT_OF_REACH[0]}</defs>")
    exits: list = []
    for cls, d in _region_paths(chart, px, py, exits).items():
        fill = "url(#out-of-reach)" if cls == "out-of-reach" else REGION_FILL[cls][0]
        out.append(f'<path d="{d}" fill="{fill}"/>')
    for line in boundaries or []:
        points = _carried_to_side(line["points"], exits)
        pts = " ".join(f"{num(px(x))},{num(py(y))}" for x, y in points)
        out.append(f'<polyline points="{pts}" fill="none" stroke="{EDGE_INK[line["equilibrium"]]}" '
                   f'stroke-width="1.4"><title>{esc(line["equilibrium"] + ": " + line["kind"])}'
                   "</title></polyline>")
    for g_value, points in accel_lines:
        pts = " ".join(f"{num(px(x))},{num(py(y))}" for x, y in points)
        out.append(f'<polyline points="{pts}" fill="none" stroke="#555" stroke-width="0.8" '
                   f'stroke-dasharray="3 3"><title>{esc(f"{g_value:g} g")}</title></polyline>')
    out.extend(_accel_labels(accel_lines, px, py, height_px - bottom))
    out.extend(_tongue_labels(chart.tongues, px, x0, x1, left, width_px - right, top))
    if chart.held_orbit and stroke_axis:
        out.append(_held_bars(chart.held_orbit, rig, px, py))
    # operating point
    op_y = rig.drive.stroke_m if stroke_axis else None
    if op_y is None:
        from ..model.drive import peak_accel_m_s2
        op_y = peak_accel_m_s2(rig.drive)
    ox, oy = px(rig.drive.speed_rpm), py(op_y)
    out.append(f'<g class="operating-point"><circle cx="{num(ox)}" cy="{num(oy)}" r="6" fill="none" '
               f'stroke="#b0122b" stroke-width="2.5"/><line x1="{num(ox - 9)}" y1="{num(oy)}" '
               f'x2="{num(ox + 9)}" y2="{num(oy)}" stroke="#b0122b" stroke-width="1.5"/>'
               f'<line x1="{num(ox)}" y1="{num(oy - 9)}" x2="{num(ox)}" y2="{num(oy + 9)}" '
               'stroke="#b0122b" stroke-width="1.5"/><title>operating point</title></g>')
    # axes
    out.append(f'<rect x="{left}" y="{top}" width="{width_px - left - right}" '
               f'height="{height_px - top - bottom}" fill="none" stroke="{INK}"/>')
    for v in nice_ticks(x0, x1):
        out.append(f'<line x1="{num(px(v))}" y1="{height_px - bottom}" x2="{num(px(v))}" '
                   f'y2="{height_px - bottom + 5}" stroke="{INK}"/><text x="{num(px(v))}" '
                   f'y="{height_px - bottom + 17}" font-size="11" text-anchor="middle" '
                   f'fill="{INK}">{v:g}</text>')
    for v in nice_ticks(y0 * y_scale, y1 * y_scale):
        yv = v / y_scale
        out.append(f'<line x1="{left - 5}" y1="{num(py(yv))}" x2="{left}" y2="{num(py(yv))}" '
                   f'stroke="{INK}"/><text x="{left - 8}" y="{num(py(yv) + 4)}" font-size="11" '
                   f'text-anchor="end" fill="{INK}">{v:g}</text>')
    out.append(f'<text x="{num((left + width_px - right) / 2)}" y="{height_px - 12}" '
               f'font-size="12" text-anchor="middle" fill="{INK}">drive speed (rpm)</text>')
    ylabel = f"stroke ({stroke_unit})" if stroke_axis else "peak pivot acceleration (g)"
    out.append(f'<text transform="translate(16 {num((top + height_px - bottom) / 2)}) rotate(-90)" '
               f'font-size="12" text-anchor="middle" fill="{INK}">{ylabel}</text>')
    lx = width_px - right + 12
    for k, (cls, (fill, words)) in enumerate(REGION_FILL.items()):
        y = top + 8 + k * 20
        out.append(f'<rect x="{lx}" y="{y}" width="14" height="14" fill="{fill}" stroke="{INK}" '
                   f'stroke-width="0.5"/><text x="{lx + 20}" y="{y + 11}" font-size="11" '
                   f'fill="{INK}">{words}</text>')
    y = top + 8 + 4 * 20 + 6
    if not stroke_axis:
        out.append(f'<rect x="{lx}" y="{y - 4}" width="14" height="14" fill="url(#out-of-reach)" '
                   f'stroke="{INK}" stroke-width="0.5"/><text x="{lx + 20}" y="{y + 7}" '
                   f'font-size="11" fill="{INK}">{OUT_OF_REACH[1]}</text>')
        y += 20
    out.append(f'<circle cx="{lx + 7}" cy="{y + 7}" r="5" fill="none" stroke="#b0122b" '
               f'stroke-width="2"/><text x="{lx + 20}" y="{y + 11}" font-size="11" '
               f'fill="{INK}">operating point</text>')
    if chart.held_orbit and stroke_axis:
        for k, name in enumerate(HELD_OFFSET_PX):
            yk = y + 27 + 20 * k
            out.append(f'<line x1="{lx}" y1="{yk}" x2="{lx + 14}" y2="{yk}" '
                       f'stroke="{EDGE_INK[name]}" stroke-width="3"/><text x="{lx + 20}" '
                       f'y="{yk + 4}" font-size="11" fill="{INK}">held orbit, {name}</text>')
    if chart.off_vertical:
        out.append(_vertical_only(chart.off_vertical, left, top, width_px - left - right - 8))
    out.append("</svg>")
    return "".join(out), mapping


HELD_OFFSET_PX = {"inverted": -3, "hanging": 3}  # the two equilibria's bars side by side


def _held_bars(held: dict, rig: Rig, px, py) -> str:
    """The held orbit's windows through the operating point, each a bar along its axis
    (speed at the operating stroke, stroke at the operating speed), per equilibrium."""
    out = ['<g class="held-orbit-windows">']
    sx, sy = px(rig.drive.speed_rpm), py(rig.drive.stroke_m)
    for name, w in held.items():
        if not w["stable"]:
            continue
        ink, off = EDGE_INK[name], HELD_OFFSET_PX[name]
        for axis, window, unit, scale in (("speed", w["speed_window_rpm"], "rpm", 1.0),
                                          ("stroke", w["stroke_window_m"], "mm", 1000.0)):
            if not window:
                continue
            a, b = window
            if axis == "speed":
                x1, y1, x2, y2 = px(a), sy + off, px(b), sy + off
            else:
                x1, y1, x2, y2 = sx + off, py(a), sx + off, py(b)
            words = (f"held orbit, {name}: stable from {a * scale:.4g} to {b * scale:.4g} "
                     f"{unit} at the operating {'stroke' if axis == 'speed' else 'speed'}")
            out.append(f'<line class="held-{name}-{axis}" x1="{num(x1)}" y1="{num(y1)}" '
                       f'x2="{num(x2)}" y2="{num(y2)}" stroke="{ink}" stroke-width="3" '
                       f'stroke-linecap="square" data-window="{a:.9g},{b:.9g}">'
                       f"<title>{esc(words)}</title></line>")
    out.append("</g>")
    return "".join(out)


def _vertical_only(off: tuple[float, float], left: int, top: int, width: int) -> str:
    """The plain words on a map of a rig whose drive is off vertical: what it is of."""
    tilt, side = off
    what = " and ".join(w for w in (f"{tilt:g} deg axis tilt" if tilt else "",
                                    f"{side * 1000:g} mm side stroke" if side else "") if w)
    lines = (f"Drawn for a vertical drive: the rig's {what} is not in this map.",
             "The bars through the operating point are the held orbit's windows (the check's).")
    text = "".join(f'<text x="{left + 10}" y="{top + 34 + 14 * k}" font-size="11" '
                   f'fill="#5a3b00">{esc(line)}</text>' for k, line in enumerate(lines))
    return (f'<g class="map-vertical-only"><rect x="{left + 4}" y="{top + 22}" width="{width}" '
            f'height="34" rx="3" fill="#fff8e1" stroke="#b07a00" stroke-width="0.8"/>{text}'
            "</g>")


def render(c: Chart, rig: Rig, **options) -> tuple[str, dict]:
    """SVG text and axis mapping of a chart, with boundaries and acceleration lines."""
    eqs = list(c.rows[0].edges) if c.rows else []
    lines = [b for eq in eqs for b in boundaries(c, eq)]
    return chart_svg(c, rig, boundaries=lines, accel_lines=accel_lines(c, rig), **options)
