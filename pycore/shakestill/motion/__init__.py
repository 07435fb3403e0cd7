"""Nonlinear motion of the chain on its moving pivot.

``dynamics`` the full equations of motion; ``speed`` drive speed against
time (ramps, tables); ``scenario`` what a run is asked (start, knocks, jumps)
and what it gives back; ``simulation`` the run itself (stick-slip, events,
frames, once-per-cycle samples); ``tolerance`` the largest knock and release
angle it recovers from; ``basin`` the map of starts it recovers from;
``loads`` drive force, power and link loads.
"""
