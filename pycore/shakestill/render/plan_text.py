"""Plain words for the plan (``shakestill plan`` without --json), for a technician at the rig."""

from __future__ import annotations

from ..model.safety import CAUTIONS
from .shown import length_text


def _fmt(value, unit: str, units: str = "metric") -> str:
    if value is None:
        return "-"
    return length_text(value, units, ".3f") if unit == "m" else f"{value:,.1f} {unit}"


def _rig_words(values: dict, units: str) -> str:
    """What sets the binding rig apart: one link, its equivalent length and damping rate;
    several, the spread numbers it takes and its modal lengths (longest first)."""
    if "values" not in values:
        return (f"equivalent length {length_text(values['equivalent_length_m'], units, '.3f')}, "
                f"damping rate {values['damping_rate_1_s']:.4g} 1/s")
    words = [f"{path} = {v:.6g}" for path, v in values["values"].items()]
    modal = values.get("modal_lengths_m") or []
    if modal:
        words.append("modal lengths " + ", ".join(length_text(m, units, ".1f") for m in modal))
    if not values["values"]:  # no spreads: the nominal rig binds
        return f"the nominal numbers ({words[0]})" if words else "the nominal numbers"
    return ", ".join(words)


def plan_text(result: dict, warnings=(), units: str = "metric") -> str:
    """The recommendation, what binds it, the region's size, sensitivities, run-up, cautions;
    strokes in ``units``."""
    out = [f"Operating point for: {', '.join(result['for'])}"]
    if result["speed_rpm"] is None:
        out.append("No point of the search grid holds for every rig of the set (see the notes).")
    else:
        out.append(f"Run at {result['speed_rpm']:,.0f} rpm with a stroke of "
                   f"{length_text(result['stroke_m'], units)}.")
        out.append(f"Worst-case margin: {result['worst_margin_percent']:.1f}% "
                   f"(speed {result['speed_margin_percent']:.1f}%, stroke "
                   f"{result['stroke_margin_percent']:.1f}%)")
        b = result.get("binding")
        if b:
            e = b["edge"]
            unit = "rpm" if e["axis"] == "speed" else "m"
            out.append(f"Binding: the {e['side']} {e['axis']} edge of the {b['equilibrium']} "
                       f"position at {_fmt(e['edge'], unit, units)}, for the rig with "
                       f"{_rig_words(b['rig_values'], units)}.")
        run = result.get("runup")
        if run:
            out.append(f"Run up from rest at {run['min_rate_rpm_s']:,.1f} rpm/s or faster "
                       f"(disturbances grow at most {run['factor']:g}x through resonances).")
    region = result["robust_region"]
    out.append("Robust region: " + ", ".join(
        f"{eq} {pc:.1f}% of the limits" for eq, pc in region["area_percent_of_limits"].items())
        + f" ({region['rigs']} rig{'s' if region['rigs'] != 1 else ''} bound{'' if region['rigs'] != 1 else 's'} it)")
    if result["sensitivity"]:
        out.append("Edge movement across half of each spread:")
        for row in result["sensitivity"]:
            for eq in result["for"]:
                per = row.get(eq, {})
                if "note" in per:
                    out.append(f"  {row['path']} ({row['spread']}): {per['note']}")
                    continue
                moves = [f"{name} {_fmt(v['over_half_spread'], 'm' if 'stroke' in name else 'rpm', units)}"
                         for name, v in per.items() if v is not None]
                out.append(f"  {row['path']} ({row['spread']}, {eq}): " + "; ".join(moves))
    out.append("Metric: " + result["metric"])
    out += ["Note: " + n for n in result["notes"]]
    out += [f"Warning: {w}" for w in warnings]
    out += ["Caution: " + c for c in CAUTIONS]
    return "\n".join(out) + "\n"
