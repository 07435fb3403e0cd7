"""Plain words for motion, tolerance and loads results, with the cautions.

Shared by the command line and the bridge (the page shows the same words).
"""

from __future__ import annotations

import math

from ..model.safety import CAUTIONS
from .shown import length_text, shown, text, unit_of


def _safety() -> list[str]:
    return ["", "Safety:"] + [f"  - {c}" for c in CAUTIONS]


def motion_text(motion, title: str = "") -> str:
    out = [title, "=" * len(title)] if title else []
    n = len(motion.end_state) // 2
    out.append(f"Simulated {motion.end_t_s:.3f} s: {motion.work.get('steps', 0)} steps "
               f"({motion.work.get('rejected', 0)} rejected), {len(motion.t_s)} frames, "
               f"{len(motion.strobe_t_s)} stroboscopic samples")
    if not motion.success:
        out.append(f"STOPPED EARLY: {motion.message}")
    last = next((e.kind for e in reversed(motion.events)
                 if e.kind in ("fell", "recovered", "rotation")), None)
    verdict = {"rotation": "went into rotation", "fell": "fell (left its band)",
               "recovered": "recovered", None: "stayed within its band"}[last]
    out.append(f"Outcome: {verdict}")
    if any(t >= 1 for t in motion.turns):
        out.append("  turns per link: " + ", ".join(f"{t:.1f}" for t in motion.turns))
    if motion.events:
        out.append("Events:")
        out.extend(f"  {e.t_s:9.4f} s  {e.kind:9s} {e.message}" for e in motion.events)
    q, w = motion.end_state[:n], motion.end_state[n:]
    out.append("End: angles " + ", ".join(f"{math.degrees(x):z.2f} deg" for x in q)
               + "; rates " + ", ".join(f"{x:z.3f} rad/s" for x in w))
    return "\n".join(out + _safety()) + "\n"


def _edge_words(name: str, value: str, edge: dict | None, estimate: str) -> list[str]:
    if edge is None:
        return [f"  {name}: {value}"]
    lines = [f"  {name}: {value}  (Kapitza estimate {estimate})"]
    if edge["first_failure"] is not None:
        lines.append(f"    found by scanning to the first failure and bisecting: within "
                     f"{edge['precision'] * 100:.2f}%, {edge['evaluations']} full runs")
    if edge["message"]:
        lines.append(f"    note: {edge['message']}")
    return lines


def tolerance_text(result: dict, basin: dict | None = None) -> str:
    out = ["Knock tolerance of the inverted position"]
    if not result["stable"]:
        out.append(f"  {result['message']}")
        return "\n".join(out + _safety()) + "\n"
    est = result["estimates"]
    out.append(f"  (recovered: no link passes the horizontal in {result['run_s']:.1f} s, "
               "starting at drive phase 0)")
    out += _edge_words("largest knock that recovers", f"{result['max_knock_rad_s']:.3f} rad/s",
                       result["knock"], f"{est['knock_rad_s']:.3f} rad/s")
    out += _edge_words("largest release angle that recovers",
                       f"{math.degrees(result['max_release_angle_rad']):.2f} deg",
                       result["release"], f"{math.degrees(est['release_angle_rad']):.2f} deg")
    out.append("  The estimates come from Kapitza's effective potential (Landau & Lifshitz, "
               "sec. 30): a guide, not the simulated answer.")
    if basin is not None:
        grid = basin["recovered"]
        share = sum(bool(v) for row in grid for v in row) / sum(len(row) for row in grid)
        out.append("")
        out.append(f"Recovery map: {len(basin['angles_rad'])} x {len(basin['rates_rad_s'])} starts, "
                   f"{share * 100:.0f}% recover; cell-to-cell mapping with "
                   f"{basin['refine']}x finer cells, {basin['cells_mapped']} cells")
        if basin.get("validation"):
            v = basin["validation"]
            out.append(f"  {v['summary']}" + (
                f" (edge {v['edge_agreement'] * 100:.0f}%, interior "
                f"{v['interior_agreement'] * 100:.0f}%)"
                if v["edge_agreement"] is not None and v["interior_agreement"] is not None
                else ""))
    return "\n".join(out + _safety()) + "\n"


