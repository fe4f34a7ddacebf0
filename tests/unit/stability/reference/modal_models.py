#!/usr/bin/python3
"""Reference values for the high-order modal models of tests/unit/stability/high-order.test.ts.

Run with Debian's python3 (python3-mpmath 1.2.1, python3-sympy 1.11.1):
    /usr/bin/python3 tests/unit/stability/reference/modal_models.py > tests/unit/stability/reference/modal-models.json

The models are block-diagonal (real modal / real Jordan form) state-space models written out here; the
reference minimum of Re G(jw) is computed by mpmath at 40 significant digits from the blocks themselves
(G(jw) = sum_i C_i (jw I - A_i)^-1 B_i, one small linear solve per block, no polynomial expansion), by a
dense sweep and mpmath.findroot on d/dw Re G at every local minimum. The defect-5 plant is done exactly
with sympy: the stationary points are the real roots of the numerator of d/dx Re G, x = w^2.
"""
import json
import sys

import mpmath as mp
import sympy as sp

mp.mp.dps = 40


def lcg(seed):
    state = seed
    while True:
        state = (state * 1103515245 + 12345) % 2**31
        yield state / 2**31


def mode_block(zeta, wn):
    s = -zeta * wn
    w = wn * (1 - zeta * zeta) ** 0.5
    return [[s, w], [-w, s]]


def assemble(blocks, bs, cs):
    n = sum(len(b) for b in blocks)
    A = [[0.0] * n for _ in range(n)]
    B = []
    C = []
    o = 0
    for blk, b, c in zip(blocks, bs, cs):
        for i, row in enumerate(blk):
            for j, v in enumerate(row):
                A[o + i][o + j] = v
        B += [[v] for v in b]
        C += c
        o += len(blk)
    return {"kind": "ss", "A": A, "B": B, "C": [C], "D": [[0.0]]}


def jordan4(zeta, wn):
    L = mode_block(zeta, wn)
    n = 8
    A = [[0.0] * n for _ in range(n)]
    for k in range(4):
        for i in range(2):
            for j in range(2):
                A[2 * k + i][2 * k + j] = L[i][j]
        if k < 3:
            A[2 * k][2 * k + 2] = 1.0
            A[2 * k + 1][2 * k + 3] = 1.0
    return A


def model_modal40():
    r = lcg(40)
    blocks, bs, cs = [], [], []
    for i in range(20):
        wn = 0.5 * 1.25**i
        zeta = 0.005 + 0.001 * (i % 5)
        blocks.append(mode_block(zeta, wn))
        bs.append([round(0.5 + next(r), 3), round(next(r) - 0.5, 3)])
        cs.append([round((0.5 + next(r)) * wn * (1 if i % 3 else -1), 3), round(next(r) - 0.5, 3)])
    return blocks, bs, cs


def model_repeated24():
    r = lcg(24)
    blocks, bs, cs = [jordan4(0.02, 1.0)], [[0.3, 1.0, -0.2, 0.7, 0.5, -0.4, 0.9, 0.6]], [[1.0, 0.2, 0.5, -0.3, 0.4, 0.8, -0.6, 0.25]]
    for i in range(8):
        wn = 2.0 + 1.5 * i
        blocks.append(mode_block(0.05, wn))
        bs.append([round(0.5 + next(r), 3), round(next(r) - 0.5, 3)])
        cs.append([round((0.5 + next(r)) * wn, 3), round(next(r) - 0.5, 3)])
    return blocks, bs, cs


def model_cluster40(gain):
    r = lcg(4040)
    blocks, bs, cs = [], [], []
    for i in range(20):
        wn = 1.0 + 0.001 * i
        blocks.append(mode_block(0.002, wn))
        bs.append([0.0, 1.0])
        cs.append([round(gain * (0.5 + next(r)), 6), round(gain * (next(r) - 0.5), 6)])
    return blocks, bs, cs


def g_of(blocks, bs, cs, w):
    total = mp.mpc(0)
    jw = mp.mpc(0, w)
    for blk, b, c in zip(blocks, bs, cs):
        n = len(blk)
        M = mp.matrix(n, n)
        for i in range(n):
            for j in range(n):
                M[i, j] = (jw if i == j else 0) - mp.mpf(blk[i][j])
        y = mp.lu_solve(M, mp.matrix([mp.mpf(v) for v in b]))
        total += sum(mp.mpf(c[i]) * y[i] for i in range(n))
    return total


def min_re_g(blocks, bs, cs, modes):
    f = lambda w: mp.re(g_of(blocks, bs, cs, w))
    ws = set()
    lo = min(wn for _, wn in modes) / 100
    hi = max(wn for _, wn in modes) * 100
    N = 1500
    for i in range(N + 1):
        ws.add(float(lo * (hi / lo) ** (i / N)))
    for zeta, wn in modes:
        for k in range(-60, 61):
            ws.add(wn * (1 + zeta * k / 10))
    ws = sorted(w for w in ws if w > 0)
    vals = [f(w) for w in ws]
    locs = [i for i in range(1, len(ws) - 1) if vals[i] <= vals[i - 1] and vals[i] <= vals[i + 1]]
    locs.sort(key=lambda i: vals[i])
    best = (vals[0], ws[0])
    for i in locs[:6]:
        # golden section between the neighbours, then Newton on the derivative
        a, b = mp.mpf(ws[i - 1]), mp.mpf(ws[i + 1])
        phi = (mp.sqrt(5) - 1) / 2
        for _ in range(60):
            c = b - phi * (b - a)
            d = a + phi * (b - a)
            if f(c) < f(d):
                b = d
            else:
                a = c
        w0 = (a + b) / 2
        try:
            wm = mp.findroot(lambda w: mp.diff(f, w), w0, tol=mp.mpf(10) ** -30)
        except Exception:
            wm = w0
        v = f(wm)
        if v < best[0]:
            best = (v, wm)
    return best


