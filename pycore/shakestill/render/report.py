"""Plain words for the check and run-up results, for a technician at the rig."""

from __future__ import annotations

import math

from ..equilibria.runup import LOG_GROWTH_CAP
from ..model.safety import CAUTIONS
from .shown import length_text, text

_NAMES = {"inverted": "Inverted (pendulum up)", "hanging": "Hanging (pendulum down)"}
# The verdicts in the page's words (site/panels/report-view.js): (stable, unstable).
VERDICTS = {"inverted": ("STAYS UP", "FALLS OVER"), "hanging": ("HANGS STEADY", "SWINGS UP")}


GROWTH_CAP = math.exp(LOG_GROWTH_CAP) * (1 - 1e-12)


def _rpm(x: float) -> str:
    return f"{_speed(x)} rpm"


def _speed(x: float) -> str:
    """A speed in rpm: whole rpm, but 3 digits under 10 rpm (0.02 is not "0")."""
    return f"{x:,.0f}" if x >= 10 or x == 0 else f"{x:.3g}"


def _seconds(x: float) -> str:
    """Seconds to the hundredth, or 3 digits past a million (a very slow ramp)."""
    return f"{x:.2f}" if x < 1e6 else f"{x:.3g}"


def _mm(x: float, units: str = "metric") -> str:
    return length_text(x, units)


def shape_words(shape: tuple[float, ...]) -> str:
    """A mode shape in words: which links swing with the first and which against it."""
    if len(shape) == 1:
        return "the link swings as one pendulum"
    ref = shape[0] if shape[0] != 0.0 else 1.0
    together = [i + 1 for i, c in enumerate(shape) if c * ref > 0]
    against = [i + 1 for i, c in enumerate(shape) if c * ref < 0]
    if not against:
        return "all links swing together"
    names = ", ".join(f"link {i}" for i in against)
    return (f"{names} against link {together[0]}" if len(together) == 1 else
            f"{names} against links {', '.join(str(i) for i in together)}")


def _sway_text(r: dict, shapes) -> str:
    """The slow sway of a stable equilibrium: one frequency, or one per mode with its shape
    (modes pair with shapes by order: the longer a mode's equivalent length, the slower)."""
    sway = r.get("sway_modes_hz") or [r["slow_frequency_hz"]]
    if len(sway) == 1:
        return "  slow sway: {:.3f} Hz".format(sway[0])
    parts = [f"{hz:.3f} Hz ({shape_words(shape)})" for hz, shape in zip(sway, shapes)]
    return "  sway modes: " + "; ".join(parts)


def _window_text(window, ends, fmt, down, up) -> str:
    if window is None:
        return "none (not stable here)"
    lo, hi = window
    lo_kind = "stability edge" if ends[0] == "edge" else "rig limit"
    hi_kind = "stability edge" if ends[1] == "edge" else "rig limit"
    # a margin is in per cent of the operating value: none at a stroke of 0
    below = f", {down:.1f}% below" if down is not None else ""
    above = f", {up:.1f}% above" if up is not None else ""
    return f"{fmt(lo)} ({lo_kind}{below}) to {fmt(hi)} ({hi_kind}{above})"


def equilibrium_lines(name: str, r: dict, shapes=((1.0,),), units: str = "metric") -> list[str]:
    if r["max_multiplier"] is None:  # off vertical with no held orbit: nothing to multiply
        lines = [f"{_NAMES[name]}: NOT HELD  (no orbit near this position with the drive off "
                 "vertical)"]
        lines.extend(f"  note: {msg}" for msg in r.get("messages", []))
        return lines
    verdict = VERDICTS[name][0 if r["stable"] else 1]
    lines = [f"{_NAMES[name]}: {verdict}, {'stable' if r['stable'] else 'unstable'}"
             f"  (largest Floquet multiplier {r['max_multiplier']:.6f}; stable below 1)"]
    if r["stable"]:
        m, e = r["margins_percent"], r["window_ends"]
        lines.append(_sway_text(r, shapes))
        lines.append("  speed window: " + _window_text(
            r["speed_window_rpm"], (e["speed_low"], e["speed_high"]), _rpm,
            m["speed_down"], m["speed_up"]))
        lines.append("  stroke window: " + _window_text(
            r["stroke_window_m"], (e["stroke_low"], e["stroke_high"]),
            lambda x: _mm(x, units),
            m["stroke_down"], m["stroke_up"]))
        if r.get("close_to_edge"):
            lines.append(f"  close to an edge: only {r['nearest_margin_percent']:.1f}% of margin; "
                         "a small change of speed or stroke loses this position")
    else:
        lines.append("  growth factor per drive cycle: x{:.3g} (a small disturbance grows by it "
                     "every revolution)"
                     .format(r["max_multiplier"]))
    for msg in r.get("messages", []):
        lines.append(f"  note: {msg}")
    return lines


