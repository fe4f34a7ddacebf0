#!/usr/bin/python3
"""Reference answers for the discrete-time checks, from general-purpose libraries only (Debian's
python3-scipy, python3-sympy, python3-mpmath; versions are written into the output). Nothing here imports or
imitates engine code, and the frequency conditions are taken in cos(theta) here (Chebyshev polynomials),
not through the bilinear map the engine uses.
    /usr/bin/python3 tests/unit/stability/reference/discrete_reference.py \
        > tests/unit/stability/reference/discrete-reference.json

- zoh: scipy.signal.cont2discrete(method='zoh') of continuous models (ss: Ad, Bd; tf: num, den in z).
- schur: every root of the polynomial strictly inside the unit circle, from sympy's exact factorisation
  where it has roots on the circle, otherwise sympy Poly.nroots at 50 digits (no root within 1e-6 of the
  circle in these examples, so the verdict is not in doubt).
- circleLimit: for G(z) = N/D and a lower bound k1, the largest k2 of the discrete circle criterion,
  k1 - 1/min_theta Re[N / (D + k1 N)](e^(j theta)). With c = cos(theta), Re[a(z) b(1/z)] on the circle is
  sum_{k,l} a_k b_l T_|k-l|(c) (T the Chebyshev polynomials), so Re H = R(c)/M(c) with R, M exact rational
  polynomials; the minimum over c in [-1, 1] is taken over the exactly isolated roots of R'M - RM' (sympy
  real_roots) refined to 50 digits, and c = +-1.
- tsypkinLimit: sup over q >= 0 of -1/g(q), g(q) = min_theta Re[(1 + q (1 - z^-1)) G(z)], the same exact
  minimum for each rational q, maximised over q by mpmath golden-section search (g is concave in q).
"""
import json
import sys
from fractions import Fraction

import mpmath
import numpy
import scipy
import sympy
from scipy import signal

mpmath.mp.dps = 50
C = sympy.symbols('c')


def versions():
    return {
        'python': sys.version.split()[0],
        'scipy': scipy.__version__,
        'sympy': sympy.__version__,
        'mpmath': mpmath.__version__,
        'numpy': numpy.__version__,
    }


def Q(x):
    return sympy.Rational(*Fraction(x).as_integer_ratio())


# ---------------------------------------------------------------- zero-order hold
ZOH = [
    {'id': 'lag', 'tf': [[1.0], [1.0, 1.0]], 'T': 0.5},
    {'id': 'resonance', 'tf': [[100.0], [1.0, 1.0, 100.0]], 'T': 0.01},
    {'id': 'double-integrator', 'tf': [[1.0], [1.0, 0.0, 0.0]], 'T': 0.1},
    {
        'id': 'ss3',
        'ss': {
            'A': [[0.0, 1.0, 0.0], [0.0, 0.0, 1.0], [-6.0, -11.0, -6.0]],
            'B': [[0.0], [0.0], [1.0]],
            'C': [[1.0, 0.5, 0.0]],
            'D': [[0.0]],
        },
        'T': 0.2,
    },
    {
        'id': 'stiff',
        'ss': {
            'A': [[-50.0, 3.0, 0.0, 0.0], [0.0, -1.0, 2.0, 0.0], [0.0, -2.0, -1.0, 0.0], [1.0, 0.0, 0.0, -0.25]],
            'B': [[1.0], [0.0], [1.0], [0.5]],
            'C': [[0.0, 1.0, 0.0, 1.0]],
            'D': [[0.0]],
        },
        'T': 1.0,
    },
]


def zoh_answers():
    out = []
    for z in ZOH:
        if 'ss' in z:
            s = z['ss']
            Ad, Bd, Cd, Dd, _ = signal.cont2discrete(
                (numpy.array(s['A']), numpy.array(s['B']), numpy.array(s['C']), numpy.array(s['D'])), z['T'], method='zoh'
            )
            out.append({**z, 'Ad': Ad.tolist(), 'Bd': Bd.tolist()})
        else:
            num, den, _ = signal.cont2discrete((z['tf'][0], z['tf'][1]), z['T'], method='zoh')
            num = numpy.atleast_1d(numpy.squeeze(num)).tolist()
            out.append({**z, 'num': num, 'den': list(den)})
    return out