def defect5_exact():
    # G = 1/(s^4 + 0.6 s^3 + 5.08 s^2 + 1.2 s + 4); the engine reads each coefficient as its binary double,
    # so the exact rationals of those doubles are used (sympy.Rational of a float is exact).
    x = sp.symbols("x", positive=True)
    a3, a2, a1 = sp.Rational(0.6), sp.Rational(5.08), sp.Rational(1.2)
    re = x**2 - a2 * x + 4  # Re D(jw)
    imw = a1 - a3 * x  # Im D(jw) / w
    reG = re / (re**2 + x * imw**2)
    num = sp.numer(sp.together(sp.diff(reG, x)))
    cands = [r for r in sp.Poly(num, x).real_roots() if r > 0]
    vals = [(sp.N(reG.subs(x, r), 30), r) for r in cands]
    v, r = min(vals, key=lambda t: t[0])
    return {"minReG": str(v), "criticalFrequency": str(sp.N(sp.sqrt(r), 30)), "minReZ_0_1_6": str(sp.N(1 + sp.Rational(1.6) * v, 30))}


def main():
    out = {"source": f"mpmath {mp.__version__} at {mp.mp.dps} digits, sympy {sp.__version__}", "models": {}}
    blocks, bs, cs = model_modal40()
    modes = [(0.005 + 0.001 * (i % 5), 0.5 * 1.25**i) for i in range(20)]
    v, w = min_re_g(blocks, bs, cs, modes)
    out["models"]["modal40"] = {"model": assemble(blocks, bs, cs), "minReG": mp.nstr(v, 25), "criticalFrequency": mp.nstr(w, 25), "limit": mp.nstr(-1 / v, 25)}
    blocks, bs, cs = model_repeated24()
    modes = [(0.02, 1.0)] + [(0.05, 2.0 + 1.5 * i) for i in range(8)]
    v, w = min_re_g(blocks, bs, cs, modes)
    out["models"]["repeated24"] = {"model": assemble(blocks, bs, cs), "minReG": mp.nstr(v, 25), "criticalFrequency": mp.nstr(w, 25), "limit": mp.nstr(-1 / v, 25)}
    modes = [(0.002, 1.0 + 0.001 * i) for i in range(20)]
    blocks, bs, cs = model_cluster40(1.0)
    v, w = min_re_g(blocks, bs, cs, modes)
    # scale the output so that the limit is about 5.6e-10, as in the review's case
    gain = float(mp.nstr((-1 / v) / mp.mpf("5.6e-10"), 6))
    blocks, bs, cs = model_cluster40(gain)
    v, w = min_re_g(blocks, bs, cs, modes)
    out["models"]["cluster40"] = {"model": assemble(blocks, bs, cs), "minReG": mp.nstr(v, 25), "criticalFrequency": mp.nstr(w, 25), "limit": mp.nstr(-1 / v, 25)}
    out["defect5"] = defect5_exact()
    out["fourfold"] = fourfold()
    json.dump(out, sys.stdout, indent=1)


def fourfold():
    """The 4-fold lightly damped mode of property.test.ts: -0.02 +/- 0.999799979995999j four times and
    -0.11078105537246409 +/- 5.5048503444431915j, unit DC gain; G from its factors at 40 digits."""
    ps = [(-0.02, 0.999799979995999)] * 4 + [(-0.11078105537246409, 5.5048503444431915)]
    dc = mp.mpf(1)
    for a, b in ps:
        dc *= mp.mpf(a) ** 2 + mp.mpf(b) ** 2

    def g(w):
        s = mp.mpc(0, w)
        v = dc
        for a, b in ps:
            v /= (s - mp.mpc(a, b)) * (s - mp.mpc(a, -b))
        return mp.re(v)

    best = None
    for i in range(4001):
        w = 0.9 + 0.2 * i / 4000
        v = g(w)
        if best is None or v < best[0]:
            best = (v, w)
    a, b = mp.mpf(best[1]) - mp.mpf(0.2) / 4000, mp.mpf(best[1]) + mp.mpf(0.2) / 4000
    phi = (mp.sqrt(5) - 1) / 2
    for _ in range(80):
        c, d = b - phi * (b - a), a + phi * (b - a)
        if g(c) < g(d):
            b = d
        else:
            a = c
    wm = mp.findroot(lambda w: mp.diff(g, w), (a + b) / 2, verify=False)
    v = g(wm)
    return {"minReG": mp.nstr(v, 25), "criticalFrequency": mp.nstr(wm, 25), "limit": mp.nstr(-1 / v, 25)}


if __name__ == "__main__":
    if len(sys.argv) > 1 and sys.argv[1] == "fourfold":
        json.dump(fourfold(), sys.stdout, indent=1)
    else:
        main()
