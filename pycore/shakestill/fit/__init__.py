"""Checking the model against the real rig.

``logfile`` angle logs (CSV with units in the header), every bad cell named;
``fitting`` Levenberg-Marquardt of damping, friction or inertia to a log on
the full nonlinear simulation, with standard errors.
"""
