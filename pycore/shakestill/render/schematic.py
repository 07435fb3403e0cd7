"""The rig drawn to scale as SVG: carriage, crank (if any), links and masses; a drive off
vertical turns the carriage, its travel and the crank onto the tilted axis and draws the
pivot's path."""

from __future__ import annotations

import math

from ..model.drive import pivot as drive_pivot
from ..model.rig import Rig
from ..model.units import INCH, OUNCE
from .shown import check_units
from .svg import BOB, DRIVE, INK, ROD, esc, num


PATH_POINTS = 48  # points of the pivot's path over one cycle
AXIS_PX = 150  # half length of the drawn drive axis


def _path_off_vertical(rig: Rig, cx: float, cy: float, scale: float) -> list[str]:
    """The drive's axis, dashed and labelled with its tilt, and the pivot's path over one
    cycle (to scale; an ellipse when there is a side stroke)."""
    d = rig.drive
    a, lead = math.radians(d.axis_tilt_deg), math.radians(d.side_phase_deg)
    dx, dy = AXIS_PX * math.sin(a), AXIS_PX * math.cos(a)
    words = f"{d.axis_tilt_deg:g} deg off vertical"
    out = [f'<line x1="{num(cx - dx)}" y1="{num(cy + dy)}" x2="{num(cx + dx)}" '
           f'y2="{num(cy - dy)}" stroke="{DRIVE}" stroke-dasharray="6 4">'
           f"<title>drive axis, {esc(words)}</title></line>"]
    pts = []
    for k in range(PATH_POINTS + 1):
        phi = 2 * math.pi * k / PATH_POINTS
        s = drive_pivot(d, phi).y_m
        x = s * math.sin(a) + d.side_stroke_m / 2 * math.cos(phi + lead)
        pts.append(f"{num(cx + x * scale)},{num(cy - s * math.cos(a) * scale)}")
    out.append(f'<polyline points="{" ".join(pts)}" fill="none" stroke="{INK}" '
               'stroke-width="1.5"><title>the pivot\'s path over one cycle</title></polyline>')
    out.append(f'<text x="{num(cx + 34)}" y="{num(cy + 26)}" font-size="11" fill="{INK}">'
               f"axis {esc(words)}</text>")
    return out


def _upright(cx: float, pivot_y: float, reach_px: float, lean_deg) -> str:
    """The upward vertical through the pivot, dashed, and the lean it is drawn at."""
    words = ", ".join(f"{v:+.2f}" for v in lean_deg)
    return (f'<g class="lean-reference"><line x1="{num(cx)}" y1="{num(pivot_y)}" x2="{num(cx)}" '
            f'y2="{num(pivot_y - reach_px)}" stroke="{INK}" stroke-width="0.8" '
            'stroke-dasharray="2 3"><title>upward vertical</title></line>'
            f'<text x="6" y="14" font-size="11" fill="{INK}">'
            f"links at the held orbit's mean lean {esc(words)} deg</text></g>")


# (length in m, its words): a long rig's bar, then a short one's; inches are exact (NIST SP 811)
SCALE_BARS = {"metric": ((0.1, "100 mm"), (0.01, "10 mm")),
              "imperial": ((4 * INCH, "4 in"), (0.5 * INCH, "0.5 in"))}


def _mass_note(mass_kg: float, at_m: float, units: str) -> str:
    if units == "imperial":
        return f"{mass_kg / OUNCE:.3g} oz at {at_m / INCH:.3g} in"
    return f"{mass_kg * 1000:g} g at {at_m * 1000:g} mm"


