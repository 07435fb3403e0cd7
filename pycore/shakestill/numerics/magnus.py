"""Sixth-order Magnus integrator for Hill's equation u'' + p(t) u = 0 over one period.

One link (or one sway mode) with its damping taken out (u = exp(gamma t) q) is
Hill's equation; its stability needs only the monodromy's trace. A step's
Magnus exponent Omega is built from p at the three Gauss-Legendre nodes with the
commutator formula of Blanes, Casas & Ros (sixth order, three Gauss points; as given
in Blanes, Casas, Oteo & Ros, Phys. Rep. 470 (2009) 151, from memory; the tests check
it against solve_ivp and its sixth order):

    a1 = h A2, a2 = sqrt(15) h / 3 (A3 - A1), a3 = 10 h / 3 (A3 - 2 A2 + A1),
    C1 = [a1, a2], C2 = -[a1, 2 a3 + C1] / 60,
    Omega = a1 + a3 / 12 + [-20 a1 - a3 + C1, a2 + C2] / 240,

with A = [[0, 1], [-p, 0]]. Every term is a traceless 2 x 2 matrix (a, b; c, -a),
whose exponential is closed: cosh(s) I + sinh(s) / s Omega with s^2 = a^2 + bc.
A step costs a few dozen multiplications and one sine and cosine, about a quarter of
a DOP853 step over both columns, and the error does not grow with p's size, only
with its change over a step (an oscillation fast against the drive costs nothing).
"""

from __future__ import annotations

import math
from typing import Sequence

_R15 = math.sqrt(15.0)
GAUSS_NODES = (0.5 - _R15 / 10.0, 0.5, 0.5 + _R15 / 10.0)  # fractions of a step
_SMALL = 1e-8  # |s^2| below this: sinh(s)/s and cosh(s) by their series (error < 1e-17)


def hill_trace(nodes: Sequence[float], period: float, steps: int, *, scale: float = 1.0,
               offset: float = 0.0) -> float:
    """Trace of the one-period monodromy of u'' + p(t) u = 0, p = offset + scale * node.

    ``nodes`` holds the nodes at the Gauss points of every step, ``3 * steps`` values,
    step-major (``nodes[3 s + i]`` at t = (s + GAUSS_NODES[i]) h, h = period / steps):
    a scan passes the drive's cycle, cached per stroke, and each point's scale and offset.
    """
    h = period / steps
    k2 = _R15 * h / 3.0
    k3 = 10.0 * h / 3.0
    m00, m01, m10, m11 = 1.0, 0.0, 0.0, 1.0
    cos, sin, sqrt, cosh, sinh = math.cos, math.sin, math.sqrt, math.cosh, math.sinh
    for i in range(0, 3 * steps, 3):
        p1 = offset + scale * nodes[i]
        p2 = offset + scale * nodes[i + 1]
        p3 = offset + scale * nodes[i + 2]
        # a1 = (0, h, c1); a2 = (0, 0, c2); a3 = (0, 0, c3) as (a, b, c)
        c1 = -h * p2
        c2 = -k2 * (p3 - p1)
        c3 = -k3 * (p3 - 2.0 * p2 + p1)
        x_a = h * c2  # C1 = [a1, a2] = (h c2, 0, 0)
        # C2 = -[a1, (x_a, 0, 2 c3)] / 60
        y_a = -h * c3 / 30.0
        y_b = h * x_a / 30.0
        y_c = c2 - c1 * x_a / 30.0  # a2 + C2
        x_b = -20.0 * h  # X = -20 a1 - a3 + C1 = (x_a, x_b, x_c)
        x_c = -20.0 * c1 - c3
        # [X, Y] = (x_b y_c - x_c y_b, 2 (x_a y_b - x_b y_a), 2 (x_c y_a - x_a y_c))
        oa = (x_b * y_c - x_c * y_b) / 240.0
        ob = h + (x_a * y_b - x_b * y_a) / 120.0
        oc = c1 + c3 / 12.0 + (x_c * y_a - x_a * y_c) / 120.0
        s2 = oa * oa + ob * oc
        if s2 < -_SMALL:
            w = sqrt(-s2)
            ch, sh = cos(w), sin(w) / w
        elif s2 > _SMALL:
            w = sqrt(s2)
            ch, sh = cosh(w), sinh(w) / w
        else:
            ch, sh = 1.0 + s2 / 2.0 + s2 * s2 / 24.0, 1.0 + s2 / 6.0 + s2 * s2 / 120.0
        e00, e11 = ch + sh * oa, ch - sh * oa
        e01, e10 = sh * ob, sh * oc
        m00, m01, m10, m11 = (e00 * m00 + e01 * m10, e00 * m01 + e01 * m11,
                              e10 * m00 + e11 * m10, e10 * m01 + e11 * m11)
    return m00 + m11
