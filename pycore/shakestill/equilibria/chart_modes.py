"""Chart rows of several links from their sway modes' own one-link rows.

Linearised, the chain splits into its sway modes, each a single pendulum of
equivalent length L_i and damping c_i (module ``model.modes``; Acheson 1993),
exactly so when no damping couples the modes. Each mode is given to the
one-link chart as a pendulum of its own (a point mass on a massless rod of
length L_i, damper c_i L_i^2, so that its equation is the mode's), and the
chain holds where every mode holds: a row's stable stretches are the
intersection of its modes'. A mode's row is walked with its own tongues'
spacing and costs a one-link row, so N links cost about N one-link charts; a mode
is left out of a row for an equilibrium where the modes before it (the longest
first) already leave no stable stretch (the upright chain of a short top link is
often held by no row that its longest mode holds).

Where joint dampers couple the modes the intersection is a prediction: every
edge is confirmed and placed by the chain's exact monodromy (module
``confirm``), and a row the exact method does not bear out is walked by it.
"""

from __future__ import annotations

import math
from dataclasses import replace
from typing import Callable, Iterator

from ..model.derived import Model, derive
from ..model.rig import Link, PointMass
from .chart_rows import (CHART_RTOL, CHART_SPEED_STEP, Row, line_edges, predict, row_line,
                         row_settings)
from .confirm import confirm_edges
from .floquet import modes_decouple
from .lines import Edge, Probe, speed_points, walk

RowSteps = Iterator[tuple[int, Row | None]]
Needed = Callable[[int, str], bool]  # (row index, equilibrium) -> chart that mode there?


def mode_models(model: Model, speed_min: float) -> tuple[Model, ...]:
    """Each sway mode as a one-link rig of the same drive and limits, its speeds starting
    at the chain's ``speed_min`` so that every mode's rows span the chain's."""
    rig = model.rig
    limits = replace(rig.limits, speed_rpm=(speed_min, rig.limits.speed_rpm[1]))
    out = []
    for length, damping in zip(model.modes.lengths_m, model.modes.damping):
        link = Link(length_m=length, point_masses=(PointMass(1.0, length),),
                    joint_damping_N_m_s=damping * length * length)
        out.append(derive(replace(rig, links=(link,), limits=limits)))
    return tuple(out)


def modal_row_steps(model: Model, speed_min: float, y_axis: str, equilibria,
                    row_steps: Callable[[Model, Needed], RowSteps]) -> RowSteps:
    """(row index, chain row) in the order ``row_steps`` computes each mode's rows.

    The modes' walkers run in step (``zip``), mode 0 first, so when mode i computes row j
    the rows j of the modes before it are known: ``needed`` tells it to leave out an
    equilibrium that they leave without a stable stretch there."""
    latest: dict[int, Row | None] = {}  # mode -> its row last computed

    def recorded(i: int, steps: RowSteps) -> RowSteps:
        for j, row in steps:
            latest[i] = row
            yield j, row

    def needed(i: int) -> Needed:
        return lambda j, eq: bool(_common_stable([latest[k] for k in range(i)], eq))

    walkers = [recorded(i, row_steps(mode, needed(i)))
               for i, mode in enumerate(mode_models(model, speed_min))]
    coupled = not modes_decouple(model)
    done: dict[int, tuple[Row, Row]] = {}  # row index -> (chain row, its modes' prediction)
    for computed in zip(*walkers):
        j = computed[0][0]
        rows = [row for _, row in computed]
        if any(row is None for row in rows):
            yield j, None
            continue
        below = max((i for i in done if i < j), default=None)
        above = min((i for i in done if i > j), default=None)
        near = tuple(done[i] for i in (below, above) if i is not None)
        row, predicted = chain_row(model, rows, y_axis, equilibria, coupled, near)
        done[j] = row, predicted
        yield j, row


