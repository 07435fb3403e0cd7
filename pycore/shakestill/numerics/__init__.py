"""Numerical tools, bottom layer, knowing nothing of rigs.

``linalg`` small dense matrices (inverse, det, eigenvalues); ``roots``
Brent's root finder and maximiser; ``hill`` Hill's infinite determinant;
``rk`` (with ``dop853_tableau``) the fixed-step 8th-order fundamental matrix of
a linear chain; ``magnus`` the sixth-order Magnus trace of Hill's equation;
``integrate`` adaptive DOP853 with dense output and events.
"""