def tilt_lines(result: dict) -> list[str]:
    """The drive's tilt: each held orbit's lean and wobble, and the tilt the rig tolerates."""
    if "tilt_tolerance_deg" not in result:
        return []
    out = ["Drive off vertical (the pendulum holds a leaning orbit, not the equilibrium):"]
    for name in ("inverted", "hanging"):
        lean, wobble = result[name].get("lean_deg"), result[name].get("wobble_deg")
        if lean is None:
            out.append(f"  {name}: no held orbit near it")
            continue
        out.append(f"  {name}: mean lean " + ", ".join(f"{v:+.2f}" for v in lean)
                   + " deg, wobble " + ", ".join(f"{v:.2f}" for v in wobble) + " deg peak-to-peak")
    tol = result["tilt_tolerance"]
    if result["tilt_tolerance_deg"] is None:
        out.append(f"  tilt tolerance: none ({tol['message']})")
    else:
        out.append(f"  tilt tolerance: {result['tilt_tolerance_deg']:.2f} deg of drive axis "
                   f"(lean limit {tol['max_lean_deg']:g} deg; {tol['message']})")
    out.append("  a tilt out of the swing plane does not enter this planar model")
    out.append("")
    return out


def report_text(result: dict, warnings=(), units: str = "metric") -> str:
    """The human report of ``shakestill check``; lengths and accelerations in ``units``
    ("metric" or "imperial")."""
    est = result["estimates"]
    out = []
    if result.get("title"):
        out.append(result["title"])
        out.append("=" * len(result["title"]))
    out.append(f"Drive: {result['waveform']}, {_rpm(result['speed_rpm'])} "
               f"({result['frequency_hz']:.2f} Hz), stroke {_mm(result['stroke_m'], units)}")
    out.append(f"Peak pivot acceleration: {text(result['peak_accel_m_s2'], 'acceleration', units, '.1f')} "
               f"({result['peak_accel_g']:.1f} g)")
    out.append("")
    for name in ("inverted", "hanging"):
        out.extend(equilibrium_lines(name, result[name], result["modes"]["shapes"], units))
        out.append("")
    out.extend(tilt_lines(result))
    out.append("Closed-form estimates (Kapitza's averaging; a guide, not the exact answer):")
    lengths = est["mode_lengths_m"]
    out.append(f"  equivalent pendulum length l_eq{' (links held in line)' if len(lengths) > 1 else ''}"
               f": {length_text(est['l_eq_m'], units, '.1f')}")
    mixing = result["modes"].get("damper_mixing", 0.0)
    if mixing > result["modes"].get("strong_mixing", math.inf):
        out.append(f"  (the joint dampers mix the sway modes strongly, by {mixing:.2g}: the "
                   "modes' estimates below are rough, and the map is worked out on the whole "
                   "chain)")
    if len(lengths) > 1:
        out.extend(f"  mode {k + 1}: equivalent length {length_text(length, units, '.1f')}, "
                   f"{shape_words(shape)}"
                   for k, (length, shape) in enumerate(zip(lengths, result["modes"]["shapes"])))
    binds = (lambda mode: f" (mode {mode} binds)" if len(lengths) > 1 else "")
    out.append(f"  inverted needs more than about {_rpm(est['kapitza_min_speed_rpm'])} at this "
               "stroke" + binds(est["min_speed_mode"]) + " (exact edge: "
               + _edge_text(result["inverted"]) + ")")
    inv = est["inverted_slow_frequency_hz"]
    out.append("  inverted slow sway " + (f"about {inv:.3f} Hz" if inv else
                                          "none: the estimate has it falling over")
               + f"; hanging about {est['hanging_slow_frequency_hz']:.3f} Hz")
    out.append(f"  inverted lost above a stroke of about {_mm(est['max_stroke_estimate_m'], units)} "
               "at any speed" + binds(est["max_stroke_mode"]))
    if est["effective_barrier_J"] > 0:
        out.append(f"  knock it survives, about {est['knock_estimate_rad_s']:.2f} rad/s; release "
                   f"angle about {math.degrees(est['release_angle_estimate_rad']):.0f} deg")
    if warnings:
        out.append("")
        out.append("Warnings:")
        out.extend(f"  {w.path}: {w.message}" for w in warnings)
    if not result.get("converged", True):
        out.append("")
        out.append("Numerical note: some results did not meet their accuracy check; see notes.")
    out.append("")
    out.append("Safety:")
    out.extend(f"  - {c}" for c in CAUTIONS)
    return "\n".join(out) + "\n"


def _edge_text(r: dict) -> str:
    w, e = r.get("speed_window_rpm"), r.get("window_ends", {})
    if not w:
        return "not stable at this speed"
    return _rpm(w[0]) if e.get("speed_low") == "edge" else "below the speed limit"


