"""The dist/ that build_scripts/test.sh built from this very tree just before pytest.

test.sh exports SHAKESTILL_DIST_FRESH=1 after its build, so tests that only need *a* build of
the current sources read that one instead of building again (each build is a minute or more of
CPU on CI's two cores). Without the flag (a developer's dist/ may be stale) they build their own.
"""

from __future__ import annotations

import os
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
