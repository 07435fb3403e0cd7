"""The long fuzz run: damaged rig files, share links and CSV logs through the entry points,
with counts printed: tried / clean answers / clean rejections / crashes / hangs.

    python bench/fuzz_long.py [--rigs 100000] [--links 20000] [--logs 5000]
                              [--numbers 5000] [--seed 1] [--check-every 1]

A rig file is read and validated (the CLI's reader) and every one that loads is checked in
full (the operating check with its windows; ``--check-every N`` checks every N-th one
to shorten a run). Damaged bytes rarely leave a file that loads, so a second block keeps
the file's shape and changes its numbers (``fuzzcases.random_changes``: scaled by 1e-9 ..
1e9, or 0, -0, NaN, infinities, denormals, 1e300, or the waveform swapped), and every one of
those that loads is checked in full. A crash is any exception other than
a clean rejection (RigError); a hang is a case over HANG_SECONDS. Not part of CI.
"""

from __future__ import annotations

import argparse
import json
import random
import resource
import sys
import time
import traceback
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests"))

import fuzzcases as fc  # noqa: E402
import shakestill as ss  # noqa: E402
from shakestill.fit.logfile import read_angle_log  # noqa: E402
from shakestill.model import share  # noqa: E402
from shakestill.model.rigfile import loads_rig  # noqa: E402
from shakestill.model.safejson import decode_text  # noqa: E402

HANG_SECONDS = 5.0
MEMORY_BYTES = 4 * 1024 ** 3  # address space per run: a blow-up is a MemoryError (a crash), not the OOM killer


class Tally:
    def __init__(self, name: str):
        self.name, self.tried, self.answered, self.rejected = name, 0, 0, 0
        self.crashes, self.hangs = [], []

    def run(self, case, fn) -> None:
        self.tried += 1
        start = time.perf_counter()
        try:
            fn(case)
            self.answered += 1
        except ss.RigError:
            self.rejected += 1
        except (Exception, MemoryError):  # noqa: BLE001  (the point is to count them)
            self.crashes.append((case, traceback.format_exc(limit=3)))
        if time.perf_counter() - start > HANG_SECONDS:
            self.hangs.append(case)

    def line(self) -> str:
        return (f"{self.name:10s} tried {self.tried:7d}  answered {self.answered:7d}  "
                f"clean rejections {self.rejected:7d}  crashes {len(self.crashes):3d}  "
                f"hangs {len(self.hangs):3d}")


SHOWN = 10  # cases printed per kind


def _shown(case) -> str:
    """A damaged text's start, or the changes made to a rig's numbers."""
    return repr(case[0] if isinstance(case, tuple) else case[:120])


def main() -> int:
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--rigs", type=int, default=100_000)
    p.add_argument("--links", type=int, default=20_000)
    p.add_argument("--logs", type=int, default=5_000)
    p.add_argument("--numbers", type=int, default=5_000)
    p.add_argument("--seed", type=int, default=1)
    p.add_argument("--check-every", type=int, default=1)
    args = p.parse_args()
    resource.setrlimit(resource.RLIMIT_AS, (MEMORY_BYTES, MEMORY_BYTES))
    rnd = random.Random(args.seed)
    sources = [fc.rig_text(), fc.two_link_text()]
    rigs, links, logs = Tally("rig files"), Tally("links"), Tally("logs")
    numbers = Tally("numbers")
    loaded = [0]

    def rig_case(data: bytes) -> None:
        rig = loads_rig(decode_text(data, "(file)"))
        loaded[0] += 1
        if loaded[0] % args.check_every == 0:
            ss.check(rig)

    start = time.perf_counter()
    for k in range(args.rigs):
        rigs.run(fc.damage(sources[k % 2], rnd), rig_case)
        if (k + 1) % 10_000 == 0:
            print(rigs.line(), f"({time.perf_counter() - start:.0f} s)", flush=True)
    shapes = [json.loads(text) for text in sources]
    for k in range(args.numbers):
        data = shapes[k % 2]
        changes = fc.random_changes(data, rnd)
        numbers.run((changes, fc.rig_bytes(fc.renumbered(data, changes))),
                    lambda case: ss.check(loads_rig(decode_text(case[1], "(file)"))))
        if (k + 1) % 1_000 == 0:
            print(numbers.line(), f"({time.perf_counter() - start:.0f} s)", flush=True)
    for _ in range(args.links):
        links.run(fc.damaged_link(rnd), share.decode)
    for _ in range(args.logs):
        logs.run(fc.damage(fc.log_text(), rnd),
                 lambda data: read_angle_log(decode_text(data, "--log"), 1))
    for t in (rigs, numbers, links, logs):
        print(t.line())
        for case, trace in t.crashes[:SHOWN]:
            print(f"  crash on {_shown(case)}:\n{trace}")
        for case in t.hangs[:SHOWN]:
            print(f"  hang on {_shown(case)}")
    print(f"full checks run: {loaded[0] // args.check_every}; seed {args.seed}; "
          f"{time.perf_counter() - start:.0f} s")
    return 1 if any(t.crashes or t.hangs for t in (rigs, numbers, links, logs)) else 0


if __name__ == "__main__":
    sys.exit(main())