def chain_row(model: Model, rows: list[Row], y_axis: str, equilibria, coupled: bool,
              near: tuple[tuple[Row, Row], ...] = ()) -> tuple[Row, Row]:
    """(the chain's row, its modes' prediction) from its modes' rows, confirmed exactly when
    ``coupled``. ``near``: the nearest computed (chain row, prediction) below and above, whose
    exact-to-modal shift corrects the prediction, and which the exact walk follows where the
    prediction is not borne out."""
    first = rows[0]
    lo, hi = first.speed_min, first.speed_max
    edges, at_lo, count = {}, {}, sum(r.evaluations for r in rows)
    for eq in equilibria:
        stretches = _common_stable(rows, eq)
        at_lo[eq] = bool(stretches) and stretches[0][0] <= lo
        found = []
        for a, b in stretches:
            if a > lo:
                found.append(Edge(a, True))
            if b < hi:
                found.append(Edge(b, False))
        edges[eq] = tuple(found)
    predicted = Row(first.y, lo, hi, dict(edges), dict(at_lo), count)
    if not coupled:
        return predicted, predicted
    for eq in equilibria:
        point = row_line(model, y_axis, first.y)[0]
        exact = Probe(model, eq, point, row_settings(model, point, lo, hi, eq, modal=False))
        aimed = _corrected(predicted, near, eq)
        prefix: list[Edge] = []
        confirmed = confirm_edges(exact, aimed, at_lo[eq], lo, hi, rtol=CHART_RTOL,
                                  prefix=prefix)
        if confirmed is None:  # follow the exact neighbours where they agree, else walk
            guide = predict(near[0][0], near[1][0], eq, first.y) if len(near) == 2 else None
            confirmed = _walk_on(exact, prefix, hi) if guide is None and prefix else None
            if confirmed is None:
                s0, confirmed = line_edges(exact, lo, hi, guide)
                at_lo[eq] = s0.stable
        edges[eq] = confirmed
        count += exact.count
    return Row(first.y, lo, hi, edges, at_lo, count), predicted


def _walk_on(exact: Probe, prefix: list[Edge], hi: float) -> tuple[Edge, ...] | None:
    """The confirmed edges, then an exact walk from just past the last of them (a prediction
    refused part-way: only the rest of the row is walked), or None if the verdict there is
    not the one that edge gained."""
    start = prefix[-1].x * (1 + 1e-6)  # edges are placed to CHART_RTOL (1e-8)
    s = exact(start)
    if not start < hi or s.stable != prefix[-1].gained:
        return None
    points = speed_points(exact.model, start, hi, step=CHART_SPEED_STEP)
    return tuple(prefix) + tuple(walk(exact, start, s, points, rtol=CHART_RTOL))


def _corrected(predicted: Row, near: tuple[tuple[Row, Row], ...], eq: str) -> tuple[Edge, ...]:
    """The modes' edges moved by the exact-to-modal ratio of the same edges in the nearest
    rows (interpolated in y), where those rows have the same edges as this one: the dampers'
    shift of an edge (up to ~1e-3) changes slowly from row to row, so the aim lands well
    inside the tightest confirmation bracket. Unchanged where no neighbour matches."""
    own = predicted.edges[eq]
    kinds = [e.gained for e in own]
    shifts = []
    for exact, modal in near:
        e, m = exact.edges[eq], modal.edges[eq]
        if [x.gained for x in e] == kinds == [x.gained for x in m] and \
                exact.stable_at_min[eq] == predicted.stable_at_min[eq] and \
                exact.speed_min == predicted.speed_min:
            shifts.append((exact.y, [a.x / b.x for a, b in zip(e, m)]))
    if not shifts:
        return own
    if len(shifts) == 1 or shifts[0][0] == shifts[1][0]:
        ratios = shifts[0][1]
    else:
        (y0, r0), (y1, r1) = shifts
        t = (predicted.y - y0) / (y1 - y0)
        ratios = [a + t * (b - a) for a, b in zip(r0, r1)]
    return tuple(Edge(e.x * r, e.gained) for e, r in zip(own, ratios))


def _common_stable(rows: list[Row | None], eq: str) -> list[tuple[float, float]]:
    """Where every one of these mode rows holds ``eq`` stable (everywhere for no rows); none
    if one of them is missing or left ``eq`` out (the modes before it held it nowhere)."""
    if any(row is None or eq not in row.edges for row in rows):
        return []
    if not rows:
        return [(-math.inf, math.inf)]
    return _intersection([row.stable_intervals(eq) for row in rows])


def _intersection(interval_sets: list[list[list[float]]]) -> list[tuple[float, float]]:
    """Where every set holds: the intersection of sorted lists of [a, b] intervals."""
    common = [(a, b) for a, b in interval_sets[0]]
    for intervals in interval_sets[1:]:
        out = []
        for a, b in common:
            for c, d in intervals:
                lo, hi = max(a, c), min(b, d)
                if lo < hi:
                    out.append((lo, hi))
        common = out
    return common
