#!/usr/bin/python3
"""Exact reference answers for the stability engine, computed with general-purpose libraries only.

Run with Debian's interpreter (/usr/bin/python3) and Debian's python3-sympy, python3-mpmath and
python3-scipy. Reads one JSON document on stdin, {"plants": [{"id", "model", "recipes"}]}, and writes one
JSON document on stdout: {"versions": {...}, "plants": [{"id", ...answers...}]}. Nothing here imports or
imitates engine code; the methods are the textbook ones, named beside each function.

Every coefficient a user enters is a binary float, i.e. an exact rational: sympy.Rational(*v.as_integer_ratio())
holds it without rounding, and all decisions below are made in exact rational arithmetic:
  - Hurwitz: the Routh array over the rationals (Gantmacher, The Theory of Matrices, vol. 2, ch. XV: a real
    polynomial is Hurwitz iff its Routh array is regular with first-column entries of one sign; any zero
    pivot means a root on or right of the imaginary axis).
  - Signs on the half-line x = w^2 >= 0: exact real-root isolation of sympy (Poly.intervals, Vincent-Akritas
    continued fractions over the integers), with sympy.sqf_list for multiplicities.
  - Minima of rational functions of x: exact isolation of the stationary points (roots of E'M - EM'), each
    refined to 50 digits with mpmath on exact evaluations, plus x = 0 and x -> infinity.
  - Circle criterion: Khalil, Nonlinear Systems, 3rd ed., Theorem 7.1 (scalar circle criterion) through
    Z = (1 + k2 G)/(1 + k1 G) strictly positive real, decided by Lemma 6.1 (scalar form), with the loop well
    posed (1 + k G(inf) != 0 for every k in the closed sector). The model is taken AS ENTERED: common factors
    of numerator and denominator (hidden modes of a state-space model) are not cancelled, so a hidden
    unstable mode makes Q = D + k1 N non-Hurwitz and the check fails, whatever the reduced function says.
  - Positive realness: Khalil, 3rd ed., Definition 6.4 (PR) and Lemma 6.1 (SPR), scalar forms, on the model
    as entered.
scipy gives independent floating-point frequency responses (signal.freqresp / freqs / freqs_zpk) and
signal.ss2tf, used here only as cross-checks of the exact conversions (reported under "selfCheck").
"""
import json
import sys
from fractions import Fraction
import time
from multiprocessing import Pool

import mpmath
import numpy
import scipy
import sympy
from scipy import signal
import warnings

# scipy warns about badly conditioned coefficients for high orders; its numbers are only cross-checks.
warnings.filterwarnings("ignore", module="scipy")
from sympy import QQ, Poly, Rational, symbols

try:  # sympy uses gmpy2 when Debian's python3-gmpy2 is installed; plain ints otherwise (slower, same answers)
    from gmpy2 import mpz as MPZ
except ImportError:  # pragma: no cover
    MPZ = int

S, X = symbols('s x')
DPS = 50
mpmath.mp.dps = DPS
# Candidates whose value is within this relative distance of the minimum count as ties (any of them is an
# acceptable critical frequency).
TIE = mpmath.mpf('1e-9')


def versions():
    return {
        'python': sys.version.split()[0],
        'sympy': sympy.__version__,
        'mpmath': mpmath.__version__,
        'scipy': scipy.__version__,
        'numpy': numpy.__version__,
        'groundTypes': sympy.external.gmpy.GROUND_TYPES,
    }


def q(v):
    """The exact rational value of a binary float (or int) from the JSON input."""
    if isinstance(v, int):
        return Rational(v)
    return Rational(*float(v).as_integer_ratio())


def poly_s(desc):
    return Poly([q(c) for c in desc], S, domain=QQ)


def mpf_of(r):
    r = Rational(r)
    return mpmath.mpf(int(r.p)) / mpmath.mpf(int(r.q))


def rat_of_mpf(v):
    v = mpmath.mpf(v)
    if not mpmath.isfinite(v):
        raise ValueError('not finite')
    sign, man, exp, _bc = v._mpf_
    return (-1 if sign else 1) * Rational(int(man)) * Rational(2) ** int(exp)


def num_out(v):
    """mpf / Rational / inf -> JSON (float, or 'Infinity' / '-Infinity')."""
    if v is None:
        return None
    if v == mpmath.inf or v == sympy.oo:
        return 'Infinity'
    if v == -mpmath.inf or v == -sympy.oo:
        return '-Infinity'
    return float(mpf_of(v) if isinstance(v, sympy.Basic) else v)


def str_out(v):
    if v is None:
        return None
    if v == mpmath.inf or v == sympy.oo:
        return 'Infinity'
    if v == -mpmath.inf or v == -sympy.oo:
        return '-Infinity'
    return mpmath.nstr(mpf_of(v) if isinstance(v, sympy.Basic) else v, 40)


# ---------------------------------------------------------------- models as exact rational functions


