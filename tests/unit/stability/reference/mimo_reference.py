#!/usr/bin/python3
"""Reference answers for the multivariable circle criterion, exact, with Debian's python3-sympy and
python3-mpmath (versions are written into the output). Nothing here imports or imitates engine code.
    /usr/bin/python3 tests/unit/stability/reference/mimo_reference.py > cases.jsonl   (slow: minutes per case)
    /usr/bin/python3 tests/unit/stability/reference/mimo_reference.py --assemble cases.jsonl \
        > tests/unit/stability/reference/mimo-reference.json

For a square plant G(s) = C (sI - A)^-1 B (p inputs and outputs) and the sector [K1, K1 + t K0]:
- G is formed symbolically (sympy Matrix inverse over the rationals), Z = [I + K2 G][I + K1 G]^-1, and the
  Hermitian part H(w) = Z(jw) + Z(jw)^* with w real; each leading principal minor of H is a rational
  function of w (sympy together / fraction), whose numerator and denominator are real polynomials; the
  minor is positive for every real w when neither has a real root and both are positive at w = 0 (exact
  real-root isolation, sympy real_roots). H > 0 for all w iff every leading minor is (Sylvester).
- the closed loop with K1, A - B K1 C, is Hurwitz by the Routh array over the rationals.
- the limit t* = sup { t : criterion holds } by exact bisection on rational t (48 halvings), so the result
  brackets t* to a relative 2^-40 or better.
- grid500: the same limit read from a 500-point logarithmic grid of w in [1e-2, 1e2] (mpmath eigenvalues of
  H(w) at 20 digits), for the case built to defeat such a grid.
"""
import json
import sys
from fractions import Fraction

import mpmath
import sympy

mpmath.mp.dps = 20
S = sympy.symbols('s')
W = sympy.symbols('w', real=True)


def Q(x):
    return sympy.Rational(*Fraction(x).as_integer_ratio())


def mat(M):
    return sympy.Matrix([[Q(v) for v in r] for r in M])


def routh_hurwitz(poly):
    c = sympy.Poly(poly, S).all_coeffs()
    if c[0] < 0:
        c = [-v for v in c]
    n = len(c) - 1
    if any(v <= 0 for v in c):
        return False
    r0 = c[0::2]
    r1 = c[1::2]
    for _ in range(n):
        if not r1 or r1[0] <= 0:
            return False if r1 or len(r0) > 1 else True
        nxt = []
        for j in range(len(r0) - 1):
            b = r1[j + 1] if j + 1 < len(r1) else 0
            nxt.append((r1[0] * r0[j + 1] - r0[0] * b) / r1[0])
        r0, r1 = r1, nxt
        if not r1 and not any(r0[1:]):
            break
    return True


def positive_for_all_w(expr):
    """expr(w) > 0 for every real w: expr = num/den, made real by multiplying both by conj(den)."""
    num, den = sympy.fraction(sympy.together(expr))
    dc = sympy.conjugate(den)
    nr, ni = sympy.expand(num * dc).as_real_imag()
    dr, di = sympy.expand(den * dc).as_real_imag()
    assert sympy.expand(ni) == 0 and sympy.expand(di) == 0
    P = sympy.Poly(sympy.expand(nr), W)
    D = sympy.Poly(sympy.expand(dr), W)
    if P.is_zero or len(sympy.real_roots(P)) > 0 or len(sympy.real_roots(D)) > 0:
        return False
    return bool(P.eval(0) * D.eval(0) > 0)


class Case:
    def __init__(self, d):
        self.d = d
        self.A, self.B, self.C = mat(d['A']), mat(d['B']), mat(d['C'])
        self.K1, self.K0 = mat(d['K1']), mat(d['K0'])
        n = self.A.shape[0]
        self.p = self.B.shape[1]
        self.G = (self.C * (S * sympy.eye(n) - self.A).adjugate() * self.B) / (S * sympy.eye(n) - self.A).det()
        self.Gjw = self.G.subs(S, sympy.I * W)
        self.hurwitz = routh_hurwitz((S * sympy.eye(n) - (self.A - self.B * self.K1 * self.C)).det())

    def holds(self, t):
        if not self.hurwitz:
            return False
        I = sympy.eye(self.p)
        K2 = self.K1 + t * self.K0
        Z = (I + K2 * self.Gjw) * (I + self.K1 * self.Gjw).inv()
        H = Z + Z.conjugate().T
        for k in range(1, self.p + 1):
            if not positive_for_all_w(H[:k, :k].det()):
                return False
        return True

    def limit(self, hi=sympy.Integer(64)):
        lo = sympy.Integer(0)
        if self.holds(hi):
            return None, None
        for _ in range(48):
            mid = (lo + hi) / 2
            if self.holds(mid):
                lo = mid
            else:
                hi = mid
        return lo, hi

    def grid_limit(self):
        """sup t with min over 500 grid points of lambda_min(H(w)) > 0, bisection on t (mpmath)."""
        f = sympy.lambdify(W, self.Gjw, 'mpmath')
        Gs = [mpmath.matrix(f(mpmath.mpf(10) ** (-2 + 4 * mpmath.mpf(i) / 499))) for i in range(500)]
        K1 = mpmath.matrix([[float(v) for v in r] for r in self.K1.tolist()])
        K0 = mpmath.matrix([[float(v) for v in r] for r in self.K0.tolist()])
        I = mpmath.eye(self.p)

        def ok(t):
            K2 = K1 + t * K0
            for G in Gs:
                Z = (I + K2 * G) * mpmath.inverse(I + K1 * G)
                H = Z + Z.transpose_conj()
                if min(mpmath.re(e) for e in mpmath.eig(H, left=False, right=False)) <= 0:
                    return False
            return True

        lo, hi = mpmath.mpf(0), mpmath.mpf(64)
        if ok(hi):
            return 'Infinity'
        for _ in range(30):
            mid = (lo + hi) / 2
            if ok(mid):
                lo = mid
            else:
                hi = mid
        return str(lo)


