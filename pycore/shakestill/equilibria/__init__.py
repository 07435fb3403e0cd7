"""Stability of the upright and hanging equilibria under the drive (linear, Floquet).

``floquet`` the multipliers at one operating point (Hill for one link, the
monodromy for several); ``lines`` stability edges along a line in (speed,
stroke); ``windows`` the speed and stroke windows; ``estimates`` Kapitza's
closed forms; ``check`` the operating check (``shakestill check --json``);
``chart`` the stability chart's rows and boundaries; ``runup`` the
resonances crossed while the speed ramps (``ramp`` the growth through one,
simulated).
"""
