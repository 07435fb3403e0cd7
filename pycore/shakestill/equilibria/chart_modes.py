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
from ..model.modes import STRONG_MIXING, damper_mixing
from ..model.rig import Link, PointMass
from ..numerics.linalg import eigvals
from .chart_rows import (CHART_RTOL, CHART_SPEED_STEP, Row, line_edges, predict, row_line,
                         row_settings)
from .confirm import confirm_edges
from .floquet import modes_decouple
from .lines import Edge, Probe, edge_between, speed_points, walk

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


def damped_hanging_frequencies_hz(model: Model) -> tuple[float, ...]:
    """The hanging chain's free oscillation frequencies with its joint dampers, ascending:
    the eigenvalues lambda of z'' + (X^T D X) z' + g diag(1 / L) z = 0 (the sway-mode
    coordinates) with positive imaginary part, Im lambda / 2 pi; an overdamped mode has none.
    Where the dampers mix the modes (``modes_predict`` false) the chain's tongues sit near
    twice these, not the undamped modes' (a heavy damper on a short last link: 3.31 Hz
    where the undamped modes have 2.93 and 4.35)."""
    modes, g = model.modes, model.rig.g_m_s2
    n = modes.count
    companion = [[1.0 if j == i + n else 0.0 for j in range(2 * n)] for i in range(n)]
    companion += [[-g / modes.lengths_m[i] if j == i else 0.0 for j in range(n)]
                  + [-modes.cross_damping[i][j] for j in range(n)] for i in range(n)]
    return tuple(sorted(lam.imag / (2 * math.pi) for lam in eigvals(companion) if lam.imag > 0))


def modes_predict(model: Model) -> bool:
    """True if several links are charted by their sway modes (exact, or confirmed by the
    chain's monodromy); False if the dampers mix the modes too much and the chart walks
    the chain exactly."""
    return damper_mixing(model.modes, model.rig.g_m_s2) <= STRONG_MIXING


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
        aimed, checks = _aimed(predicted, near, eq)
        checks = _merged(checks + _unpredicted(predicted, near, eq))
        prefix: list[Edge] = []
        confirmed = confirm_edges(exact, aimed, at_lo[eq], lo, hi, rtol=CHART_RTOL,
                                  prefix=prefix)
        for a, b in checks:  # the islands left out of the aim
            if confirmed is not None:
                confirmed = _island(exact, confirmed, at_lo[eq], a, b, prefix)
        if confirmed is None:  # follow the exact neighbours where they agree, else walk
            guide = predict(near[0][0], near[1][0], eq, first.y) if len(near) == 2 else None
            confirmed = _walk_on(exact, prefix, hi) if guide is None and prefix else None
            if confirmed is None:
                s0, confirmed = line_edges(exact, lo, hi, guide)
                at_lo[eq] = s0.stable
        edges[eq] = confirmed
        count += exact.count
    return Row(first.y, lo, hi, edges, at_lo, count), predicted


def _island(exact: Probe, edges: tuple[Edge, ...], stable_at_lo: bool, a: float, b: float,
            prefix: list[Edge]) -> tuple[Edge, ...] | None:
    """The confirmed row, checked where it left out an island the modes show from a to b:
    unchanged if the exact verdict in its middle is the row's there; else with the island's
    two edges, each found between that middle and an end of the modes' island where the
    exact verdict is the row's (the dampers shrink the island they do not close). None if
    the ends do not bear that out (``prefix`` then holds the edges before the island)."""
    x = (a * b) ** 0.5
    around = _verdict(edges, stable_at_lo, x)
    sx = exact(x)
    if sx.stable == around:
        return edges
    sa, sb = exact(a), exact(b)
    if sa.stable != around or sb.stable != around or any(a <= e.x <= b for e in edges):
        prefix[:] = [e for e in edges if e.x < a]
        return None
    inner = (edge_between(exact, (a, sa), (x, sx), rtol=CHART_RTOL),
             edge_between(exact, (x, sx), (b, sb), rtol=CHART_RTOL))
    return tuple(sorted(edges + inner, key=lambda e: e.x))


def _verdict(edges: tuple[Edge, ...], stable_at_lo: bool, x: float) -> bool:
    """A row's verdict at x from its edges."""
    before = [e for e in edges if e.x < x]
    return before[-1].gained if before else stable_at_lo


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


# An exact edge within MATCH (relative) of a modal edge of its kind in the same row is that
# edge moved by the dampers (their shift is up to ~1e-2); a modal edge within NEAR of one
# in a neighbour row is the same edge there (rows are a small step of y apart).
MATCH = 0.02
NEAR = 0.1


