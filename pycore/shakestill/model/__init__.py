"""The rig model: what a rig is and what follows from its numbers alone.

``units`` text with units into SI; ``rig`` the frozen dataclasses and their
problems; ``rigfile`` the rig file read (validated, every problem named) and
written; ``demo`` the built-in demo rig; ``share`` share-link fragments;
``drive`` pivot motion and its harmonics; ``linear`` the chain's mass
coupling and its linearised M, D, K; ``properties`` derived mass properties;
``safety`` the cautions shown with every result; ``version``.
"""