def pair_factor(re, im):
    a, b = q(re), q(im)
    return Poly(S**2 - 2 * a * S + a * a + b * b, S, domain=QQ)


def from_roots(roots):
    """Monic polynomial with the given [re, im] roots; complex ones must come with their conjugates."""
    p = Poly(1, S, domain=QQ)
    pending = {}
    for re, im in roots:
        if im == 0:
            p = p * Poly(S - q(re), S, domain=QQ)
        else:
            key = (float(re), abs(float(im)))
            pending[key] = pending.get(key, 0) + (1 if im > 0 else -1)
            if im > 0:
                p = p * pair_factor(re, im)
    if any(v != 0 for v in pending.values()):
        raise ValueError('complex root without its conjugate')
    return p


def block_structure(A):
    """Blocks of a block-diagonal matrix with 1x1 and 2x2 blocks, or None when A is not of that form."""
    n = len(A)
    blocks = []
    i = 0
    while i < n:
        if i + 1 < n and (A[i][i + 1] != 0 or A[i + 1][i] != 0):
            blocks.append((i, 2))
            i += 2
        else:
            blocks.append((i, 1))
            i += 1
    inside = set()
    for b0, sz in blocks:
        for r in range(b0, b0 + sz):
            for c in range(b0, b0 + sz):
                inside.add((r, c))
    for r in range(n):
        for c in range(n):
            if (r, c) not in inside and A[r][c] != 0:
                return None
    return blocks


def ss_exact(A, B, C, Dm):
    """D(s) = det(sI - A) and N(s) = C adj(sI - A) B + d det(sI - A), exactly (no cancellation)."""
    n = len(A)
    d = q(Dm[0][0])
    blocks = block_structure(A)
    if blocks is not None:
        # Block-diagonal (modal) form: det is the product of the block determinants and
        # C adj(sI - A) B = sum_b C_b adj(sI - A_b) B_b prod_{c != b} det(sI - A_c).
        dets, nums = [], []
        for b0, sz in blocks:
            if sz == 1:
                a = q(A[b0][b0])
                dets.append(Poly(S - a, S, domain=QQ))
                nums.append(Poly(q(C[0][b0]) * q(B[b0][0]), S, domain=QQ))
            else:
                a11, a12 = q(A[b0][b0]), q(A[b0][b0 + 1])
                a21, a22 = q(A[b0 + 1][b0]), q(A[b0 + 1][b0 + 1])
                b1, b2 = q(B[b0][0]), q(B[b0 + 1][0])
                c1, c2 = q(C[0][b0]), q(C[0][b0 + 1])
                dets.append(Poly((S - a11) * (S - a22) - a12 * a21, S, domain=QQ))
                # adj(sI - A_b) = [[s - a22, a12], [a21, s - a11]]
                nums.append(
                    Poly(
                        c1 * ((S - a22) * b1 + a12 * b2) + c2 * (a21 * b1 + (S - a11) * b2), S, domain=QQ
                    )
                )
        Dp = Poly(1, S, domain=QQ)
        for p in dets:
            Dp = Dp * p
        Np = Poly(0, S, domain=QQ)
        for i, nb in enumerate(nums):
            term = nb
            for j, p in enumerate(dets):
                if j != i:
                    term = term * p
            Np = Np + term
        return Np + d * Dp, Dp
    M = sympy.Matrix(n, n, lambda i, j: (S if i == j else 0) - q(A[i][j]))
    Dp = Poly(M.det(method='berkowitz'), S, domain=QQ)
    adj = M.adjugate(method='berkowitz')
    Bv = sympy.Matrix(n, 1, lambda i, j: q(B[i][0]))
    Cv = sympy.Matrix(1, n, lambda i, j: q(C[0][j]))
    Np = Poly(sympy.expand((Cv * adj * Bv)[0, 0]), S, domain=QQ)
    return Np + d * Dp, Dp


def model_exact(m):
    if m['kind'] == 'tf':
        return poly_s(m['num']), poly_s(m['den'])
    if m['kind'] == 'zpk':
        g = q(m['gain'])
        N = Poly(0, S, domain=QQ) if g == 0 else from_roots(m['zeros']) * g
        return N, from_roots(m['poles'])
    return ss_exact(m['A'], m['B'], m['C'], m['D'])


# ---------------------------------------------------------------- exact primitives


def coeffs_desc(p):
    c = p.all_coeffs()
    return [Rational(v) for v in c]


def routh_interval(c, dps):
    """The Routh first column in mpmath interval arithmetic (rigorous enclosures): True / False when every
    enclosure excludes zero, None when one does not (then the exact test decides)."""
    iv = mpmath.iv
    iv.dps = dps
    n = len(c) - 1
    vals = [iv.mpf(int(v.numerator)) / iv.mpf(int(v.denominator)) for v in c]
    r0 = vals[0::2]
    r1 = vals[1::2] + [iv.mpf(0)] * (len(r0) - len(vals[1::2]))
    rows = [r0, r1]
    for _ in range(2, n + 1):
        a, b = rows[-2], rows[-1]
        if not (b[0].a > 0 or b[0].b < 0):
            return None
        bb = b + [iv.mpf(0)] * (len(a) - len(b))
        rows.append([(b[0] * a[i + 1] - a[0] * bb[i + 1]) / b[0] for i in range(len(a) - 1)])
    first = [r[0] for r in rows]
    if any(not (v.a > 0 or v.b < 0) for v in first):
        return None
    return all(v.a > 0 for v in first) or all(v.b < 0 for v in first)


