"""Charts of random rigs against solve_ivp: the verdict at random points of the rows.

    python bench/chart_audit.py [--links 2 3] [--rigs 100] [--rows 40] [--points 40]
                                [--seed 1] [--save-bad DIR]

Each rig is drawn at random (one to three links: rods with a tip mass, lengths 5-30 cm,
joints damped by 10^U(-4.5, -2) N m s with probability 0.8; a sine or slider-crank drive;
speed and stroke limits drawn too), charted with ``rows`` rows, and at ``points`` random
speeds of random rows each equilibrium's chart verdict is compared with the largest
Floquet multiplier of the solve_ivp monodromy (tests/refsolvers.py, DOP853 rtol 1e-11).
Points within 1e-6 of an edge, or with |rho| within 1e-7 of 1 (undamped), are skipped.
Prints a JSON line per rig (links, drive, damper mixing, chart time, points, wrong
verdicts) and a summary; a rig with a wrong verdict is saved as a rig file under
``--save-bad``. Exits 1 if any verdict was wrong. Not part of CI (minutes); its figures
are quoted in DEVELOPERS.md.
"""

from __future__ import annotations

import argparse
import json
import random
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests"))
sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "pycore"))

import refsolvers as ref  # noqa: E402
import shakestill as ss  # noqa: E402
from shakestill.equilibria.chart import chart  # noqa: E402
from shakestill.model.modes import damper_mixing  # noqa: E402
from shakestill.model.derived import derive  # noqa: E402


def random_rig(rng: random.Random, links: list[int]) -> dict:
    n = rng.choice(links)
    lengths = [rng.uniform(0.05, 0.3) for _ in range(n)]
    chain = [ref.link(length, rng.uniform(0.005, 0.05), [(rng.uniform(0.002, 0.03), length)],
                      damping=10 ** rng.uniform(-4.5, -2) if rng.random() < 0.8 else 0.0)
             for length in lengths]
    if rng.random() < 0.5:
        drive = ref.sine(0.01, 2000.0)
    else:
        drive = ref.crank(0.01, rng.uniform(0.05, 0.3), 2000.0)
    limits = {"speed_rpm": [rng.uniform(100, 600), rng.uniform(2000, 8000)],
              "stroke_m": [0.0, rng.uniform(0.005, 0.03)]}
    return ref.rig(chain, drive, limits=limits)


def audit(data: dict, rows: int, points: int, rng: random.Random) -> dict:
    rig = ss.rig_from_dict(data)
    start = time.process_time()
    c = chart(rig, rows=rows)
    seconds = time.process_time() - start
    tried = wrong = 0
    for row, x, eq, held in ref.chart_points(c, rng, points):
        rho = max(abs(ref.multipliers(ref.monodromy(data, eq, speed_rpm=x, stroke_m=row.y,
                                                    rtol=1e-11, atol=1e-12))))
        if abs(rho - 1) < 1e-7:
            continue
        tried += 1
        wrong += int(held != bool(rho < 1))
    return {"links": len(data["links"]), "drive": data["drive"]["waveform"],
            "mixing": round(damper_mixing(derive(rig).modes, rig.g_m_s2), 4), "chart_s": round(seconds, 2),
            "points": tried, "wrong": wrong}


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--links", type=int, nargs="+", default=[2, 3])
    parser.add_argument("--rigs", type=int, default=100)
    parser.add_argument("--rows", type=int, default=40)
    parser.add_argument("--points", type=int, default=40)
    parser.add_argument("--seed", type=int, default=1)
    parser.add_argument("--save-bad", type=Path)
    args = parser.parse_args(argv)
    rng = random.Random(args.seed)
    points = wrong = wrong_rigs = 0
    for k in range(args.rigs):
        data = random_rig(rng, args.links)
        result = audit(data, args.rows, args.points, rng)
        print(json.dumps({"rig": k, **result}), flush=True)
        points += result["points"]
        wrong += result["wrong"]
        if result["wrong"]:
            wrong_rigs += 1
            if args.save_bad:
                args.save_bad.mkdir(parents=True, exist_ok=True)
                (args.save_bad / f"rig_{args.seed}_{k}.json").write_text(json.dumps(data))
    print(f"rigs {args.rigs}, points {points}, wrong verdicts {wrong} (in {wrong_rigs} rigs)")
    return 1 if wrong else 0


if __name__ == "__main__":
    raise SystemExit(main())
