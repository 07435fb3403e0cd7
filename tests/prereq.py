"""What a test needs from the machine: skip locally when it is missing, fail under CI.

CI runs with CI=true on a fresh machine whose .ci/run installs every prerequisite, so a
missing one there is a broken set-up, never a reason to pass with fewer checks.
"""

from __future__ import annotations

import os

import pytest


def missing(reason: str):
    """Skip locally; fail under CI, where every prerequisite must be present."""
    if os.environ.get("CI") == "true":
        pytest.fail(f"missing prerequisite under CI: {reason}", pytrace=False)
    pytest.skip(reason)
