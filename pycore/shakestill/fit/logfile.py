"""Angle logs from the real rig: a table of time, link angles and (optionally) drive speed.

The text is comma-, semicolon- or tab-separated with one header row; lines
starting with ``#`` are comments. Header cells name a column and its unit,
either as a suffix or in brackets:

    t_s, angle1_deg, angle2_deg, speed_rpm        time (ms); angle (rad)

- time: ``t``/``time`` in s or ms (first sample is time zero of the run);
- angles: ``angle``/``theta`` (one link) or ``angle1``.. (one per link, all links),
  in deg or rad, measured from the ``reference`` position ("hanging": 0 with the
  pendulum hanging, or "inverted": 0 upright), same sense as the model's angles;
- drive speed: ``speed`` in rpm or Hz (optional; else the rig's own speed).

Other columns (a motor current, a sample counter, a note) are skipped and named in
``skipped_columns``: a logger's export rarely holds only what the fit reads.

Every problem is collected with a path like ``log[12].angle1_deg`` (the data row,
counted from 1) and the value, so a bad file is reported whole.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, replace

from ..model.rig import Problem, RigError

MAX_ROWS = 200_000  # a log longer than this is cut down before fitting, not read
MAX_PROBLEMS = 20  # a broken file is reported by its first problems
MAX_JITTER = 0.25  # largest deviation of a sample time from the even grid, in steps
MAX_ANGLE_RAD = 200 * math.pi  # 100 turns: a pendulum that went over the top for a while
_UNITS = {
    "time": {"s": 1.0, "ms": 1e-3},
    "angle": {"rad": 1.0, "deg": math.pi / 180.0},
    "speed": {"rpm": 1.0, "hz": 60.0},
}
_NAMES = {"t": "time", "time": "time", "angle": "angle", "theta": "angle", "speed": "speed"}
_HEADER = re.compile(r"^\s*([a-z]+)(\d*)\s*(?:_([a-z]+)|[(\[]\s*([a-z]+)\s*[)\]])?\s*$", re.I)
REFERENCE_ANGLE = {"inverted": 0.0, "hanging": math.pi}  # absolute angle of each zero


@dataclass(frozen=True)
class AngleLog:
    """A log in SI: times from zero, absolute angles from the upward vertical."""

    t_s: tuple[float, ...]
    angles_rad: tuple[tuple[float, ...], ...]  # per sample, one per link
    speed_rpm: tuple[float, ...] | None  # per sample, when logged
    reference: str
    step_s: float  # the even sampling step the times keep to
    skipped_columns: tuple[str, ...] = ()  # header cells of columns this does not read


def _is_number(text: str) -> bool:
    try:
        float(text)
    except ValueError:
        return False
    return True


def _column(cell: str, where: str, problems: list):
    """(kind, link index or None, factor) of a header cell, None if it is wrong; kind
    "other" for a column this does not read."""
    m = _HEADER.match(cell)
    name = _NAMES.get(m.group(1).lower()) if m else None
    if name is None:
        if not _is_number(cell):
            return "other", None, 1.0
        problems.append(Problem(where, f"{cell!r} is not a column name: the first row must name "
                                       "the columns: t_s (or ms), angle_deg / angle1_deg, "
                                       "angle2_deg, ... (or rad), and optionally speed_rpm (or Hz)"))
        return None
    unit = (m.group(3) or m.group(4) or "").lower()
    factors = _UNITS[name]
    if unit not in factors:
        problems.append(Problem(where, f"{cell!r} has no unit this reads: give {name} in "
                                       f"{' or '.join(factors)} (as {m.group(1)}_{next(iter(factors))})"))
        return None
    link = int(m.group(2)) - 1 if m.group(2) else None
    if name != "angle" and link is not None:
        problems.append(Problem(where, f"{cell!r}: only angles are numbered per link"))
        return None
    return name, link, factors[unit]


def read_angle_log(text: str, n_links: int, *, reference: str = "hanging") -> AngleLog:
    """Read a log for a rig of ``n_links`` links; raises RigError listing every problem."""
    if reference not in REFERENCE_ANGLE:
        raise ValueError(f"reference: {reference!r} is not 'hanging' or 'inverted'")
    lines = [(i + 1, ln) for i, ln in enumerate(text.splitlines())
             if ln.strip() and not ln.lstrip().startswith("#")]
    if len(lines) < 2:
        raise RigError([Problem("log", "has no data: give a header row and at least 10 rows "
                                       "of samples")])
    sep = next((s for s in (",", ";", "\t") if s in lines[0][1]), ",")
    problems: list[Problem] = []
    header = [c.strip() for c in lines[0][1].split(sep)]
    columns = [_column(c, f"log.header[{j}]", problems) for j, c in enumerate(header)]
    kinds = [c for c in columns if c]
    times = [j for j, c in enumerate(columns) if c and c[0] == "time"]
    speeds = [j for j, c in enumerate(columns) if c and c[0] == "speed"]
    angle_cols = {}
    for j, c in enumerate(columns):
        if c and c[0] == "angle":
            link = 0 if c[1] is None else c[1]
            if link in angle_cols or not 0 <= link < n_links:
                problems.append(Problem(f"log.header[{j}]", f"{header[j]!r}: the rig has "
                                        f"{n_links} link(s); give one angle column per link"))
            angle_cols[link] = j
    if len(times) != 1:
        problems.append(Problem("log.header", "needs exactly one time column (t_s or t_ms)"))
    if len(speeds) > 1:
        problems.append(Problem("log.header", "has more than one speed column"))
    skipped = tuple(header[j] or f"(unnamed column {j + 1})"  # a trailing separator, say
                    for j, c in enumerate(columns) if c and c[0] == "other")
    missing = [i + 1 for i in range(n_links) if i not in angle_cols]
    if kinds and missing:
        unread = f" (columns not read: {', '.join(map(repr, skipped))})" if skipped else ""
        problems.append(Problem("log.header", f"has no angle column for link(s) "
                                              f"{', '.join(map(str, missing))}: every link's "
                                              f"angle is needed{unread}"))
    if problems:
        raise RigError(problems[:MAX_PROBLEMS])
    rows = lines[1:]
    if len(rows) > MAX_ROWS:
        raise RigError([Problem("log", f"has {len(rows)} rows: at most {MAX_ROWS} are read "
                                       "(keep every k-th row)")])
    table = []
    for n, (line_no, line) in enumerate(rows, start=1):
        cells = [c.strip() for c in line.split(sep)]
        if len(cells) < len(header):
            problems.append(Problem(f"log[{n}]", f"line {line_no} has {len(cells)} values: "
                                                 f"{len(header)} are needed"))
            continue
        row = []
        for j, (cell, col) in enumerate(zip(cells, columns)):
            if col[0] == "other":
                row.append(None)
                continue
            try:
                value = float(cell) * col[2]
            except ValueError:
                value = math.nan
            if not math.isfinite(value):
                problems.append(Problem(f"log[{n}].{header[j]}", f"{cell!r} is not a finite "
                                                                 "number"))
            elif col[0] == "angle" and abs(value) > MAX_ANGLE_RAD:
                problems.append(Problem(f"log[{n}].{header[j]}", f"{cell!r} is not allowed: "
                                        f"angles beyond {MAX_ANGLE_RAD / (2 * math.pi):g} turns "
                                        "are not a logged swing (check the unit)"))
            row.append(value)
        table.append(row)
        if len(problems) >= MAX_PROBLEMS:
            break
    if problems:
        raise RigError(problems[:MAX_PROBLEMS])
    log = _from_table(table, times[0], [angle_cols[i] for i in range(n_links)],
                      speeds[0] if speeds else None, header, reference)
    return replace(log, skipped_columns=skipped)


def _from_table(table, t_col: int, a_cols: list[int], v_col, header, reference) -> AngleLog:
    if len(table) < 10:
        raise RigError([Problem("log", f"has {len(table)} rows of samples: at least 10 are "
                                       "needed for a fit")])
    t0 = table[0][t_col]
    ts = [row[t_col] - t0 for row in table]
    step = ts[-1] / (len(ts) - 1)
    problems = []
    for n in range(1, len(ts)):
        if not ts[n] > ts[n - 1]:
            problems.append(Problem(f"log[{n + 1}].{header[t_col]}",
                                    f"{table[n][t_col]:g} s is not allowed: times must increase"))
        elif abs(ts[n] - n * step) > MAX_JITTER * step:
            problems.append(Problem(f"log[{n + 1}].{header[t_col]}",
                                    f"{table[n][t_col]:g} s is off the even sampling step of "
                                    f"{step:.6g} s by more than {MAX_JITTER:g} of a step: "
                                    "samples must be (nearly) equally spaced"))
        if len(problems) >= MAX_PROBLEMS:
            break
    speeds = None
    if v_col is not None:
        speeds = tuple(row[v_col] for row in table)
        bad = [n for n, v in enumerate(speeds) if v < 0]
        problems += [Problem(f"log[{n + 1}].{header[v_col]}", f"{speeds[n]:g} rpm is not "
                             "allowed: speeds are at least 0") for n in bad[:MAX_PROBLEMS]]
    if problems:
        raise RigError(problems[:MAX_PROBLEMS])
    zero = REFERENCE_ANGLE[reference]
    angles = tuple(tuple(zero + row[j] for j in a_cols) for row in table)
    return AngleLog(tuple(ts), angles, speeds, reference, step)


def drive_stopped(log: AngleLog, where: str) -> AngleLog:
    """The log of a run with the drive standing still (a free decay): speed 0 throughout."""
    if log.speed_rpm is not None and any(v != 0.0 for v in log.speed_rpm):
        raise RigError([Problem(where, "the log has a speed column with a running drive: "
                                       "leave out 'drive stopped' or the speed column")])
    return replace(log, speed_rpm=(0.0,) * len(log.t_s))