# ---------------------------------------------------------------- Schur stability
SCHUR = [
    # K. Ogata, Discrete-Time Control Systems, 2nd ed., Example 4-3 (Jury test; from memory): stable.
    {'id': 'ogata-4-3', 'den': [1.0, -1.2, 0.07, 0.3, -0.08]},
    {'id': 'unit-circle-pair', 'den': [1.0, 0.0, 1.0]},
    {'id': 'root-at-minus-one', 'den': [1.0, 0.5, -0.5]},
    {'id': 'complex-inside', 'den': [1.0, -1.0, 0.5]},
    {'id': 'one-outside', 'den': [1.0, -2.5, 1.0]},
    {'id': 'near-boundary', 'den': [1.0, -1.9990, 0.9995]},
    {'id': 'order6', 'den': [1.0, -0.3, 0.2, -0.1, 0.05, 0.02, -0.01]},
    {'id': 'order6-unstable', 'den': [1.0, -0.3, 0.2, -0.1, 0.05, 0.02, -1.01]},
]


def schur_answers():
    z = sympy.symbols('z')
    out = []
    for s in SCHUR:
        p = sympy.Poly([Q(v) for v in s['den']], z)
        on_circle = False
        for fac, _ in sympy.factor_list(p.as_expr())[1]:
            for r in sympy.roots(sympy.Poly(fac, z), z):
                if sympy.simplify(sympy.Abs(r) - 1) == 0:
                    on_circle = True
        rs = p.nroots(n=50)
        rmax = max(abs(complex(r)) for r in rs)
        out.append({**s, 'schur': (not on_circle) and rmax < 1, 'maxModulus': rmax})
    return out


# ---------------------------------------------------------------- discrete circle and Tsypkin limits
def cheb_re(a, b):
    """Re[a(z) b(1/z)] on z = e^(j theta), as a polynomial in c = cos(theta); a, b ascending, rational."""
    acc = sympy.Integer(0)
    for k, ak in enumerate(a):
        for l, bl in enumerate(b):
            if ak != 0 and bl != 0:
                acc += ak * bl * sympy.chebyshevt(abs(k - l), C)
    return sympy.Poly(sympy.expand(acc), C)


def mp(r):
    r = sympy.Rational(r)
    return mpmath.mpf(int(r.p)) / int(r.q)


def min_ratio(R, M):
    """min over c in [-1, 1] of R(c)/M(c) (M > 0 there), exactly isolated stationary points."""
    h = R.diff(C) * M - R * M.diff(C)
    cands = [mpmath.mpf(-1), mpmath.mpf(1)]
    if not h.is_zero:
        hc = [mp(v) for v in h.all_coeffs()]
        hf = lambda x: mpmath.polyval(hc, x)
        for (lo, hi), _mult in h.intervals(inf=-1, sup=1):
            lo, hi = mp(lo), mp(hi)
            if lo == hi:
                cands.append(lo)
            elif hf(lo) * hf(hi) < 0:
                cands.append(mpmath.findroot(hf, (lo, hi), solver='anderson'))
            else:
                # even multiplicity: refine by bisection on |h| is not needed, the midpoint of a tiny interval
                # (isolating intervals shrink with refine) is used after refining the interval
                for (l2, h2), _m in sympy.Poly(h, C).intervals(inf=lo, sup=hi, eps=sympy.Rational(1, 10**40)):
                    cands.append((mp(l2) + mp(h2)) / 2)
    Rc = [mp(v) for v in R.all_coeffs()]
    Mc = [mp(v) for v in M.all_coeffs()]
    best = None
    for c in cands:
        c = min(mpmath.mpf(1), max(mpmath.mpf(-1), c))
        v = mpmath.polyval(Rc, c) / mpmath.polyval(Mc, c)
        if best is None or v < best[0]:
            best = (v, c)
    return best


def circle_limit(num, den, k1):
    N = [Q(v) for v in reversed(num)]
    D = [Q(v) for v in reversed(den)]
    N += [0] * (len(D) - len(N))
    k = Q(k1)
    Qp = [d + k * n for d, n in zip(D, N)]
    v, c = min_ratio(cheb_re(N, Qp), cheb_re(Qp, Qp))
    lim = mpmath.inf if v >= 0 else mpmath.mpf(k1) - 1 / v
    return lim, mpmath.acos(c)


