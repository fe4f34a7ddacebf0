#!/usr/bin/python3
"""Popov limits sup over q >= 0 of -1/g(q), g(q) = min over w of Re[(1 + j w q) G(jw)], for the modal models
of modal-models.json, by mpmath (python3-mpmath 1.2.1) at 30 digits from the blocks of the state-space
model (no polynomial expansion). g is concave in q (a minimum of affine functions), so a golden-section
search over log q finds its maximum; each g(q) is a dense sweep refined by golden section in w.
    /usr/bin/python3 tests/unit/stability/reference/popov_limits.py modal40=Q1 repeated24=Q2 cluster40=Q3 \
        > tests/unit/stability/reference/popov-limits.json
The optional name=q arguments also give -1/g(q) at those multipliers (q in seconds; the test passes the
multipliers the engine reports), so a proved threshold can be compared with the value at its own q.
"""
import json
import sys

import mpmath as mp

mp.mp.dps = 30


def blocks_of(model):
    A, B, C = model["A"], model["B"], model["C"][0]
    n = len(A)
    out = []
    i = 0
    while i < n:
        j = i + 1
        # a block ends where no entry couples it to the rest
        while j < n and any(A[r][c] != 0 for r in range(i, j) for c in range(j, n)):
            j += 1
        out.append(([row[i:j] for row in A[i:j]], [B[r][0] for r in range(i, j)], C[i:j]))
        i = j
    return out


def g_of(blocks, w):
    total = mp.mpc(0)
    jw = mp.mpc(0, w)
    for blk, b, c in blocks:
        n = len(blk)
        M = mp.matrix(n, n)
        for r in range(n):
            for k in range(n):
                M[r, k] = (jw if r == k else 0) - mp.mpf(blk[r][k])
        y = mp.lu_solve(M, mp.matrix([mp.mpf(v) for v in b]))
        total += sum(mp.mpf(c[r]) * y[r] for r in range(n))
    return total


def main():
    data = json.load(open("tests/unit/stability/reference/modal-models.json"))
    at_q = dict(a.split("=") for a in sys.argv[1:])
    out = {"source": f"mpmath {mp.__version__} at {mp.mp.dps} digits", "models": {}}
    for name, entry in data["models"].items():
        blocks = blocks_of(entry["model"])
        wc = float(entry["criticalFrequency"])
        ws = set()
        for i in range(1201):
            ws.add(1e-3 * 1e5 ** (i / 1200))
        for blk, _, _ in blocks:
            s, w = blk[0][0], blk[0][1]
            for k in range(-40, 41):
                ws.add(w + k * abs(s) / 8)
        for k in range(-200, 201):
            ws.add(wc * (1 + k * 1e-4))
        ws = sorted(w for w in ws if w > 0)
        G = [g_of(blocks, w) for w in ws]
        samples = [(mp.re(g), w * mp.im(g)) for g, w in zip(G, ws)]

        def g_sampled(q):
            return min(re - q * wi for re, wi in samples)

        def g_refined(q):
            vals = [re - q * wi for re, wi in samples]
            order = sorted(range(len(vals)), key=lambda i: vals[i])[:6]
            best = min(vals)
            f = lambda w: mp.re((1 + mp.mpc(0, w) * q) * g_of(blocks, w))
            for i in order:
                a, b = mp.mpf(ws[max(0, i - 1)]), mp.mpf(ws[min(len(ws) - 1, i + 1)])
                phi = (mp.sqrt(5) - 1) / 2
                for _ in range(50):
                    c, d = b - phi * (b - a), a + phi * (b - a)
                    if f(c) < f(d):
                        b = d
                    else:
                        a = c
                best = min(best, f((a + b) / 2))
            return best

        grid = [0] + [10 ** (e / 4) for e in range(-32, 17)]
        vals = [g_sampled(q) for q in grid]
        i = max(range(len(grid)), key=lambda k: vals[k])
        a = grid[max(0, i - 1)]
        b = grid[min(len(grid) - 1, i + 1)]
        phi = (mp.sqrt(5) - 1) / 2
        for _ in range(60):
            c, d = b - phi * (b - a), a + phi * (b - a)
            if g_sampled(c) > g_sampled(d):
                b = d
            else:
                a = c
        q = (a + b) / 2
        g = g_refined(q)
        out["models"][name] = {"q": mp.nstr(q, 12), "g": mp.nstr(g, 15), "popovLimit": mp.nstr(-1 / g, 15) if g < 0 else "Infinity"}
        if name in at_q:
            qe = mp.mpf(at_q[name])
            ge = g_refined(qe)
            out["models"][name]["atQ"] = {"q": at_q[name], "g": mp.nstr(ge, 15), "value": mp.nstr(-1 / ge, 15)}
    json.dump(out, sys.stdout, indent=1)


if __name__ == "__main__":
    main()
