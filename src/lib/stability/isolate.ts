// Certified real-root isolation on (0, inf) for integer polynomials: Descartes' rule of signs with the
// bisection of Collins and Akritas ("Polynomial real root isolation using Descartes' rule of signs",
// SYMSAC 1976), on dyadic intervals, in exact BigInt arithmetic (the form of Rouillier & Zimmermann,
// "Efficient isolation of polynomial's real roots", J. Comput. Appl. Math. 162 (2004)). The count of sign
// variations of (y + 1)^n q(1/(y + 1)) bounds the number of roots of q in (0, 1) and has its parity;
// 0 variations prove no root, 1 proves exactly one (Vincent's theorem; Alesina & Galuzzi 1998 for the
// termination of the bisection on square-free polynomials). Coefficients are ASCENDING.
import { tick, tickNow } from './budget';
import { type Dyadic, derivInt, divExact, gcdPoly, log2Abs, signAt, signVariations } from './exact';

export type Isolation =
	/** No root in (0, inf). */
	| { kind: 'none'; nodes: number }
	/**
	 * A root in the open interval (lo, hi) (lo === hi: an exact dyadic root), found first in increasing x.
	 * `nonPositiveAt` is a dyadic point where p <= 0 exactly, when p changes sign there (always for a simple root).
	 */
	| { kind: 'root'; lo: Dyadic; hi: Dyadic; nonPositiveAt?: Dyadic; nodes: number }
	| { kind: 'undecided'; reason: string; nodes: number };

/** Deepest bisection level before the square-free part is taken (a real multiple root never isolates). */
export const MAX_DEPTH = 160;

/**
 * Upper bound 2^b on the positive roots of p (ascending, leading coefficient nonzero): Kioustelidis' bound
 * 2 max { |a_i / a_n|^(1/(n-i)) : a_i a_n < 0 } (J. Kioustelidis, "Bounds for positive roots of polynomials",
 * J. Comput. Appl. Math. 16 (1986) 241-244), with one extra bit for the floating log2.
 */
function positiveRootBoundLog2(p: readonly bigint[]): number | null {
	const n = p.length - 1;
	const ln = log2Abs(p[n], 0);
	const sn = p[n] > 0n;
	let best = -Infinity;
	for (let i = 0; i < n; i++) {
		if (p[i] === 0n || p[i] > 0n === sn) continue;
		best = Math.max(best, (log2Abs(p[i], 0) - ln) / (n - i));
	}
	if (best === -Infinity) return null;
	return Math.ceil(best + 1 + 1e-9) + 1;
}

/** p(x + 1) in place (Knuth, TAOCP vol. 2, 3rd ed., section 4.6.4, Horner's scheme repeated). */
function taylorShift1(a: bigint[]): void {
	const n = a.length - 1;
	for (let i = 0; i < n; i++) {
		for (let j = n - 1; j >= i; j--) a[j] += a[j + 1];
		tick();
	}
}

/** Divide out the common power of two (positive factor: signs unchanged). */
function dropTwos(a: bigint[]): void {
	let or = 0n;
	for (const v of a) or |= v < 0n ? -v : v;
	if (or === 0n) return;
	let tz = 0n;
	while ((or & 1n) === 0n) {
		or >>= 1n;
		tz++;
	}
	if (tz > 0n) for (let i = 0; i < a.length; i++) a[i] >>= tz;
}

function variationsOnUnit(q: readonly bigint[]): number {
	// (y + 1)^n q(1/(y + 1)): reverse, then shift by one.
	const r = q.slice().reverse();
	taylorShift1(r);
	return signVariations(r);
}

const dy = (m: bigint, e: number): Dyadic => ({ m, e });

/**
 * Isolate the first root of p in (0, inf). Requires p(0) != 0. Returns 'undecided' only when the bisection
 * goes deeper than MAX_DEPTH on the square-free part as well (the time budget is enforced through tick()).
 */
export function firstPositiveRoot(pIn: readonly bigint[]): Isolation {
	const p = pIn.slice();
	while (p.length > 1 && p[p.length - 1] === 0n) p.pop();
	if (p.length <= 1) return { kind: 'none', nodes: 0 };
	if (p[0] === 0n) throw new RangeError('firstPositiveRoot: p(0) = 0');
	const r = isolate(p);
	if (r.kind !== 'undecided') return r;
	// A real multiple root (or a cluster beyond the depth limit): work on the square-free part, whose real
	// roots are those of p, each simple (Yun 1976; the gcd by the primitive PRS).
	const g = gcdPoly(p, derivInt(p));
	if (g.length <= 1) return r;
	const s = divExact(p, g);
	const r2 = isolate(s);
	if (r2.kind === 'root') {
		// A root of p; p keeps its sign where s changes sign only for odd multiplicity: check exactly.
		const neg = [r2.lo, r2.hi].find((x) => signAt(p, x) < 0);
		return {
			kind: 'root',
			lo: r2.lo,
			hi: r2.hi,
			...(neg ? { nonPositiveAt: neg } : {}),
			nodes: r.nodes + r2.nodes
		};
	}
	return { ...r2, nodes: r.nodes + r2.nodes };
}