def tsypkin_limit(num, den):
    N = [Q(v) for v in reversed(num)]
    D = [Q(v) for v in reversed(den)]
    N += [0] * (len(D) - len(N))
    M = cheb_re(D, D)
    R0 = cheb_re(N, D)
    # (1 - z^-1) N(z) D(1/z): coefficients of z^m for m = k - l and m = k - l - 1
    acc = sympy.Integer(0)
    for kk, nk in enumerate(N):
        for ll, dl in enumerate(D):
            if nk != 0 and dl != 0:
                acc += nk * dl * (sympy.chebyshevt(abs(kk - ll), C) - sympy.chebyshevt(abs(kk - ll - 1), C))
    R1 = sympy.Poly(sympy.expand(acc), C)

    def g(q):
        qq = Q(float(q))
        return min_ratio(R0 + R1 * qq, M)[0]

    # bracket the maximiser of the concave g on [0, hi]
    hi = mpmath.mpf(1)
    while hi < 2 ** 16 and g(hi) > g(hi / 2):
        hi *= 2
    a, b = mpmath.mpf(0), hi
    phi = (mpmath.sqrt(5) - 1) / 2
    c, d = b - phi * (b - a), a + phi * (b - a)
    gc, gd = g(c), g(d)
    for _ in range(70):
        if gc >= gd:
            b, d, gd = d, c, gc
            c = b - phi * (b - a)
            gc = g(c)
        else:
            a, c, gc = c, d, gd
            d = a + phi * (b - a)
            gd = g(d)
    qbest = (a + b) / 2
    gb = max(g(qbest), g(0))
    q_used = qbest if g(qbest) >= g(0) else 0
    return (mpmath.inf if gb >= 0 else -1 / gb), q_used


# Lightly damped pole pair at radius r and angle theta0 placed midway between two points of a 500-point grid
# on [0, pi] (theta_i = i pi / 499).
THETA0 = (150.5) * mpmath.pi / 499
R_LIGHT = 0.9995
a1 = float(-2 * R_LIGHT * mpmath.cos(THETA0))
a2 = R_LIGHT ** 2

CIRCLE = [
    {'id': 'first-order', 'num': [0.5], 'den': [1.0, -0.5], 'k1': 0.0},
    {'id': 'third-order', 'num': [1.0, 0.5], 'den': [1.0, -1.2, 0.72, -0.1], 'k1': 0.0},
    {'id': 'zoh-lag', 'num': [0.39346934028736658], 'den': [1.0, -0.60653065971263342], 'k1': 0.0},
    {'id': 'positive-k1-unstable', 'num': [1.0], 'den': [1.0, -1.5], 'k1': 0.8},
    {'id': 'negative-k1', 'num': [0.2, 0.1], 'den': [1.0, -0.9, 0.2], 'k1': -0.5},
    {'id': 'light-damping-grid', 'num': [0.001, 0.0], 'den': [1.0, a1, a2], 'k1': 0.0},
]

TSYPKIN = [
    {'id': 'second-order', 'num': [1.0, 0.3], 'den': [1.0, -1.4, 0.6]},
    {'id': 'third-order', 'num': [1.0, 0.5], 'den': [1.0, -1.2, 0.72, -0.1]},
    {'id': 'integrating-lag', 'num': [0.1, 0.09], 'den': [1.0, -1.8, 0.81]},
]


def grid_min(num, den, k1, pts=500):
    best = None
    for i in range(pts):
        th = mpmath.pi * i / (pts - 1)
        z = mpmath.exp(1j * th)
        n = mpmath.polyval([mpmath.mpf(v) for v in num], z)
        d = mpmath.polyval([mpmath.mpf(v) for v in den], z)
        h = n / (d + k1 * n)
        if best is None or h.real < best:
            best = h.real
    return best


def main():
    circle = []
    for c in CIRCLE:
        lim, th = circle_limit(c['num'], c['den'], c['k1'])
        g = grid_min(c['num'], c['den'], c['k1'])
        grid_lim = mpmath.inf if g >= 0 else mpmath.mpf(c['k1']) - 1 / g
        circle.append({**c, 'limit': str(lim), 'theta': float(th), 'grid500Limit': str(grid_lim)})
    tsyp = []
    for t in TSYPKIN:
        lim, q = tsypkin_limit(t['num'], t['den'])
        tsyp.append({**t, 'limit': str(lim), 'q': float(q)})
    json.dump(
        {
            'versions': versions(),
            'zoh': zoh_answers(),
            'schur': schur_answers(),
            'circle': circle,
            'tsypkin': tsyp,
        },
        sys.stdout,
        indent=1,
    )
    sys.stdout.write('\n')


main()