def hurwitz(p):
    """Strict Hurwitz test by the Routh array (a zero pivot means not Hurwitz). First in mpmath interval
    arithmetic at 60 and 300 digits (rigorous: decided only when no enclosure contains zero), otherwise over
    the rationals with sympy's native QQ elements."""
    if p.is_zero:
        return False
    c0 = list(Poly(p, S, domain=QQ).rep.to_list())
    if len(c0) > 1:
        for dps in (60, 300):
            r = routh_interval(c0, dps)
            if r is not None:
                return r
    return hurwitz_exact(p)


def hurwitz_exact(p):
    if p.is_zero:
        return False
    c = list(Poly(p, S, domain=QQ).rep.to_list())
    n = len(c) - 1
    if n == 0:
        return True
    zero = QQ.zero
    r0 = c[0::2]
    r1 = c[1::2] + [zero] * (len(r0) - len(c[1::2]))
    rows = [r0, r1]
    for _ in range(2, n + 1):
        a, b = rows[-2], rows[-1]
        if b[0] == 0:
            return False
        bb = b + [zero] * (len(a) - len(b))
        new = [(b[0] * a[i + 1] - a[0] * bb[i + 1]) / b[0] for i in range(len(a) - 1)]
        if not new:
            return False
        rows.append(new)
    first = [r[0] for r in rows]
    if any(v == 0 for v in first):
        return False
    return all(v > 0 for v in first) or all(v < 0 for v in first)