function isolate(p: bigint[]): Isolation {
	const n = p.length - 1;
	if (signVariations(p) === 0) return { kind: 'none', nodes: 0 };
	const b = positiveRootBoundLog2(p);
	if (b === null) return { kind: 'none', nodes: 0 };
	// q(y) = p(2^b y) (times 2^(-b n) when b < 0): the positive roots of p are 2^b times those of q in (0, 1).
	const q0 = p.map((v, i) => (b >= 0 ? v << BigInt(b * i) : v << BigInt(-b * (n - i))));
	dropTwos(q0);
	// Depth-first, left interval first, so the first root found is the smallest.
	const stack: { q: bigint[]; k: number; a: bigint }[] = [{ q: q0, k: 0, a: 0n }];
	let nodes = 0;
	while (stack.length) {
		const node = stack.pop()!;
		nodes++;
		tickNow();
		const { q, k, a } = node;
		if (signVariations(q) === 0) continue;
		const v = variationsOnUnit(q);
		if (v === 0) continue;
		// Interval (a 2^-k, (a + 1) 2^-k) in y, i.e. 2^b times that in x.
		const lo = dy(a, b - k);
		const hi = dy(a + 1n, b - k);
		if (v === 1) {
			const neg = [lo, hi].find((x) => signAt(p, x) < 0);
			return { kind: 'root', lo, hi, ...(neg ? { nonPositiveAt: neg } : {}), nodes };
		}
		if (k >= MAX_DEPTH)
			return {
				kind: 'undecided',
				reason: `work budget of ${MAX_DEPTH} bisection levels exceeded`,
				nodes
			};
		// Midpoint exactly a root?
		const mid = dy(2n * a + 1n, b - k - 1);
		if (signAt(p, mid) === 0) return { kind: 'root', lo: mid, hi: mid, nonPositiveAt: mid, nodes };
		// Left half: 2^n q(y/2); right half: the same shifted by one.
		const left = q.map((c, i) => c << BigInt(n - i));
		dropTwos(left);
		const right = left.slice();
		taylorShift1(right);
		dropTwos(right);
		stack.push({ q: right, k: k + 1, a: 2n * a + 1n });
		stack.push({ q: left, k: k + 1, a: 2n * a });
	}
	return { kind: 'none', nodes };
}

/**
 * All positive roots of a square-free p (p(0) != 0), each in its own isolating interval, increasing, by the
 * same Descartes bisection. null when the bisection goes deeper than MAX_DEPTH (not square-free, or a cluster
 * beyond reach).
 */
export function allPositiveRoots(pIn: readonly bigint[]): { lo: Dyadic; hi: Dyadic }[] | null {
	const p = pIn.slice();
	while (p.length > 1 && p[p.length - 1] === 0n) p.pop();
	if (p.length <= 1) return [];
	if (p[0] === 0n) throw new RangeError('allPositiveRoots: p(0) = 0');
	const n = p.length - 1;
	if (signVariations(p) === 0) return [];
	const b = positiveRootBoundLog2(p);
	if (b === null) return [];
	const q0 = p.map((v, i) => (b >= 0 ? v << BigInt(b * i) : v << BigInt(-b * (n - i))));
	dropTwos(q0);
	const out: { lo: Dyadic; hi: Dyadic }[] = [];
	const stack: { q: bigint[]; k: number; a: bigint }[] = [{ q: q0, k: 0, a: 0n }];
	while (stack.length) {
		const { q, k, a } = stack.pop()!;
		tickNow();
		if (signVariations(q) === 0) continue;
		const v = variationsOnUnit(q);
		if (v === 0) continue;
		if (v === 1) {
			out.push({ lo: dy(a, b - k), hi: dy(a + 1n, b - k) });
			continue;
		}
		if (k >= MAX_DEPTH) return null;
		const mid = dy(2n * a + 1n, b - k - 1);
		if (signAt(p, mid) === 0) out.push({ lo: mid, hi: mid });
		const left = q.map((c, i) => c << BigInt(n - i));
		dropTwos(left);
		const right = left.slice();
		taylorShift1(right);
		dropTwos(right);
		stack.push({ q: right, k: k + 1, a: 2n * a + 1n });
		stack.push({ q: left, k: k + 1, a: 2n * a });
	}
	const val = (d: Dyadic) => Number(d.m) * 2 ** d.e;
	return out.sort((u, w) => val(u.lo) - val(w.lo));
}

/**
 * Shrink an isolating interval of a simple root of p (p changes sign across it) by exact bisection at dyadic
 * midpoints until hi - lo <= relTol * lo. Returns the final bracket.
 */
export function refineRoot(
	p: readonly bigint[],
	lo: Dyadic,
	hi: Dyadic,
	relTol: number
): { lo: Dyadic; hi: Dyadic } {
	if (lo.m === hi.m && lo.e === hi.e) return { lo, hi };
	const sl = signAt(p, lo);
	if (sl === 0) return { lo, hi: lo };
	if (signAt(p, hi) === 0) return { lo: hi, hi };
	// Bring both ends to one exponent: lo = A 2^e, hi = B 2^e.
	let e = Math.min(lo.e, hi.e);
	let A = lo.m << BigInt(lo.e - e);
	let B = hi.m << BigInt(hi.e - e);
	for (let i = 0; i < 400; i++) {
		// (B - A) / A <= relTol, compared in floating point on the leading bits (only a stopping rule).
		if (A > 0n && log2Abs(B - A, 0) - log2Abs(A, 0) <= Math.log2(relTol)) break;
		tick();
		A <<= 1n;
		B <<= 1n;
		e -= 1;
		const M = (A + B) >> 1n;
		const s = signAt(p, { m: M, e });
		if (s === 0) return { lo: { m: M, e }, hi: { m: M, e } };
		if (s === sl) A = M;
		else B = M;
	}
	return { lo: { m: A, e }, hi: { m: B, e } };
}
