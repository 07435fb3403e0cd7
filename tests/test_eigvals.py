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


# A monodromy of a three-link chain whose joint dampers mix its modes (chart_audit seed
# 303, its 34th rig, 4006 rpm, 22.8 mm, at the chart's settings): angles and rates side by
# side make entries from 1e-6 to 3e2, and the unbalanced QR stalled on it.
STALLED = [
    [0.991183867782361, -1.3545142772694881e-05, -2.39631626061625e-05, 0.014198119690733969, -8.973553547235415e-07, -3.3441197592787866e-06],
    [-1.6194985033207454e-06, 0.5268225129147946, 0.005063040413232381, -8.973553562822448e-07, 0.00804220884549093, -0.0001007611069841005],
    [-1.4607315989463053e-06, 0.0031236388250527637, -0.30601808309111556, -3.3441197531546367e-06, -0.00010076110654640944, 0.0028888528450360827],
    [-1.2361716515090484, 0.005267972919542382, 0.06808152705278012, 0.9911331967856336, -8.615681139663923e-05, -0.00014720083086943142],
    [0.0002550548163622965, -88.30553463189148, 4.289052634838044, -0.00016249601091108254, 0.517574699817096, -0.003915049117717825],
    [0.002197282792222457, 2.2145856465125964, -285.2702319338916, -0.000725493847795077, -0.014317486862718075, -0.3214117094671328],
]


def test_a_badly_balanced_monodromy_is_balanced_first():
    # numpy.linalg.eigvals (LAPACK dgeev, which balances too) for the values
    want = np.linalg.eigvals(np.array(STALLED))
    assert worst_mismatch(real_eigvals(STALLED), want) <= 1e-12
    # any scaling of rows and columns (a similarity D A D^-1, ten decades) balances alike
    d = 10.0 ** np.linspace(-5, 5, 6)
    scaled = (np.diag(d) @ np.array(STALLED) @ np.diag(1 / d)).tolist()
    assert worst_mismatch(real_eigvals(scaled), want) <= 1e-10


def balanc(a):
    """EISPACK's balanc (Parlett & Reinsch, Numer. Math. 13 (1969) 293; the Fortran of
    EISPACK, radix 2) without its permutation search, in numpy: off-diagonal 1-norms c of
    column i and r of row i; skip a row or column that is zero off the diagonal; f the power
    of 2 from `while c < r / 2: f *= 2, c *= 4`, then `while c >= 2 r: f /= 2, c /= 4`; if
    (c + r) / f < 0.95 (c + r) scale row i by 1 / f and column i by f, and sweep again
    until no row is scaled."""
    a = np.array(a, dtype=float)
    n = len(a)
    noconv = True
    while noconv:
        noconv = False
        for i in range(n):
            c = float(np.sum(np.abs(np.delete(a[:, i], i))))
            r = float(np.sum(np.abs(np.delete(a[i, :], i))))
            if c == 0.0 or r == 0.0:
                continue
            s, f = c + r, 1.0
            while c < r / 2.0:
                f, c = f * 2.0, c * 4.0
            while c >= r * 2.0:
                f, c = f / 2.0, c / 4.0
            if (c + r) / f < 0.95 * s:
                noconv = True
                a[i, :] /= f
                a[:, i] *= f
    return a


def test_balancing_is_eispacks_balanc():
    # real_qr._balance against EISPACK's balanc written out above (its published Fortran,
    # without permutations), on the badly scaled matrices (ten decades), a companion matrix
    # (off-diagonal sums of exactly 1, a zero column off the diagonal), the stalled
    # monodromy and a matrix whose first row is zero off the diagonal: the same powers of 2
    # everywhere, so the same matrix to the last bit (1e-15 relative allows only the sums'
    # order). Then the scaling is a similarity: numpy's eigenvalues unchanged, 1e-10.
    from shakestill.numerics.real_qr import _balance
    companion = [[0.0, 0.0, 1.0, 0.0], [0.0, 0.0, 0.0, 1.0],
                 [-400.0, 0.0, -3e-3, 1e-4], [0.0, -9e4, 1e-4, -0.5]]
    first_row_zero = [[2.0, 0.0, 0.0], [1e-6, 1.0, 3e4], [5e3, 1e-5, -1.0]]
    column_of_one = [[0.0, 400.0, 3.0], [1.0, 0.0, 0.0], [0.0, 1.0, -2.0]]  # c = 1 at i = 0
    row_of_one = [[0.0, 1.0, 0.0], [400.0, 0.0, 3.0], [0.0, 2.0, -1.0]]  # r = 1 at i = 0
    cases = [*random_matrices("badly scaled", count=60, seed=11), companion, STALLED,
             first_row_zero, column_of_one, row_of_one]
    for a in cases:
        h = np.array(a, dtype=float).tolist()
        _balance(h)
        want = balanc(a)
        assert np.array(h) == pytest.approx(want, rel=1e-15, abs=0.0)
        assert worst_mismatch(np.linalg.eigvals(np.array(h)), np.linalg.eigvals(np.array(a))) \
            <= 1e-10 * max(1.0, np.linalg.norm(a, 2))
