"""The rigs that stand for a rig's whole uncertainty set (its ``spreads``), and the wander of
its operating point.

One link: the linearised equation J q'' + c q' + (g + y_p'') k q = 0 depends on
the rig only through the equivalent length l = J / k, the damping rate
gamma = c / (2 J), g and the drive's shape. Each stability edge moves
monotonically with l and gamma over the ranges that matter
(tests/test_plan.py shows it), so the corners of the box
[l_min, l_max] x [gamma_min, gamma_max] (x g, x the drive's shape) bound the
region: the set is those corners, each an equivalent simple pendulum (a point
mass at l on a massless rod). The extremes of l and gamma over the box of the
spread numbers are found over every corner of that box (l has an interior
minimum in a mass's position, so each corner's best is then polished by a
golden search along every number).

Several links: no such reduction holds with damping, so the set is the rigs
attaining the extremes of each sway mode's equivalent length 1 / lambda_i
(``model.modes``) and of the joints' damping among the box's corners and
SAMPLED_RIGS interior rigs, plus the nominal rig; the result says so and how
many rigs were tried.

The corners are scored on the chain's mass properties and sway modes only (cheap);
each rig kept in the set is derived once (``model.derived.derive``) and its Model
handed to the charts and the exact edges.
"""

from __future__ import annotations

import itertools
import random
from dataclasses import dataclass, replace

from ..model.derived import Model, derive
from ..model.modes import modes
from ..model.properties import properties
from ..model.rig import Link, PointMass, Rig, max_stroke_m
from ..model.spreads import OPERATING_PATHS, number_at, split_path, with_number
from ..numerics.roots import golden_max

MAX_CORNERS = 1024  # all corners up to 10 spread numbers; a seeded sample of corners beyond
SAMPLED_RIGS = 16  # interior rigs tried for several links (seeded: the same every run)
POLISH_SWEEPS = 2  # golden searches along every number, per extreme (one link)
# Numbers that do not enter the linear stability (air drag, Coulomb friction, the carriage)
IDLE = ("drag_coefficient", "frontal_area_m2", "air_density_kg_m3", "joint_friction_N_m",
        "carriage_mass_kg")
DRIVE_SHAPE = ("rod_length_m", "samples_m")  # enter through the waveform: kept as corners


@dataclass(frozen=True)
class RigSet:
    """Rigs whose regions bound the region of every rig of the set."""

    rigs: tuple[Rig, ...]
    models: tuple[Model, ...]  # each rig derived once
    labels: tuple[dict, ...]  # what each rig stands for (plain data)
    method: str  # in words: corners, or extremes plus samples
    tried: int  # parameter vectors evaluated
    idle: tuple[str, ...]  # spread paths that do not enter the stability
    max_mass_kg: float  # the heaviest pendulum plus carriage of the set (for the drive force)


def rig_spreads(rig: Rig):
    """(path, low, high) of every spread number that is not the operating point."""
    return [(s.path, *s.range(number_at(rig, s.path))) for s in rig.spreads
            if s.path not in OPERATING_PATHS]


def wander(rig: Rig, speed_rpm: float, stroke_m: float) -> tuple[float, float, float, float]:
    """(speed low, speed high, stroke low, stroke high) the operating point wanders over."""
    by_path = {s.path: s for s in rig.spreads}
    v = by_path["drive.speed_rpm"].range(speed_rpm) if "drive.speed_rpm" in by_path else (
        speed_rpm, speed_rpm)
    s = by_path["drive.stroke_m"].range(stroke_m) if "drive.stroke_m" in by_path else (
        stroke_m, stroke_m)
    return v[0], v[1], s[0], s[1]


def _apply(rig: Rig, paths, values) -> Rig:
    for path, value in zip(paths, values):
        rig = with_number(rig, path, value)
    return rig


def _corners(box):
    n = len(box)
    if 2 ** n <= MAX_CORNERS:
        return list(itertools.product(*[(lo, hi) for _, lo, hi in box]))
    pick = random.Random(1)
    return [tuple(pick.choice((lo, hi)) for _, lo, hi in box) for _ in range(MAX_CORNERS)]


def _mass(rig: Rig) -> float:
    return properties(rig).total_mass_kg + rig.drive.carriage_mass_kg


def _one_link_reduced(rig: Rig):
    p = properties(rig)
    J = p.inertia_about_pivot_kg_m2
    return p.l_eq_m, rig.links[0].joint_damping_N_m_s / (2 * J)


def equivalent_rig(rig: Rig, length_m: float, rate_1_s: float) -> Rig:
    """A simple pendulum (1 kg at ``length_m`` on a massless rod) with damping rate
    ``rate_1_s``: the same linear stability as any one-link rig of that l and gamma."""
    given = frozenset(("length_m", "point_masses", "joint_damping_N_m_s"))
    link = Link(length_m, 0.0, (PointMass(1.0, length_m, given=frozenset(("mass_kg", "at_m"))),),
                0.0, 2 * rate_1_s * length_m ** 2, 0.0, given)
    return replace(rig, links=(link,), spreads=(), title=f"equivalent of {rig.title}".strip())


def _polish(rig: Rig, box, start, key, sign, count):
    """Coordinate-wise golden search from ``start`` for the extreme (sign +1: max) of key;
    ``count[0]`` counts the rigs evaluated."""
    x = list(start)
    paths = [p for p, _, _ in box]
    for _ in range(POLISH_SWEEPS):
        for i, (_, lo, hi) in enumerate(box):
            if hi <= lo:
                continue

            def f(v, i=i):
                y = x[:i] + [v] + x[i + 1:]
                count[0] += 1
                return sign * key(_apply(rig, paths, y))
            best, value = golden_max(f, lo, hi, xtol=1e-9 * max(abs(lo), abs(hi)))
            ends = max(((f(e), e) for e in (lo, hi)))
            x[i] = best if value > ends[0] else ends[1]
    return tuple(x), key(_apply(rig, paths, x))