def jw_parts(p):
    """p(jw) = R(x) + j w I(x) with x = w^2 (s^(2k) -> (-1)^k x^k, s^(2k+1) -> j w (-1)^k x^k)."""
    asc = coeffs_desc(p)[::-1] if not p.is_zero else []
    re = [Rational(0)] * (len(asc) // 2 + 1)
    im = [Rational(0)] * (len(asc) // 2 + 1)
    for i, c in enumerate(asc):
        k = i // 2
        sg = -1 if k % 2 else 1
        if i % 2 == 0:
            re[k] += sg * c
        else:
            im[k] += sg * c
    return Poly(re[::-1], X, domain=QQ), Poly(im[::-1], X, domain=QQ)


XP = Poly(X, X, domain=QQ)


def re_prod(P, Q):
    """E(x) = Re[P(jw) Q(-jw)] = Rp Rq + x Ip Iq."""
    Rp, Ip = jw_parts(P)
    Rq, Iq = jw_parts(Q)
    return Rp * Rq + XP * Ip * Iq


def deg(p):
    return -1 if p.is_zero else p.degree()


def lc(p):
    return Rational(p.LC())


class IntPoly:
    """A polynomial over QQ as integer coefficients (highest first) and a positive denominator, for exact
    evaluation at rational points by integer Horner: q^n p(a/q) = sum c_j a^(n-j) q^j."""

    def __init__(self, p):
        p = Poly(p, X, domain=QQ)
        if p.is_zero:
            self.c, self.den, self.n = [0], 1, 0
            return
        den, pz = p.clear_denoms()
        self.c = [MPZ(int(v)) for v in pz.rep.to_list()]
        self.den = int(den)
        self.n = len(self.c) - 1

    def scaled(self, x):
        """q^n * den * p(x) as an integer, x a Fraction a/q (q > 0)."""
        a, qq = MPZ(x.numerator), MPZ(x.denominator)
        v = self.c[0]
        qp = 1
        for cj in self.c[1:]:
            qp *= qq
            v = v * a + cj * qp
        return int(v)

    def sign(self, x):
        v = self.scaled(x)
        return (v > 0) - (v < 0)

    def value(self, x):
        """p(x) exactly, as a Fraction."""
        return Fraction(self.scaled(x), self.den * x.denominator ** self.n)


def mpf_frac(fr):
    return mpmath.mpf(fr.numerator) / mpmath.mpf(fr.denominator)


def intervals(p):
    """Exact isolating intervals of the real roots x >= 0 of p (sympy, continued fractions)."""
    return p.intervals(inf=0, fast=True)


def positive_half_line(E):
    """E(x) > 0 for every x >= 0 (exact)."""
    if E.is_zero or lc(E) < 0 or E.eval(0) <= 0:
        return False
    if all(v >= 0 for v in E.rep.to_list()):
        return True  # Descartes: no sign change, no positive root
    return len(intervals(E)) == 0


def nonnegative_half_line(E):
    """E(x) >= 0 for every x >= 0 (exact): no root of odd multiplicity in (0, inf) and E > 0 far out."""
    if E.is_zero:
        return True
    if lc(E) < 0:
        return False
    _, factors = E.sqf_list()
    for f, mult in factors:
        if mult % 2 == 0:
            continue
        while not f.is_zero and f.degree() > 0 and f.eval(0) == 0:
            f = Poly(f.as_expr() / X, X, domain=QQ)
        if f.degree() > 0 and len(intervals(f)) > 0:
            return False
    return True


def refine_roots(Sp):
    """Roots x > 0 of Sp, isolated exactly (sympy) and refined by exact bisection to 1e-21 relative, as
    Fractions. (The minimiser needs far less; a value at a stationary point is off by its square.)"""
    out = []
    if Sp.is_zero or Sp.degree() < 1:
        return out
    ip = IntPoly(Sp)
    for (a, b), _mult in intervals(Sp):
        a, b = Fraction(int(a.p), int(a.q)), Fraction(int(b.p), int(b.q))
        if b <= 0:
            continue
        if a == b:
            out.append(a)
            continue
        sa, sb = ip.sign(a), ip.sign(b)
        # An end of an isolating interval can be a neighbouring root (reported separately): then, as for a
        # root of even multiplicity, sympy's own exact refinement takes over.
        if sa != sb and sa != 0 and sb != 0:
            lo, hi = a, b
            while hi - lo > abs(hi) * Fraction(1, 2**70):
                mid = (lo + hi) / 2
                sm = ip.sign(mid)
                if sm == 0:
                    lo = hi = mid
                    break
                if sm == sa:
                    lo = mid
                else:
                    hi = mid
            out.append((lo + hi) / 2)
        else:
            aa, bb = Sp.refine_root(Rational(a), Rational(b), eps=Rational(b) * Rational(1, 2**70))
            out.append(Fraction(int(Rational(aa).p), int(Rational(aa).q)) / 2 + Fraction(int(Rational(bb).p), int(Rational(bb).q)) / 2)
    return [x for x in out if x > 0]


def stationary_points(E, M):
    """Positive roots of (E/M)' numerator E'M - EM'."""
    return refine_roots(E.diff(X) * M - E * M.diff(X))


def with_ties(vals, inf_val):
    """The smallest of the candidate values (and of the limit as x -> infinity, x = None), its argument,
    and every candidate within TIE (relative) of it: any of those is an acceptable critical frequency."""
    best, arg = min(vals, key=lambda t: t[0])
    if inf_val < best:
        best, arg = inf_val, None
    tol = TIE * max(abs(best), mpmath.mpf('1e-300'))
    ties = [xv for v, xv in vals if v - best <= tol]
    if inf_val - best <= tol:
        ties.append(None)
    return {'value': best, 'x': arg, 'ties': ties}


def min_ratio(E, M, cands=None):
    """min over x >= 0 of E(x)/M(x), M > 0 on [0, inf): value, argmin x (None = at infinity), ties."""
    if cands is None:
        cands = stationary_points(E, M)
    cands = [Fraction(0)] + list(cands)
    iE, iM = IntPoly(E), IntPoly(M)
    vals = [(mpf_frac(iE.value(xv) / iM.value(xv)), xv) for xv in cands]
    dE, dM = deg(E), deg(M)
    if dE > dM:
        inf_val = mpmath.inf if lc(E) > 0 else -mpmath.inf
    elif dE == dM:
        inf_val = mpf_of(lc(E) / lc(M))
    else:
        inf_val = mpmath.mpf(0)
    return with_ties(vals, inf_val)


def w_out(xv):
    return None if xv is None else float(mpmath.sqrt(mpf_frac(xv)))


# ---------------------------------------------------------------- the checks


def well_posed(N, D, k1, k2):
    """1 + k G(inf) != 0 for every k in the closed sector [k1, k2] (k2 None = infinity)."""
    n = D.degree()
    if deg(N) < n:
        return True
    g_inf = lc(N) / lc(D)
    if g_inf == 0:
        return True
    k_bad = -1 / g_inf
    if k2 is None:
        return not (k_bad >= k1)
    return not (k1 <= k_bad <= k2)


def circle(N, D, k1, k2, min_re_g):
    """Khalil Theorem 7.1 via Lemma 6.1 on Z = P/Q, P = D + k2 N (N for k2 = inf), Q = D + k1 N."""
    n = D.degree()
    out = {'wellPosed': well_posed(N, D, k1, k2)}
    Q = D + N * k1
    P = N if k2 is None else D + N * k2
    out['qHurwitz'] = deg(Q) == n and hurwitz(Q)
    mn = None
    E = re_prod(P, Q)
    Rq, Iq = jw_parts(Q)
    MQ = Rq * Rq + XP * Iq * Iq
    # min Re Z over w >= 0 (the numerical "margin" and critical frequency of the check); for k1 = 0 and a
    # finite k2, Re Z = 1 + k2 Re G shares its minimiser with Re G (computed once per plant).
    if out['qHurwitz']:
        if k1 == 0 and k2 is not None and min_re_g is not None:
            mn = {
                'value': 1 + mpf_of(k2) * min_re_g['value'],
                'x': min_re_g['x'],
                'ties': min_re_g['ties'],
            }
        elif k1 == 0 and k2 is None and min_re_g is not None:
            mn = min_re_g
        else:
            mn = min_ratio(E, MQ)
        out['minReZ'] = num_out(mn['value'])
        out['minReZStr'] = str_out(mn['value'])
        out['criticalW'] = w_out(mn['x'])
        out['criticalWTies'] = [w_out(t) for t in mn['ties']]
    if not out['wellPosed']:
        out['verdict'], out['reason'] = 'fail', 'ill-posed'
        return out
    if not out['qHurwitz']:
        out['verdict'], out['reason'] = 'fail', 'q-not-hurwitz'
        return out
    # A negative value of Re Z at a rational frequency, evaluated exactly, is a fail witness; otherwise
    # positivity on the whole half-line is decided by exact root isolation.
    witness = mn is not None and mn['x'] is not None and mn['value'] < 0 and IntPoly(E).sign(mn['x']) < 0
    if witness or not positive_half_line(E):
        out['verdict'], out['reason'] = 'fail', 'frequency'
        return out
    # Lemma 6.1 at infinity: Z(inf) > 0 (deg E = n, positive leading coefficient, already implied by E > 0),
    # or Z(inf) = 0 with lim w^2 Re Z(jw) > 0, i.e. deg E = n - 1.
    if deg(E) < n - 1:
        out['verdict'], out['reason'] = 'fail', 'infinity'
        return out
    out['verdict'], out['reason'] = 'pass', None
    return out


def sector_limit(N, D, k1, cands=None):
    """sup k2 with [k1, k2] certified: inf over {x >= 0: B < 0} of -A/B, A = Re[D Q*], B = Re[N Q*]
    (E(x; k2) = A + k2 B is affine in k2). The stationary points of A/B are those of B/A."""
    Q = D + N * k1
    A = re_prod(D, Q)
    B = re_prod(N, Q)
    if B.is_zero:
        return {'value': mpmath.inf, 'x': None, 'ties': []}
    if cands is None:
        cands = stationary_points(A, B)
    iA, iB = IntPoly(A), IntPoly(B)
    vals = []
    for xv in [Fraction(0)] + list(cands):
        b = iB.value(xv)
        if b < 0:
            vals.append((mpf_frac(-iA.value(xv) / b), xv))
    inf_val = mpmath.inf
    if lc(B) < 0:
        dA, dB = deg(A), deg(B)
        inf_val = mpmath.inf if dA > dB else (mpf_of(-lc(A) / lc(B)) if dA == dB else mpmath.mpf(0))
    if not vals:
        return {'value': inf_val, 'x': None, 'ties': [None] if inf_val != mpmath.inf else []}
    return with_ties(vals, inf_val)


def gain_intervals(N, D):
    """Gains k with D + k N Hurwitz: candidates where a root crosses the axis (s = 0, s = jw with
    Rd In - Id Rn = 0, or through infinity where deg drops), one exact Routh test per interval between them
    (Evans root locus argument)."""
    n = D.degree()
    if N.is_zero:
        return [[mpmath.ninf, mpmath.inf]] if hurwitz(D) else []
    cand = []
    if N.eval(0) != 0:
        cand.append(mpf_of(-D.eval(0) / N.eval(0)))
    Rd, Id = jw_parts(D)
    Rn, In = jw_parts(N)
    F = Rd * In - Id * Rn
    iRd, iId, iRn, iIn = IntPoly(Rd), IntPoly(Id), IntPoly(Rn), IntPoly(In)
    for xv in refine_roots(F):
        rn, inn = iRn.value(xv), iIn.value(xv)
        if rn != 0:
            cand.append(mpf_frac(-iRd.value(xv) / rn))
        elif inn != 0:
            cand.append(mpf_frac(-iId.value(xv) / inn))
    if deg(N) == n:
        cand.append(mpf_of(-lc(D) / lc(N)))
    cand.sort()
    uniq = []
    for c in cand:
        if uniq and abs(c - uniq[-1]) <= mpmath.mpf('1e-40') * max(1, abs(c)):
            continue
        uniq.append(c)
    edges = [mpmath.ninf] + uniq + [mpmath.inf]
    out = []
    for a, b in zip(edges[:-1], edges[1:]):
        if a == mpmath.ninf and b == mpmath.inf:
            t = mpmath.mpf(0)
        elif a == mpmath.ninf:
            t = b - max(1, abs(b))
        elif b == mpmath.inf:
            t = a + max(1, abs(a))
        else:
            t = (a + b) / 2
        tr = rat_of_mpf(t)
        p = D + N * tr
        if not (deg(p) == n and hurwitz(p)):
            continue
        if out and out[-1][1] == a:
            out[-1][1] = b
        else:
            out.append([a, b])
    return out


def positive_real(N, D, ere, min_re_g):
    """Class of G = N/D as entered: SPR (Lemma 6.1), PR (Definition 6.4) or neither."""
    n = D.degree()
    if N.is_zero:
        return {'class': 'PR', 'why': 'zero function'}
    if hurwitz(D):
        if min_re_g['x'] is not None and min_re_g['value'] < 0 and IntPoly(ere).sign(min_re_g['x']) < 0:
            return {'class': 'neither', 'why': 'Re G(jw) < 0 (exact witness)'}
        if positive_half_line(ere) and deg(ere) >= n - 1:
            return {'class': 'SPR', 'why': 'Lemma 6.1'}
        if nonnegative_half_line(ere):
            return {'class': 'PR', 'why': 'D Hurwitz and Re G(jw) >= 0'}
        return {'class': 'neither', 'why': 'Re G(jw) < 0 somewhere'}
    # Not Hurwitz: PR only with simple imaginary-axis poles of positive residue and the rest Hurwitz.
    c = coeffs_desc(D)[::-1]
    m0 = 0
    while c[m0] == 0:
        m0 += 1
    if m0 > 1:
        return {'class': 'neither', 'why': 'repeated pole at the origin'}
    D1 = Poly(list(reversed(c[m0:])), S, domain=QQ)
    Rd, Id = jw_parts(D1)
    h = sympy.gcd(Rd, Id)
    axis = []
    rest = D1
    if h.degree() > 0:
        h = Poly(h, X, domain=QQ)
        _, fac = h.sqf_list()
        if any(mult > 1 for _, mult in fac):
            return {'class': 'neither', 'why': 'repeated imaginary-axis pole'}
        # Roots x of h: x > 0 gives the poles +-j sqrt(x); x < 0 or non-real x give mirror pairs, one of
        # them in the open right half-plane.
        pos = [iv for iv in h.intervals(inf=0) if Rational(iv[0][0]) > 0 or Rational(iv[0][1]) > 0]
        if len(pos) != h.degree():
            return {'class': 'neither', 'why': 'right half-plane pole'}
        Ahs = Poly(h.as_expr().subs(X, -S**2), S, domain=QQ)
        rest, rem = sympy.div(D1, Ahs)
        if not rem.is_zero:
            return {'class': 'neither', 'why': 'axis factor does not divide (reference error)'}
        for (a, b), _ in pos:
            a, b = Rational(a), Rational(b)
            w = sympy.sqrt(a) if a == b else None
            if w is None or not w.is_Rational:
                return {'class': 'undecided', 'why': 'irrational axis pole frequency (not generated)'}
            axis.append(w)
    if Poly(rest, S, domain=QQ).degree() > 0 and not hurwitz(Poly(rest, S, domain=QQ)):
        return {'class': 'neither', 'why': 'right half-plane pole'}
    dD = D.diff(S)
    if m0 == 1 and not (N.eval(0) / dD.eval(0) > 0):
        return {'class': 'neither', 'why': 'residue at the origin not positive'}
    for w in axis:
        num = sympy.expand(N.as_expr().subs(S, sympy.I * w))
        den = sympy.expand(dD.as_expr().subs(S, sympy.I * w))
        r = sympy.expand(num * sympy.conjugate(den))
        if sympy.im(r) != 0 or not (sympy.re(r) > 0):
            return {'class': 'neither', 'why': 'residue at an imaginary-axis pole not real positive'}
    if not nonnegative_half_line(ere):
        return {'class': 'neither', 'why': 'Re G(jw) < 0 somewhere'}
    return {'class': 'PR', 'why': 'Definition 6.4 with imaginary-axis poles'}


# ---------------------------------------------------------------- scipy cross-checks


def response(model, ws):
    """G(jw) in floats by scipy, from the model as entered (state space, zeros/poles, or coefficients)."""
    if model['kind'] == 'ss':
        _, H = signal.freqresp(
            signal.StateSpace(
                numpy.array(model['A'], float),
                numpy.array(model['B'], float),
                numpy.array(model['C'], float),
                numpy.array(model['D'], float),
            ),
            w=ws,
        )
    elif model['kind'] == 'zpk':
        z = [complex(a, b) for a, b in model['zeros']]
        p = [complex(a, b) for a, b in model['poles']]
        _, H = signal.freqs_zpk(z, p, model['gain'], worN=ws)
    else:
        _, H = signal.freqs(model['num'], model['den'], worN=ws)
    return numpy.asarray(H)


def freq_check(model, N, D, min_re_g):
    """Largest relative difference between scipy's float frequency response of the model as entered and the
    exact N/D evaluated in 50 digits, over frequencies spread around the poles."""
    Dc = [float(c) for c in coeffs_desc(D)]
    roots = numpy.roots(Dc) if len(Dc) > 1 else numpy.array([1.0])
    mags = [abs(r) for r in roots if abs(r) > 0] or [1.0]
    lo, hi = min(mags), max(mags)
    ws = numpy.geomspace(lo / 7.3, hi * 7.3, 23)
    # Keep away from imaginary-axis poles and very sharp resonances (the float reference loses digits there).
    ws = [w for w in ws if all(abs(abs(r.imag) - w) > 1e-3 * w or abs(r.real) > 1e-2 * w for r in roots)]
    H = response(model, ws)
    out = {}
    if min_re_g is not None and mpmath.isfinite(min_re_g['value']):
        # No sampled frequency (scipy, 4000 points) may go below the exact minimum of Re G.
        wg = numpy.concatenate([[0.0], numpy.geomspace(lo / 1e3, hi * 1e3, 4000)])
        gmin = float(numpy.min(response(model, wg).real))
        ref_min = float(min_re_g['value'])
        out['gridMinReG'] = gmin
        out['gridNotBelowExact'] = bool(gmin >= ref_min - 1e-9 * abs(ref_min) - 1e-300)
    Nm = [mpf_of(c) for c in coeffs_desc(N)] if not N.is_zero else [mpmath.mpf(0)]
    Dm = [mpf_of(c) for c in coeffs_desc(D)]
    worst = 0.0
    for w, h in zip(ws, H):
        jw = mpmath.mpc(0, w)
        g = mpmath.polyval(Nm, jw) / mpmath.polyval(Dm, jw)
        d = abs(complex(g) - complex(h)) / max(abs(complex(g)), 1e-300)
        worst = max(worst, float(d))
    out['freqrespMaxRelDiff'] = worst
    if model['kind'] == 'ss' and len(model['A']) <= 8:
        num, den = signal.ss2tf(
            numpy.array(model['A'], float),
            numpy.array(model['B'], float),
            numpy.array(model['C'], float),
            numpy.array(model['D'], float),
        )
        en = [float(c) for c in coeffs_desc(N)] if not N.is_zero else [0.0]
        ed = [float(c) / float(lc(D)) for c in coeffs_desc(D)]
        en = [c / float(lc(D)) for c in en]
        sn = list(num[0][len(num[0]) - len(en):])
        scale = max(1.0, max(abs(c) for c in ed + en))
        out['ss2tfMaxDiff'] = max(
            max(abs(a - b) for a, b in zip(ed, den)), max(abs(a - b) for a, b in zip(en, sn))
        ) / scale
    if len(Dc) - 1 <= 20:
        # The interval-arithmetic filter of hurwitz() against the plain rational Routh array.
        out['routhFilterAgreesWithExact'] = bool(hurwitz(D) == hurwitz_exact(D))
    if len(Dc) - 1 <= 12:
        # Routh vs numpy's eigenvalue roots where that is well conditioned.
        out['routhAgreesWithNumpy'] = bool(hurwitz(D) == bool(all(r.real < -1e-9 * max(1, abs(r)) for r in roots))) or bool(
            any(abs(r.real) <= 1e-9 * max(1, abs(r)) for r in roots)
        )
    return out


# ---------------------------------------------------------------- sector recipes


def fl(v):
    """A sector bound as the binary float the engine receives (and its exact value for the reference)."""
    return float(v)


def choose_sectors(recipes, N, D, hur, L0, iv):
    """Concrete sectors (floats) from recipes such as {"case": "k1<0", "f": 0.63}; see the test file."""
    out = []

    def add(k1, k2, case, f):
        k1 = fl(k1)
        k2 = None if (k2 is None or k2 == mpmath.inf) else fl(k2)
        if k2 is not None and not (k1 < k2):
            return
        key = (k1, k2)
        if any(o[0] == key for o in out):
            return
        out.append((key, case, f))

    def interval_with(pred):
        for a, b in iv:
            if pred(a, b):
                return a, b
        return None

    for r in recipes:
        case, f = r['case'], r.get('f')
        f = mpmath.mpf(f) if f is not None else None
        if case == 'k1=0':
            if hur and L0 != mpmath.inf:
                add(0, f * L0, case, r.get('f'))
            elif hur:
                add(0, None, case, None)
                add(0, mpmath.mpf(10) * f, case, r.get('f'))
            else:
                add(0, f, case, r.get('f'))
            continue
        if case in ('k1<0', 'k1>0'):
            neg = case == 'k1<0'
            if hur:
                i0 = interval_with(lambda a, b: a < 0 < b)
                end = abs(i0[0] if neg else i0[1]) if i0 else mpmath.inf
                m = min(end, L0)
                if m == mpmath.inf:
                    m = mpmath.mpf(1)
                k1 = (-1 if neg else 1) * mpmath.mpf('0.3') * m
            else:
                j = interval_with((lambda a, b: a < 0) if neg else (lambda a, b: b > 0))
                if j is None:
                    k1 = mpmath.mpf(-1 if neg else 1)
                else:
                    a, b = j
                    if neg:
                        hi = min(b, mpmath.mpf(0))
                        k1 = hi - mpmath.mpf('0.3') * (hi - a) if a != mpmath.ninf else hi - max(1, abs(hi))
                    else:
                        lo = max(a, mpmath.mpf(0))
                        k1 = lo + mpmath.mpf('0.3') * (b - lo) if b != mpmath.inf else lo + max(1, abs(lo))
            k1 = mpf_of(q(fl(k1)))
            if r.get('proxy'):
                Lk = L0 if L0 is not None else mpmath.mpf(1)
            else:
                Qk = D + N * q(fl(k1))
                if deg(Qk) == D.degree() and hurwitz(Qk):
                    Lk = sector_limit(N, D, q(fl(k1)))['value']
                else:
                    Lk = abs(k1) + 1
            if Lk == mpmath.inf:
                add(k1, None, case, None)
                add(k1, k1 + abs(k1) * 10 * f, case, r.get('f'))
            else:
                add(k1, k1 + f * (Lk - k1), case, r.get('f'))
            continue
        if case == 'inf':
            add(0, None, case, None)
            continue
        if case == 'explicit':
            add(mpmath.mpf(r['sector'][0]), None if r['sector'][1] is None else mpmath.mpf(r['sector'][1]), case, None)
            continue
        raise ValueError('unknown recipe ' + case)
    return out


# ---------------------------------------------------------------- one plant


def analyse(plant):
    t0 = time.time()
    m = plant['model']
    N, D = model_exact(m)
    n = D.degree()
    res = {'id': plant['id'], 'order': n}
    res['denominator'] = [str(c) for c in coeffs_desc(D)]
    res['numerator'] = [str(c) for c in coeffs_desc(N)] if not N.is_zero else ['0']
    hur = hurwitz(D)
    res['hurwitz'] = hur
    mags = [abs(r) for r in numpy.roots([float(c) for c in coeffs_desc(D)])] if n > 0 else []
    res['frequencyScale'] = float(max([m for m in mags if m > 0] or [1.0]))
    ere = re_prod(N, D)
    Rd, Id = jw_parts(D)
    mdd = Rd * Rd + XP * Id * Id
    cands0 = stationary_points(ere, mdd) if hur else None
    min_re_g = min_ratio(ere, mdd, cands0) if hur else None
    if min_re_g is not None:
        res['minReG'] = num_out(min_re_g['value'])
        res['minReGW'] = w_out(min_re_g['x'])
        res['minReGWTies'] = [w_out(t) for t in min_re_g['ties']]
    # Largest sector for k1 = 0: k2* = -1/min Re G(jw) (Khalil 3rd ed. section 7.1, case k1 = 0).
    if hur:
        lim = sector_limit(N, D, Rational(0), cands0)
        L0 = lim['value']
        res['limit0'] = num_out(L0)
        res['limit0Str'] = str_out(L0)
        res['limit0W'] = w_out(lim['x'])
        res['limit0WTies'] = [w_out(t) for t in lim['ties']]
    else:
        L0 = None
        res['limit0'] = None
    iv = gain_intervals(N, D)
    res['gainIntervals'] = [[num_out(a), num_out(b)] for a, b in iv]
    res['gainIntervalsStr'] = [[str_out(a), str_out(b)] for a, b in iv]
    res['positiveReal'] = positive_real(N, D, ere, min_re_g)
    sectors = choose_sectors(plant.get('recipes', []), N, D, hur, L0 if L0 is not None else mpmath.inf, iv)
    res['sectors'] = []
    for (k1, k2), case, f in sectors:
        c = circle(N, D, q(k1), None if k2 is None else q(k2), min_re_g)
        c['sector'] = [k1, 'Infinity' if k2 is None else k2]
        c['case'] = case
        c['f'] = f
        res['sectors'].append(c)
    res['selfCheck'] = freq_check(m, N, D, min_re_g)
    res['seconds'] = round(time.time() - t0, 3)
    print(f"{res['id']}: order {n}, {res['seconds']} s", file=sys.stderr, flush=True)
    return res


def main():
    data = json.load(sys.stdin)
    plants = data['plants']
    workers = int(data.get('workers', 2))
    # Large models first so the two workers finish together.
    order = sorted(range(len(plants)), key=lambda i: -int(plants[i].get('weight', 1)))
    t0 = time.time()
    if workers > 1:
        with Pool(workers) as pool:
            done = pool.map(analyse, [plants[i] for i in order], chunksize=1)
    else:
        done = [analyse(plants[i]) for i in order]
    byid = {r['id']: r for r in done}
    out = {
        'versions': versions(),
        'seconds': round(time.time() - t0, 3),
        'plants': [byid[p['id']] for p in plants],
    }
    json.dump(out, sys.stdout)


if __name__ == '__main__':
    if len(sys.argv) > 1 and sys.argv[1] == '--versions':
        json.dump(versions(), sys.stdout)
    else:
        main()