def _aimed(predicted: Row, near: tuple[tuple[Row, Row], ...],
           eq: str) -> tuple[tuple[Edge, ...], list[tuple[float, float]]]:
    """(edges to confirm, islands left out: their modal ends): each modal edge moved by the
    exact-to-modal ratio of the same edge in the nearest rows (interpolated in y): the
    dampers' shift of an edge changes slowly from row to row, so the aim lands well inside
    the tightest confirmation bracket. Edges are matched one by one (nearest of their kind), so an edge the exact rows
    lack does not keep the others from their shift. A stable or unstable stretch between two
    modal edges that no neighbour's exact row has (the dampers close a narrow island the
    modes show) is left out of the aim, and its ends are returned to be checked
    (``_island``)."""
    own = predicted.edges[eq]
    pairs = [pair for pair in near if pair[0].speed_min == predicted.speed_min]
    shifts = [[_shift(exact, modal, eq, e) for exact, modal in pairs] for e in own]
    aimed, checks, k = [], [], 0
    while k < len(own):
        if k + 1 < len(own) and _absent(shifts[k]) and _absent(shifts[k + 1]):
            checks.append((own[k].x, own[k + 1].x))
            k += 2
            continue
        aimed.append(Edge(own[k].x * _ratio(predicted.y, pairs, shifts[k]), own[k].gained))
        k += 1
    return tuple(aimed), checks


def _unpredicted(predicted: Row, near: tuple[tuple[Row, Row], ...],
                 eq: str) -> list[tuple[float, float]]:
    """Islands of the neighbours' exact rows that this row's modes do not show (the
    prediction's verdict in the island's middle is the other one, and no modal edge lies
    within MATCH of it), widened by MATCH, to be checked (``_island``): where the dampers
    move a tongue's tip in y (the modes close it a row sooner than the chain does) the exact
    neighbour has a tongue that the row's prediction lacks."""
    own = predicted.edges[eq]
    out = []
    for exact, _ in near:
        if exact.speed_min != predicted.speed_min:
            continue
        edges = exact.edges[eq]
        for e, f in zip(edges, edges[1:]):
            a, b = e.x * (1 - MATCH), f.x * (1 + MATCH)
            shown = _verdict(own, predicted.stable_at_min[eq], (e.x * f.x) ** 0.5) == e.gained
            if not shown and not any(a <= g.x <= b for g in own):
                out.append((max(a, predicted.speed_min), min(b, predicted.speed_max)))
    return out


def _merged(spans: list[tuple[float, float]]) -> list[tuple[float, float]]:
    """Overlapping spans joined, in order of speed."""
    out: list[tuple[float, float]] = []
    for a, b in sorted(spans):
        if out and a <= out[-1][1]:
            out[-1] = (out[-1][0], max(out[-1][1], b))
        else:
            out.append((a, b))
    return out


def _shift(exact: Row, modal: Row, eq: str, e: Edge) -> float | None | bool:
    """In a neighbour row: exact / modal position of the modal edge matching ``e``; False
    if that modal edge has no exact partner there; None if no modal edge matches ``e``."""
    m = _nearest(modal.edges[eq], e, NEAR)
    if m is None:
        return None
    x = _nearest(exact.edges[eq], m, MATCH)
    return False if x is None else x.x / m.x


def _nearest(edges: tuple[Edge, ...], e: Edge, within: float) -> Edge | None:
    """The edge of ``e``'s kind nearest to it, if within ``within`` relative."""
    same = [f for f in edges if f.gained == e.gained and abs(f.x / e.x - 1) <= within]
    return min(same, key=lambda f: abs(f.x - e.x), default=None)


def _absent(shifts: list) -> bool:
    """True if the neighbours that show this edge in their modes all lack it exactly."""
    votes = [s for s in shifts if s is not None]
    return bool(votes) and all(s is False for s in votes)


def _ratio(y: float, pairs: tuple[tuple[Row, Row], ...], shifts: list) -> float:
    """The neighbours' exact-to-modal ratios of an edge, interpolated in y (1 if none)."""
    known = [(exact.y, r) for (exact, _), r in zip(pairs, shifts)
             if r is not None and r is not False]
    if not known:
        return 1.0
    if len(known) == 1 or known[0][0] == known[1][0]:
        return known[0][1]
    (y0, r0), (y1, r1) = known
    return r0 + (y - y0) / (y1 - y0) * (r1 - r0)


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