def schematic(rig: Rig, *, width_px: int = 320, height_px: int = 420,
              angles_rad: tuple[float, ...] | None = None,
              lean_deg: tuple[float, ...] | None = None, units: str = "metric") -> str:
    """The rig drawn to scale: carriage, crank (if any), links and masses; the scale bar
    and the masses' notes in ``units`` ("metric" or "imperial").

    ``angles_rad`` are link angles from the upward vertical (default: inverted).
    ``lean_deg``: the inverted held orbit's mean angle per link (the check's ``lean_deg``):
    the links are drawn at it beside the upward vertical, and the drawing says so.
    """
    check_units(units)
    if lean_deg is not None:
        angles_rad = tuple(math.radians(v) for v in lean_deg)
    angles = angles_rad or tuple(0.0 for _ in rig.links)
    reach = sum(link.length_m for link in rig.links)
    stroke = rig.drive.stroke_m
    drive_space = stroke + (2 * rig.drive.rod_length_m if rig.drive.waveform == "crank" else 0.0)
    span = reach * 2.2 + drive_space + 0.02
    scale = min(width_px / (reach * 2.4 + 0.02), (height_px - 40) / span)
    cx = width_px / 2
    pivot_y = height_px * 0.5 if reach * scale < height_px * 0.45 else 20 + reach * scale
    parts = [f'<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 {width_px} {height_px}" '
             f'width="{width_px}" height="{height_px}" role="img" class="rig-schematic"'
             + ("" if lean_deg is None else
                f' data-lean-deg="{esc(",".join(f"{v:.6g}" for v in lean_deg))}"') + ">",
             f"<title>{esc(rig.title or 'Rig')}: {len(rig.links)} link(s), drawn to scale"
             "</title>"]
    # carriage and its travel, on the drive's axis (a tilt turns them clockwise on screen)
    half = stroke / 2 * scale
    tilt = rig.drive.axis_tilt_deg
    if tilt:
        parts.append(f'<g transform="rotate({num(tilt)} {num(cx)} {num(pivot_y)})">')
    parts.append(f'<rect x="{num(cx - 28)}" y="{num(pivot_y - half - 6)}" width="56" '
                 f'height="{num(2 * half + 12)}" fill="none" stroke="{DRIVE}" '
                 'stroke-dasharray="4 3"><title>carriage travel (stroke)</title></rect>')
    parts.append(f'<rect x="{num(cx - 22)}" y="{num(pivot_y - 5)}" width="44" height="10" '
                 f'rx="2" fill="{DRIVE}"/>')
    if rig.drive.waveform == "crank":
        r, rod = stroke / 2 * scale, rig.drive.rod_length_m * scale
        crank_y = pivot_y + rod + 10
        parts.append(f'<circle cx="{num(cx)}" cy="{num(crank_y)}" r="{num(max(r, 2))}" '
                     f'fill="none" stroke="{DRIVE}"/>')
        parts.append(f'<line x1="{num(cx)}" y1="{num(crank_y - r)}" x2="{num(cx)}" '
                     f'y2="{num(pivot_y)}" stroke="{DRIVE}" stroke-width="3"/>')
    if tilt:
        parts.append("</g>")
    if rig.drive.off_vertical:
        parts.extend(_path_off_vertical(rig, cx, pivot_y, scale))
    if lean_deg is not None:
        parts.append(_upright(cx, pivot_y, reach * scale, lean_deg))
    # links
    x, y = cx, pivot_y
    for link, angle in zip(rig.links, angles):
        x2 = x + link.length_m * scale * math.sin(angle)
        y2 = y - link.length_m * scale * math.cos(angle)
        thick = 3 + min(6.0, 40 * link.rod_mass_kg)
        parts.append(f'<line x1="{num(x)}" y1="{num(y)}" x2="{num(x2)}" y2="{num(y2)}" '
                     f'stroke="{ROD}" stroke-width="{num(thick)}" stroke-linecap="round"/>')
        for p in link.point_masses:
            px = x + p.at_m * scale * math.sin(angle)
            py = y - p.at_m * scale * math.cos(angle)
            radius = 3 + 14 * (p.mass_kg / (p.mass_kg + 0.05)) ** 0.5
            parts.append(f'<circle cx="{num(px)}" cy="{num(py)}" r="{num(radius)}" fill="{BOB}">'
                         f"<title>{esc(_mass_note(p.mass_kg, p.at_m, units))}"
                         "</title></circle>")
        parts.append(f'<circle cx="{num(x)}" cy="{num(y)}" r="4" fill="#fff" stroke="{INK}" '
                     'stroke-width="2"/>')
        x, y = x2, y2
    bar, label = SCALE_BARS[units][0 if reach > 0.15 else 1]
    parts.append(f'<line x1="10" y1="{height_px - 12}" x2="{num(10 + bar * scale)}" '
                 f'y2="{height_px - 12}" stroke="{INK}" stroke-width="2"/>')
    parts.append(f'<text x="10" y="{height_px - 18}" font-size="11" fill="{INK}">'
                 f"{label}</text>")
    parts.append("</svg>")
    return "".join(parts)
