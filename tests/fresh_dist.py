"""The dist/ that build_scripts/test.sh built from this very tree just before pytest, and the
second build of the same sources from a copy at another path that it ran beside the first.

test.sh exports SHAKESTILL_DIST_FRESH=1 after its build, so tests that only need *a* build of
the current sources read that one instead of building again (each build is a minute or more of
CPU on CI's two cores). Without the flag (a developer's dist/ may be stale) they build their own.
With SHAKESTILL_DIST_SECOND too (the folder of the second build), tests/test_build.py compares
the two instead of making the second itself; a build runs one process at a time, so on two
cores the two overlap. `python tests/fresh_dist.py FOLDER` makes the copy test.sh builds from
(FOLDER/elsewhere/checkout, printed) before both builds start.
"""

from __future__ import annotations

import os
import shutil
import sys
from pathlib import Path

TOP = Path(__file__).resolve().parent.parent
DIST = TOP / "dist"


def fresh_dist() -> Path | None:
    """dist/ when test.sh has just built it from this tree, else None."""
    if os.environ.get("SHAKESTILL_DIST_FRESH") != "1":
        return None
    if not (DIST / "site" / "build-info.json").is_file():
        return None
    return DIST


def second_dist() -> Path | None:
    """The second build test.sh made from a copy of this tree at another path, else None
    (no fresh dist/, no second folder named, or that build did not finish)."""
    folder = os.environ.get("SHAKESTILL_DIST_SECOND")
    if fresh_dist() is None or not folder:
        return None
    if not (Path(folder) / "site" / "build-info.json").is_file():
        return None
    return Path(folder)


def checkout(source: Path, dest: Path) -> Path:
    """A copy of what the build reads, as a fresh clone would hold it."""
    dest.mkdir(parents=True)
    for name in ("pyproject.toml", "README.md", "package.json", "package-lock.json"):
        shutil.copyfile(source / name, dest / name)
    ignore = shutil.ignore_patterns("__pycache__", "*.egg-info")
    for name in ("pycore", "site", "build_scripts"):
        shutil.copytree(source / name, dest / name, ignore=ignore)
    (dest / "node_modules").symlink_to(TOP / "node_modules")
    (dest / "build").mkdir()
    (dest / "build" / "cache").symlink_to(TOP / "build" / "cache")  # pinned wheels, no refetch
    return dest


if __name__ == "__main__":
    print(checkout(TOP, Path(sys.argv[1]).resolve() / "elsewhere" / "checkout"))