def jsonable(obj):
    """Plain JSON data: non-finite floats become null (JSON has no infinity)."""
    if isinstance(obj, float):
        return obj if math.isfinite(obj) else None
    if isinstance(obj, dict):
        return {k: jsonable(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [jsonable(v) for v in obj]
    return obj


def _rate(x: float) -> str:
    """Three significant digits, thousands written out: 239, 3,260 (never 3.26e+03)."""
    return f"{float(f'{x:.3g}'):,.0f}" if 1000 <= x < math.inf else f"{x:.3g}"


def _growth(x: float) -> str:
    """x1.23, or "past x1e+304" where the frozen estimate stops (runup.LOG_GROWTH_CAP)."""
    return "past x1e+304" if x >= GROWTH_CAP else f"x{x:.3g}"


def _cycles(n: float) -> str:
    if n >= 1e7:  # a very slow ramp: 3 digits, not thirty
        return f"{n:.3g} cycles"
    return "under 1 cycle" if n < 0.5 else f"{n:,.0f} cycle" + ("" if round(n) == 1 else "s")


def runup_text(result: dict, units: str = "metric") -> str:
    """Words for a run-up result (the stroke in ``units``)."""
    chosen = (" (recommended: the slowest ramp that keeps the hanging pendulum's growth under "
              f"x{result['factor']:g})" if result.get("rate_recommended") else "")
    out = [f"Run-up at {result['rate_rpm_s']:.4g} rpm/s{chosen} from {_speed(result['start_rpm'])} "
           f"to {_rpm(result['end_rpm'])}, stroke {_mm(result['stroke_m'], units)} "
           f"(acceptable growth: x{result['factor']:g})"]
    for name in ("inverted", "hanging"):
        r = result.get(name)
        if r is None:
            continue
        out.append("")
        out.append(f"{_NAMES[name]}:")
        if not r["crossings"]:
            out.append("  no unstable speeds crossed")
        if "end_max_multiplier" in r:
            m = r["end_max_multiplier"]
            grows = f"x{m:.3g}" if m is not None and math.isfinite(m) else "beyond x1e308"
            out.append(f"  but not held at {_rpm(result['end_rpm'])}: a disturbance grows "
                       f"{grows} every cycle there (below the low-speed floor nothing is "
                       "counted as crossed)")
        if r.get("held_at_end", True) is None:
            out.append(f"  whether {result['end_rpm']:.3g} rpm holds it is not known: that speed is "
                       "outside what the method can resolve")
        for c in r["crossings"]:
            grow = c["simulated_amplification"] or c["amplification"]
            out.append(f"  unstable from {_rpm(c['speed_from_rpm'])} to {_rpm(c['speed_to_rpm'])}:"
                       f" {_seconds(c['seconds'])} s, {_cycles(c['cycles'])}, a disturbance grows "
                       f"{_growth(grow)} (estimate {_growth(c['amplification'])})")
        if r["crossings"]:
            out.append(f"  ramp at least {_rate(r['min_rate_rpm_s'])} rpm/s to keep each crossing "
                       f"under x{result['factor']:g}" + ("" if r["ok"] else "  <- NOT MET"))
        out.append("  " + r["rundown"])
    out.append("")
    out.append("Note: " + result["note"])
    if result.get("inverted", {}).get("crossings"):
        out.append("The inverted position cannot be held while the drive runs up below its lower "
                   "edge; bring it up by hand or a catch only after the speed is in its window.")
    out.append("")
    out.append("Safety:")
    out.extend(f"  - {c}" for c in CAUTIONS)
    return "\n".join(out) + "\n"


def lean_text(chart: dict, title: str = "", units: str = "metric") -> str:
    """The lean chart in words: the lean at the ends of each curve, where each stops, the
    averaging's slope, the cautions."""
    out = [title or "Lean chart", "=" * len(title or "Lean chart"),
           "The held orbit's mean lean per link (deg) when the drive axis is tilted in the "
           "swing plane; a tilt out of that plane does not enter this planar model.", ""]
    for by, axis, unit, at in (("by_tilt", "tilt_deg", "deg of tilt", "{:g}"),
                               ("by_speed", "speed_rpm", "rpm", "{:,.0f}")):
        if by == "by_speed":
            out.append(f"Against speed at {chart['speed_tilt_deg']:g} deg of tilt, stroke "
                       f"{_mm(chart['stroke_m'], units)}:")
        else:
            out.append("Against the drive's tilt:")
        for name in ("inverted", "hanging"):
            curve = chart[by][name]
            held = [(x, v) for x, v in zip(chart[axis], curve["lean_deg"]) if v is not None]
            if not held:
                out.append(f"  {name}: no held orbit on this axis")
                continue
            (x0, v0), (x1, v1) = held[0], held[-1]
            leans = lambda v: ", ".join(f"{a:+.2f}" for a in v)  # noqa: E731
            out.append(f"  {name}: {leans(v0)} deg at {at.format(x0)} {unit} .. {leans(v1)} deg "
                       f"at {at.format(x1)} {unit}")
            for end in curve["ends"]:
                if end:
                    why = "unstable" if end["why"] == "unstable" else "no orbit found (the lean runs away)"
                    out.append(f"    stops at {at.format(end['at'])} {unit}: {why}")
        out.append("")
    est = chart["estimate"]
    out.append(f"Kapitza's averaging (one equivalent link, kappa = {est['kappa']:.3g}): lean per "
               "degree of tilt about "
               + (f"{est['inverted']:.3g} inverted, " if est["inverted"] else
                  "none inverted (kappa <= 1: not held), ")
               + f"{est['hanging']:.3g} hanging")
    out.append("")
    out.append("Safety:")
    out.extend(f"  - {c}" for c in CAUTIONS)
    return "\n".join(out) + "\n"