def rig_set(rig: Rig) -> RigSet:
    """The rigs standing for the set of ``rig``'s spreads (see the module's words), each
    derived once, all with the rig's limits up to the stroke every one of them resolves
    (a crank's reach is set by its rod: the shortest rod of the set)."""
    made = _rig_set(rig)
    top = min(max_stroke_m(r) for r in made.rigs + (rig,))
    limits = replace(rig.limits, stroke_m=(rig.limits.stroke_m[0], top))
    rigs = tuple(replace(r, limits=limits) for r in made.rigs)
    return replace(made, rigs=rigs, models=tuple(derive(r) for r in rigs))


def _rig_set(rig: Rig) -> RigSet:
    all_box = rig_spreads(rig)
    idle = tuple(p for p, _, _ in all_box if split_path(p)[-1][0] in IDLE)
    box = [b for b in all_box if b[0] not in idle]
    shape = [b for b in box if split_path(b[0])[-1][0] in DRIVE_SHAPE or b[0] == "g_m_s2"]
    body = [b for b in box if b not in shape]
    heavy = max((_mass(_apply(rig, [p for p, _, _ in all_box], c)) for c in _corners(all_box)),
                default=_mass(rig))
    if rig.n_links == 1:
        return _one_link_set(rig, body, shape, idle, heavy)
    return _sampled_set(rig, box, idle, heavy)


def _one_link_set(rig, body, shape, idle, heavy) -> RigSet:
    paths = [p for p, _, _ in body]
    corners = _corners(body) or [()]
    reduced = [_one_link_reduced(_apply(rig, paths, c)) for c in corners]
    count = [len(corners)]
    extremes = {}
    for name, index in (("length", 0), ("rate", 1)):
        for sign in (-1, 1):
            k = max(range(len(corners)), key=lambda j: sign * reduced[j][index])
            vec, value = corners[k], reduced[k][index]
            if body:
                vec, value = _polish(rig, body, corners[k],
                                     lambda r, i=index: _one_link_reduced(r)[i], sign, count)
            extremes[(name, sign)] = (value, dict(zip(paths, vec)))
    rigs, labels = [], []
    shape_paths = [p for p, _, _ in shape]
    for l_sign, r_sign, shape_corner in itertools.product((-1, 1), (-1, 1), _corners(shape) or [()]):
        length, attained = extremes[("length", l_sign)]
        rate = extremes[("rate", r_sign)][0]
        base = _apply(rig, shape_paths, shape_corner)
        eq = equivalent_rig(base, length, rate)
        if any(eq == r for r in rigs):
            continue
        rigs.append(eq)
        labels.append({"equivalent_length_m": length, "damping_rate_1_s": rate,
                       "length_attained_by": attained,
                       "rate_attained_by": extremes[("rate", r_sign)][1],
                       **dict(zip(shape_paths, shape_corner))})
    method = ("one link: the corners of (equivalent length, damping rate"
              + (", " + ", ".join(shape_paths) if shape_paths else "") + ") over "
              f"{len(corners)} corners of the spread box, each extreme polished along every "
              "number; edges move monotonically with both, so these corners bound the region")
    return RigSet(tuple(rigs), (), tuple(labels), method, count[0], idle, heavy)


def _modal_lengths(rig: Rig) -> tuple[float, ...]:
    return modes(rig).lengths_m


def _sampled_set(rig, box, idle, heavy) -> RigSet:
    paths = [p for p, _, _ in box]
    pick = random.Random(2)
    vectors = (_corners(box) if box else []) + [
        tuple(pick.uniform(lo, hi) for _, lo, hi in box) for _ in range(SAMPLED_RIGS if box else 0)]
    candidates = [(v, _apply(rig, paths, v)) for v in vectors]
    chosen = {0: (tuple(number_at(rig, p) for p in paths), rig)}
    if candidates:
        keys = [lambda r, i=i: _modal_lengths(r)[i] for i in range(rig.n_links)]
        keys.append(lambda r: sum(link.joint_damping_N_m_s for link in r.links))
        for key in keys:
            values = [key(r) for _, r in candidates]
            for k in (values.index(min(values)), values.index(max(values))):
                chosen.setdefault(k + 1, candidates[k])
        interior = len(vectors) - SAMPLED_RIGS
        for k in (interior, interior + 1):  # two interior rigs besides the extremes
            if 0 <= k < len(candidates):
                chosen.setdefault(k + 1, candidates[k])
    rigs = tuple(replace(r, spreads=()) for _, r in chosen.values())
    labels = tuple({"values": dict(zip(paths, v)), "modal_lengths_m": list(_modal_lengths(r))}
                   for v, r in chosen.values())
    method = (f"several links: the nominal rig and the rigs attaining the extremes of each modal "
              f"length and of the damping among {len(vectors)} rigs tried "
              f"({len(vectors) - (SAMPLED_RIGS if box else 0)} corners of the spread box, "
              f"{SAMPLED_RIGS if box else 0} seeded interior samples), plus two of those samples; "
              "monotonicity is not shown, so this is a sample of the set")
    return RigSet(rigs, (), labels, method, len(vectors), idle, heavy)
