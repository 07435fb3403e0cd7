"""Shakestill: plan and check rigs with a pendulum on a vertically driven pivot.

Pure Python (standard library only at run time), so the same engine runs on
CPython and in Pyodide. See DEVELOPERS.md for the layers.
"""

from .model.version import VERSION as __version__

from .motion.lean import check  # the vertical check unless the drive is off vertical
from .model.demo import demo_rig, demo_rig_dict
from .model.drive import PivotState, harmonics, peak_accel_m_s2, pivot
from .equilibria.estimates import effective_potential_J, estimates
from .equilibria.cycle import monodromy
from .equilibria.floquet import Settings, Stability, stability
from .model.linear import chain, linearise
from .model.properties import properties
from .model.rig import Drive, Limits, Link, PointMass, Problem, Rig, RigError, with_operating_point
from .model.rigfile import dumps_rig, load_rig, loads_rig, rig_from_dict, rig_to_dict, save_rig
from .equilibria.windows import window
# loads() and tolerance() stay in their modules: a package attribute of the same name would
# hide the submodules shakestill.loads and shakestill.tolerance.
from .motion.basin import basin_map
from .motion.scenario import Jump, Knock, Scenario
from .motion.simulation import simulate

__all__ = [
    "__version__", "check", "demo_rig", "demo_rig_dict", "PivotState", "harmonics",
    "peak_accel_m_s2", "pivot", "effective_potential_J", "estimates", "Settings", "Stability",
    "monodromy", "stability", "chain", "linearise", "properties", "Drive", "Limits", "Link",
    "PointMass", "Problem", "Rig", "RigError", "dumps_rig", "load_rig", "loads_rig",
    "rig_from_dict", "rig_to_dict", "save_rig", "with_operating_point", "window",
    "basin_map", "Jump", "Knock", "Scenario", "simulate",
]