def loads_text(result: dict, units: str = "metric") -> str:
    """Words for a loads result; forces, power, lengths and speeds in ``units``."""
    def q(value: float, kind: str) -> str:
        return text(value, kind, units)

    f, p = result["drive_force_N"], result["power_W"]
    out = [f"Loads over {result['cycles']} drive cycle(s) at {result['speed_rpm']:,.0f} rpm, "
           f"stroke {length_text(result['stroke_m'], units)}, pendulum {result['state']} "
           f"({result['equilibrium']})",
           f"  drive force: peak {q(f['peak'], 'force')}, RMS {q(f['rms'], 'force')}, mean "
           f"{q(f['mean'], 'force')} (weight {q(result['weight_N'], 'force')})",
           f"  drive power: peak {q(p['peak'], 'power')}, mean {q(p['mean'], 'power')}",
           f"  peak pivot acceleration: {q(result['peak_accel_m_s2'], 'acceleration')}"]
    if "guide_force_N" in result:  # a drive off vertical: the guide takes a sideways force
        s = result["guide_force_N"]
        out.insert(2, f"  sideways force on the guide (across the drive axis, tilted "
                      f"{result['axis_tilt_deg']:g} deg): peak {q(s['peak'], 'force')}, mean "
                      f"{q(s['mean'], 'force')}")
    for link in result["links"]:
        out.append(f"  link {link['link']}: axial compression up to "
                   f"{q(link['max_compression_N'], 'force')}, tension up to "
                   f"{q(link['max_tension_N'], 'force')}")
    if result["rotation"]:
        r = result["rotation"]
        out.append(f"  ROTATING: tip speed up to {text(r['tip_speed_m_s'], 'velocity', units, '.3g')}"
                   f", centripetal load up to {q(r['centripetal_load_N'], 'force')}")
    for flag in result["flags"]:
        out.append(("  LIMIT: " if flag["exceeded"] else "  limit: ") + flag_text(flag, units))
    if not result["success"]:
        out.append(f"  note: {result['message']}")
    return "\n".join(out + _safety()) + "\n"


# Each limit the loads are flagged against: its words and the kind of its numbers.
_FLAGS = {"max_force_N": ("peak drive force", "force"), "max_power_W": ("peak drive power", "power"),
          "max_accel_m_s2": ("peak pivot acceleration", "acceleration")}


def flag_text(flag: dict, units: str = "metric") -> str:
    """A loads flag in words, in the display units (the flag's own ``message`` stays SI)."""
    what, kind = _FLAGS[flag["limit"]]
    value, limit = text(flag["value"], kind, units), text(flag["limit_value"], kind, units)
    return f"{what} {value} " + (f"EXCEEDS the limit of {limit}" if flag["exceeded"]
                                 else f"is within the limit of {limit}")


def with_error(value: float, error: float) -> str:
    """``value +- error`` with the error to two significant digits and the value to the same
    decimal place (common practice, no source): 0.000899768, 6.59e-07 -> 0.00089977 +- 6.6e-07."""
    if not error > 0 or not math.isfinite(value):
        return f"{value:.6g} +- {error:.2g}"
    digits = math.floor(math.log10(abs(value))) - math.floor(math.log10(error)) + 2 \
        if value != 0 else 2
    return f"{value:#.{max(digits, 1)}g}".rstrip(".") + f" +- {error:.2g}"


# The kind of each number a fit may adjust (the last name of its path), for the display units.
_FIT_KINDS = {"joint_damping_N_m_s": "damping", "joint_friction_N_m": "torque",
              "extra_inertia_kg_m2": "inertia", "length_m": "length", "rod_mass_kg": "mass"}


def _fitted(p: dict, units: str) -> str:
    """"0.2 N m s -> 0.1873 +- 0.0021 N m s": start, fitted and its standard error, in the
    display units where the number's kind is known (else SI as the path names it)."""
    kind = _FIT_KINDS.get(p["path"].rsplit(".", 1)[-1])
    scale, unit = (1.0, "") if kind is None else (shown(1.0, kind, units)[0], " " + unit_of(kind, units))
    value, err = p["value"] * scale, p["std_error"] * scale
    fitted = (f"{value:.6g}{unit} (not determined by this log)" if not math.isfinite(err)
              else with_error(value, err) + unit)
    return f"{p['start'] * scale:.6g}{unit} -> {fitted}"


def fit_text(result: dict, reference: str = "inverted", units: str = "metric") -> str:
    """Words for a fit to a logged run (the dict of ``fit.fit_dict``); the start angles are
    given from the log's own zero, ``reference`` ("hanging" or "inverted"); the fitted
    numbers in ``units`` (metric or imperial)."""
    out = [f"Fit to a logged run: {result['samples']} samples, {result['iterations']} "
           f"iteration(s), {result['simulations']} simulations"]
    if result.get("skipped_columns"):  # none in a result from before the key
        out.append("Columns of the log not read: " + ", ".join(result["skipped_columns"]))
    if not result["converged"]:
        out.append(f"NOT SETTLED: {result['message']}; the numbers below are the best so far")
    out.append(f"Misfit (RMS angle): {math.degrees(result['rms_start_rad']):.4g} deg with the "
               f"rig's own numbers, {math.degrees(result['rms_rad']):.4g} deg fitted")
    out.append("Fitted numbers (start -> fitted +- standard error):")
    for p in result["parameters"]:
        out.append(f"  {p['path']}: {_fitted(p, units)}")
    zero = math.pi if reference == "hanging" else 0.0
    where = "the hanging position" if reference == "hanging" else "the upward vertical"
    out.append(f"Start of the run (fitted, from {where}, the log's zero): angles "
               + ", ".join(f"{math.degrees(q - zero):z.3f} deg"
                           for q in result["initial_angles_rad"])
               + "; rates " + ", ".join(f"{w:z.4f} rad/s" for w in result["initial_rates_rad_s"]))
    out.append("A fit describes this run: check the fitted rig against another logged run "
               "before relying on it.")
    return "\n".join(out + _safety()) + "\n"