def light_case():
    # Two channels; channel 1 carries a mode with damping ratio 1e-3 at wn placed midway (in log w) between two
    # points of the 500-point grid of [1e-2, 1e2]; a weak coupling through B.
    i = 312.5
    wn = float(10 ** (-2 + 4 * i / 499))
    z = 1e-3
    return {
        'id': 'light-damping-grid',
        'A': [[0, 1, 0, 0], [-wn * wn, -2 * z * wn, 0, 0], [0, 0, -1, 0], [0, 0, 0, -2]],
        'B': [[0, 0], [1, 0.1], [0.2, 1], [1, 0.5]],
        'C': [[wn * wn, 0, 0, 0], [0, 0, 1, 1]],
        'K1': [[0, 0], [0, 0]],
        'K0': [[1, 0], [0, 1]],
    }


CASES = [
    {
        'id': 'coupled-2x2',
        'A': [[0, 1, 0, 0], [-4, -0.4, 0, 0], [0, 0, 0, 1], [0, 0, -9, -1.2]],
        'B': [[0, 0], [1, 0.5], [0, 0], [0.25, 1]],
        'C': [[1, 0, 0.5, 0], [0, 0.125, 1, 0]],
        'K1': [[0, 0], [0, 0]],
        'K0': [[1, 0], [0, 1]],
    },
    {
        'id': 'coupled-2x2-nondiagonal-K',
        'A': [[0, 1, 0, 0], [-4, -0.4, 0, 0], [0, 0, 0, 1], [0, 0, -9, -1.2]],
        'B': [[0, 0], [1, 0.5], [0, 0], [0.25, 1]],
        'C': [[1, 0, 0.5, 0], [0, 0.125, 1, 0]],
        'K1': [[0, 0], [0, 0]],
        'K0': [[2, 0.5], [0.5, 1]],
    },
    {
        'id': 'unstable-stabilised-by-K1',
        'A': [[0.5, 1, 0], [0, -1, 1], [0, 0, -2]],
        'B': [[1, 0], [0, 1], [0.5, 0.5]],
        'C': [[1, 0, 0], [0, 1, 0.5]],
        'K1': [[1, 0], [0, 1]],
        'K0': [[1, 0], [0, 1]],
    },
    {
        'id': 'three-by-three',
        'A': [[-1, 0, 0], [0, -2, 0], [0, 0, -0.5]],
        'B': [[1, 0, 0.5], [0, 1, 0], [0.25, 0, 1]],
        'C': [[1, 0, 0], [0.5, 1, 0], [0, 0.25, 1]],
        'K1': [[0, 0, 0], [0, 0, 0], [0, 0, 0]],
        'K0': [[1, 0, 0], [0, 1, 0], [0, 0, 1]],
    },
    light_case(),
]


def main():
    """One JSON line per case on stdout as it finishes (ids given on the command line: only those);
    --assemble FILE... joins such lines into the reference document."""
    if sys.argv[1:2] == ['--assemble']:
        cases = []
        for f in sys.argv[2:]:
            cases += [json.loads(line) for line in open(f) if line.strip()]
        order = [d['id'] for d in CASES]
        cases.sort(key=lambda c: order.index(c['id']))
        json.dump({'versions': {'python': sys.version.split()[0], 'sympy': sympy.__version__, 'mpmath': mpmath.__version__}, 'cases': cases}, sys.stdout, indent=1)
        sys.stdout.write('\n')
        return
    only = set(sys.argv[1:])
    for d in CASES:
        if only and d['id'] not in only:
            continue
        c = Case(d)
        lo, hi = c.limit()
        entry = {**d, 'hurwitzK1': c.hurwitz, 'limitLo': None if lo is None else str(sympy.N(lo, 30)), 'limitHi': None if hi is None else str(sympy.N(hi, 30))}
        if d['id'] == 'light-damping-grid':
            entry['grid500Limit'] = c.grid_limit()
        print(json.dumps(entry), flush=True)


main()
