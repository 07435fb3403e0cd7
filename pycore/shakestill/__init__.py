"""Shakestill: plan and check rigs with a pendulum on a vertically driven pivot.

Pure Python (standard library only at run time), so the same engine runs on
CPython and in Pyodide. See DEVELOPERS.md for the layers.
"""

__version__ = "0.1.0"

from .check import check
from .demo import demo_rig, demo_rig_dict
from .drive import PivotState, harmonics, peak_accel_m_s2, pivot
from .estimates import effective_potential_J, estimates
from .floquet import Settings, Stability, monodromy, stability
from .linear import chain, linearise
from .properties import properties
from .rig import (Drive, Limits, Link, PointMass, Problem, Rig, RigError, dumps_rig, load_rig,
                  loads_rig, rig_from_dict, rig_to_dict, save_rig, with_operating_point)
from .windows import window
# loads() and tolerance() stay in their modules: a package attribute of the same name would
# hide the submodules shakestill.loads and shakestill.tolerance.
from .basin import basin_map
from .motion import Jump, Knock, Scenario, simulate

__all__ = [
    "__version__", "check", "demo_rig", "demo_rig_dict", "PivotState", "harmonics",
    "peak_accel_m_s2", "pivot", "effective_potential_J", "estimates", "Settings", "Stability",
    "monodromy", "stability", "chain", "linearise", "properties", "Drive", "Limits", "Link",
    "PointMass", "Problem", "Rig", "RigError", "dumps_rig", "load_rig", "loads_rig",
    "rig_from_dict", "rig_to_dict", "save_rig", "with_operating_point", "window",
    "basin_map", "Jump", "Knock", "Scenario", "simulate",
]
