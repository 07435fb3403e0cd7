"""Scalar root finding and maximisation (Brent's methods), standard library only."""

from __future__ import annotations

import math
from typing import Callable

_GOLDEN = (3.0 - math.sqrt(5.0)) / 2.0  # golden-section fraction


def brentq(f: Callable[[float], float], a: float, b: float, *, fa: float | None = None,
           fb: float | None = None, xtol: float = 1e-12, rtol: float = 4e-16,
           maxiter: int = 200) -> float:
    """A root of ``f`` in [a, b] where f(a) and f(b) differ in sign (Brent 1973, ch. 4)."""
    fa = f(a) if fa is None else fa
    fb = f(b) if fb is None else fb
    if fa == 0.0:
        return a
    if fb == 0.0:
        return b
    if (fa > 0) == (fb > 0):
        raise ValueError("brentq: f(a) and f(b) must differ in sign")
    c, fc, d = a, fa, b - a
    e = d
    for _ in range(maxiter):
        if (fb > 0) == (fc > 0):
            c, fc = a, fa
            d = e = b - a
        if abs(fc) < abs(fb):
            a, b, c = b, c, b
            fa, fb, fc = fb, fc, fb
        tol = 2.0 * rtol * abs(b) + 0.5 * xtol
        m = 0.5 * (c - b)
        if abs(m) <= tol or fb == 0.0:
            return b
        if abs(e) >= tol and abs(fa) > abs(fb):
            s = fb / fa
            if a == c:
                p, q = 2.0 * m * s, 1.0 - s
            else:
                q, r = fa / fc, fb / fc
                p = s * (2.0 * m * q * (q - r) - (b - a) * (r - 1.0))
                q = (q - 1.0) * (r - 1.0) * (s - 1.0)
            if p > 0:
                q = -q
            p = abs(p)
            if 2.0 * p < min(3.0 * m * q - abs(tol * q), abs(e * q)):
                e, d = d, p / q
            else:
                d = e = m
        else:
            d = e = m
        a, fa = b, fb
        b += d if abs(d) > tol else math.copysign(tol, m)
        fb = f(b)
    return b


def bisect_flag(flag: Callable[[float], bool], a: float, b: float, *, xtol: float) -> float:
    """The point in [a, b] where ``flag`` changes, given flag(a) != flag(b)."""
    fa = flag(a)
    while abs(b - a) > xtol:
        m = 0.5 * (a + b)
        if flag(m) == fa:
            a = m
        else:
            b = m
    return 0.5 * (a + b)


def golden_max(f: Callable[[float], float], a: float, b: float, *, xtol: float = 1e-10,
               maxiter: int = 200) -> tuple[float, float]:
    """Maximise a unimodal ``f`` on [a, b] by Brent's parabolic/golden search (Brent 1973, ch. 5).

    Returns ``(x, f(x))``.
    """
    x = w = v = a + _GOLDEN * (b - a)
    fx = fw = fv = -f(x)
    d = e = 0.0
    for _ in range(maxiter):
        m = 0.5 * (a + b)
        tol = xtol + 1e-12 * abs(x)
        if abs(x - m) <= 2 * tol - 0.5 * (b - a):
            break
        use_golden = True
        if abs(e) > tol:
            r = (x - w) * (fx - fv)
            q = (x - v) * (fx - fw)
            p = (x - v) * q - (x - w) * r
            q = 2.0 * (q - r)
            if q > 0:
                p = -p
            q = abs(q)
            if abs(p) < abs(0.5 * q * e) and q * (a - x) < p < q * (b - x):
                e, d = d, p / q
                use_golden = False
        if use_golden:
            e = (b - x) if x < m else (a - x)
            d = _GOLDEN * e
        u = x + (d if abs(d) >= tol else math.copysign(tol, d))
        fu = -f(u)
        if fu <= fx:
            if u < x:
                b = x
            else:
                a = x
            v, fv, w, fw, x, fx = w, fw, x, fx, u, fu
        else:
            if u < x:
                a = u
            else:
                b = u
            if fu <= fw or w == x:
                v, fv, w, fw = w, fw, u, fu
            elif fu <= fv or v == x or v == w:
                v, fv = u, fu
    return x, -fx
