"""The engine's eigenvalues of small real matrices against numpy.linalg.eigvals (LAPACK dgeev).

numerics/real_qr.py (Francis double-shift QR in real arithmetic; linalg.eigvals). Each
eigenvalue is matched
to numpy's within 1e-10 of max(1, ||A||_2) (both are backward stable; an eigenvalue of a
defective or close pair moves by about sqrt(eps ||A||), so such cases are checked by the
sum and product of the pair instead, which are well conditioned).
"""
import numpy as np
import pytest

from shakestill.numerics.linalg import eigvals
from shakestill.numerics.real_qr import real_eigvals


def worst_mismatch(got, want):
    got = list(got)
    assert len(got) == len(want)
    worst = 0.0
    for w in sorted(want, key=abs, reverse=True):
        j = min(range(len(got)), key=lambda i: abs(got[i] - w))
        worst = max(worst, abs(got[j] - w))
        got.pop(j)
    return worst


def random_matrices(kind, count=300, seed=7):
    rng = np.random.default_rng(seed)
    for _ in range(count):
        n = int(rng.integers(1, 7))
        if kind == "gaussian":
            yield rng.normal(size=(n, n))
        elif kind == "badly scaled":  # entries spread over ten decades
            yield rng.normal(size=(n, n)) * 10.0 ** rng.uniform(-5, 5, size=(n, n))
        elif kind == "orthogonal":  # every eigenvalue on the unit circle, like an undamped cycle
            yield np.linalg.qr(rng.normal(size=(n, n)))[0]
        else:  # nearly triangular: subdiagonal at round-off, deflation at once
            a = np.triu(rng.normal(size=(n, n)))
            a[np.tril_indices(n, -1)] = 1e-17 * rng.normal(size=n * (n - 1) // 2)
            yield a


@pytest.mark.parametrize("kind", ["gaussian", "badly scaled", "orthogonal", "nearly triangular"])
def test_real_matrices_match_numpy(kind):
    for a in random_matrices(kind):
        scale = max(1.0, np.linalg.norm(a, 2))
        assert worst_mismatch(real_eigvals(a.tolist()), np.linalg.eigvals(a)) <= 1e-10 * scale
        assert worst_mismatch(eigvals(a.tolist()), np.linalg.eigvals(a)) <= 1e-10 * scale


def test_conjugate_pairs_come_out_exactly_conjugate():
    # A real matrix's complex eigenvalues in exact conjugate pairs (the 2 x 2 blocks' formula):
    # a rotation by 0.3 rad scaled by 0.9 inside a 4 x 4 similarity, numpy for the values.
    rng = np.random.default_rng(11)
    c, s = 0.9 * np.cos(0.3), 0.9 * np.sin(0.3)
    block = np.array([[c, -s, 0, 0], [s, c, 0, 0], [0, 0, 0.5, 0], [0, 0, 0, -1.2]])
    p = rng.normal(size=(4, 4))
    a = p @ block @ np.linalg.inv(p)
    got = real_eigvals(a.tolist())
    complex_ones = sorted((z for z in got if z.imag != 0), key=lambda z: z.imag)
    assert len(complex_ones) == 2 and complex_ones[0] == complex_ones[1].conjugate()
    assert worst_mismatch(got, np.linalg.eigvals(a)) <= 1e-12 * np.linalg.norm(a, 2)


def test_a_defective_pair_keeps_its_sum_and_product():
    # A Jordan block at -1 (two multipliers meeting on the real axis, as at a tongue's edge)
    # in a 4 x 4 similarity: each eigenvalue is ill-conditioned, but the pair's sum -2 and
    # product 1 are not (1e-12); the other two match numpy's to 1e-12.
    rng = np.random.default_rng(5)
    block = np.array([[-1.0, 1.0, 0, 0], [0, -1.0, 0, 0], [0, 0, 0.3, 0.2], [0, 0, -0.2, 0.3]])
    p = rng.normal(size=(4, 4))
    a = p @ block @ np.linalg.inv(p)
    got = sorted(real_eigvals(a.tolist()), key=lambda z: z.real)
    pair, rest = got[:2], got[2:]
    assert abs(pair[0] + pair[1] + 2.0) <= 1e-12 * np.linalg.norm(a, 2)
    assert abs(pair[0] * pair[1] - 1.0) <= 1e-10 * np.linalg.norm(a, 2)
    assert worst_mismatch(rest, [0.3 + 0.2j, 0.3 - 0.2j]) <= 1e-12 * np.linalg.norm(a, 2)
