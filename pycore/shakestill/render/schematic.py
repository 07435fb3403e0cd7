"""The rig drawn to scale as SVG: carriage, crank (if any), links and masses."""

from __future__ import annotations

import math

from ..model.rig import Rig
from .svg import BOB, DRIVE, INK, ROD, esc, num


def schematic(rig: Rig, *, width_px: int = 320, height_px: int = 420,
              angles_rad: tuple[float, ...] | None = None) -> str:
    """The rig drawn to scale: carriage, crank (if any), links and masses.

    ``angles_rad`` are link angles from the upward vertical (default: inverted).
    """
    angles = angles_rad or tuple(0.0 for _ in rig.links)
    reach = sum(link.length_m for link in rig.links)
    stroke = rig.drive.stroke_m
    drive_space = stroke + (2 * rig.drive.rod_length_m if rig.drive.waveform == "crank" else 0.0)
    span = reach * 2.2 + drive_space + 0.02
    scale = min(width_px / (reach * 2.4 + 0.02), (height_px - 40) / span)
    cx = width_px / 2
    pivot_y = height_px * 0.5 if reach * scale < height_px * 0.45 else 20 + reach * scale
    parts = [f'<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 {width_px} {height_px}" '
             f'width="{width_px}" height="{height_px}" role="img" class="rig-schematic">',
             f"<title>{esc(rig.title or 'Rig')}: {len(rig.links)} link(s), drawn to scale"
             "</title>"]
    # carriage and its travel
    half = stroke / 2 * scale
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
                         f"<title>{esc(f'{p.mass_kg * 1000:g} g at {p.at_m * 1000:g} mm')}"
                         "</title></circle>")
        parts.append(f'<circle cx="{num(x)}" cy="{num(y)}" r="4" fill="#fff" stroke="{INK}" '
                     'stroke-width="2"/>')
        x, y = x2, y2
    bar = 0.1 if reach > 0.15 else 0.01
    parts.append(f'<line x1="10" y1="{height_px - 12}" x2="{num(10 + bar * scale)}" '
                 f'y2="{height_px - 12}" stroke="{INK}" stroke-width="2"/>')
    parts.append(f'<text x="10" y="{height_px - 18}" font-size="11" fill="{INK}">'
                 f"{num(bar * 1000)} mm</text>")
    parts.append("</svg>")
    return "".join(parts)
