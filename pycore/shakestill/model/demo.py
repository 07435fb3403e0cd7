"""The built-in demo rig: an invented bench scenario, not a measured rig.

A classroom demonstrator: a 250 mm aluminium rod with a small brass bob near
its tip, on a crank-driven carriage. Chosen so that the inverted position is
stable at the operating speed with a comfortable margin, and the charts show
the first tongues of the hanging position inside the speed limits.
"""

from __future__ import annotations

from .rig import Rig
from .rigfile import rig_from_dict

DEMO_RIG = {
    "format": "shakestill-rig",
    "version": 1,
    "title": "Classroom demonstrator (invented example)",
    "g_m_s2": 9.80665,
    "links": [
        {"length_m": 0.25, "rod_mass_kg": 0.04,
         "point_masses": [{"mass_kg": 0.025, "at_m": 0.24}],
         "extra_inertia_kg_m2": 0.0,
         "joint_damping_N_m_s": 3e-4, "joint_friction_N_m": 0.0}
    ],
    "drive": {"waveform": "crank", "stroke_m": 0.024, "rod_length_m": 0.08,
              "speed_rpm": 2700},
    "limits": {"speed_rpm": [120, 3600], "stroke_m": [0.0, 0.036]},
}


def demo_rig_dict() -> dict:
    """A fresh copy of the demo rig file."""
    import copy
    return copy.deepcopy(DEMO_RIG)


def demo_rig() -> Rig:
    return rig_from_dict(demo_rig_dict())
