// Certified sign decisions: a floating-point filter with a rigorous error bound first, exact integer
// arithmetic when the filter cannot separate the answer from zero. This is the pattern of exact geometric
// predicates (Shewchuk, "Adaptive precision floating-point arithmetic and fast robust geometric
// predicates", Discrete Comput. Geom. 18 (1997)); here the filter is Smith's inclusion theorem (roots.ts).

import {
	type DPoly,
	bitLength,
	evenRealPart,
	type Dyadic,
	dyadicToNumber,
	dyadicOf,
	isHurwitzExact,
	signAt
} from './exact';
import { tick } from './budget';
import { firstPositiveRoot } from './isolate';
import { type C, inclusionDisks, polyRoots, disksMeetNonnegativeReals, type Disk } from './roots';

/** How a decision was reached: by the floating filter, or by the exact fallback. */
export type DecisionPath = 'filter' | 'exact';

/** Rounded copy of an exact integer polynomial (scaled so the largest coefficient is near 1) with bounds. */
export function toFloatWithBounds(c: readonly bigint[]): { a: number[]; err: number[]; shift: number } {
	let maxBits = 0;
	for (const v of c) {
		const b = bitLength(v);
		if (b > maxBits) maxBits = b;
	}
	const shift = -maxBits;
	const a = c.map((v) => dyadicToNumber(v, shift));
	const err = a.map((v) => Math.abs(v) * 1.2 * 2 ** -52 + 2 ** -1070);
	return { a, err, shift };
}

/**
 * Size (degree x coefficient bits) above which positive-real.ts reports its exact factor test as undecided.
 * The circle, max-sector and Popov decisions have no size limit: they run under the check's time budget
 * (budget.ts) and say so when it runs out.
 */
export const EXACT_BUDGET = 8_000;

export interface HurwitzResult {
	/** True only when decided Hurwitz; see `undecided`. */
	hurwitz: boolean;
	undecided?: boolean;
	path: DecisionPath;
	roots: C[];
	/** Largest real part among the roots (numerical, for reporting). */
	maxRealPart: number | null;
}

/** Is the exact polynomial Hurwitz? Filter: all inclusion disks in the open left half-plane. */
const hurwitzCache = new WeakMap<DPoly, HurwitzResult>();

export function certifiedHurwitz(p: DPoly, forceExact = false): HurwitzResult {
	// Polynomials are never mutated, so a decision is kept per polynomial object (the plant's denominator is
	// asked about by several checks).
	const hit = forceExact ? undefined : hurwitzCache.get(p);
	if (hit) return hit;
	const r = hurwitzOf(p, forceExact);
	if (!forceExact) hurwitzCache.set(p, r);
	return r;
}

function hurwitzOf(p: DPoly, forceExact: boolean): HurwitzResult {
	const c = p.c;
	const n = c.length - 1;
	if (n <= 0) return { hurwitz: n === 0, path: 'exact', roots: [], maxRealPart: null };
	const { a, err } = toFloatWithBounds(c);
	const roots = polyRoots(a);
	const maxRe = roots.reduce((m, r) => Math.max(m, r.re), -Infinity);
	// Cheap exact necessary condition first: all coefficients of one sign (Stodola).
	const s = c[n] > 0n ? 1n : -1n;
	for (const v of c) if (v * s <= 0n) return { hurwitz: false, path: 'exact', roots, maxRealPart: maxRe };
	if (!forceExact) {
		const disks = inclusionDisks(a, err, roots);
		if (disks) {
			if (disks.every((d) => d.c.re + d.r < 0))
				return { hurwitz: true, path: 'filter', roots, maxRealPart: maxRe };
			if (someComponentInOpenRHP(disks)) return { hurwitz: false, path: 'filter', roots, maxRealPart: maxRe };
		}
	}
	return { hurwitz: isHurwitzExact(c).hurwitz, path: 'exact', roots, maxRealPart: maxRe };
}

/**
 * True when some connected component of the inclusion disks lies wholly in the open right half-plane: by
 * Smith's theorem a component of m disks holds exactly m roots, so at least one root is there.
 */
function someComponentInOpenRHP(disks: Disk[]): boolean {
	const n = disks.length;
	const parent = disks.map((_, i) => i);
	const find = (i: number): number => (parent[i] === i ? i : (parent[i] = find(parent[i])));
	for (let i = 0; i < n; i++)
		for (let j = i + 1; j < n; j++) {
			const d = Math.hypot(disks[i].c.re - disks[j].c.re, disks[i].c.im - disks[j].c.im);
			if (d <= (disks[i].r + disks[j].r) * (1 + 1e-12)) parent[find(i)] = find(j);
		}
	const allRhp = new Map<number, boolean>();
	for (let i = 0; i < n; i++) {
		const root = find(i);
		const inRhp = disks[i].c.re - disks[i].r > 0;
		allRhp.set(root, (allRhp.get(root) ?? true) && inRhp);
	}
	for (const v of allRhp.values()) if (v) return true;
	return false;
}

export interface PositivityResult {
	/** Set when the exact isolation ran past its work limit: `positive` is then false but not proved. */
	undecided?: boolean;
	/** Why undecided (the work limit that was reached). */
	reason?: string;
	/** E(x) > 0 for every x >= 0. */
	positive: boolean;
	path: DecisionPath;
	/** When not positive: a dyadic x >= 0 where E(x) <= 0 was shown exactly, if one was found. */
	witness?: number;
	/** Distinct roots in (0, inf) (0 on a proved pass; at least 1 on an exact fail). */
	positiveRoots?: number;
	/** On an exact fail: a dyadic interval (lo, hi) holding a root of E in (0, inf), from the isolation. */
	rootInterval?: [number, number];
}

/**
 * Is the exact polynomial E strictly positive on [0, inf)? E must not be identically zero.
 * Filter: E(0) > 0 and no inclusion disk meets [0, inf). Exact: E(0) > 0 and no root in (0, inf) by
 * Descartes / Collins-Akritas isolation (isolate.ts); a root found there comes with a point where E <= 0.
 * `hints` are x values (e.g. a numerical argmin) tried first as exact counter-examples.
 */
export function certifiedPositiveOnHalfLine(
	E: DPoly,
	hints: readonly number[] = [],
	forceExact = false
): PositivityResult {
	const c = E.c;
	if (c.length === 0) return { positive: false, path: 'exact', witness: 0 };
	if (c[0] <= 0n) return { positive: false, path: 'exact', witness: 0 };
	if (c[c.length - 1] < 0n) {
		// Negative at infinity: find some explicit witness by doubling.
		let x = 1;
		for (let k = 0; k < 4000; k++) {
			tick();
			if (signAt(c, dyadicOf(x)) <= 0) return { positive: false, path: 'exact', witness: x };
			x *= 2;
			if (!Number.isFinite(x)) break;
		}
		return { positive: false, path: 'exact' };
	}
	for (const h of hints) {
		if (!(h >= 0) || !Number.isFinite(h)) continue;
		if (signAt(c, dyadicOf(h)) <= 0) return { positive: false, path: 'exact', witness: h };
	}
	if (c.length === 1) return { positive: true, path: 'exact' };
	// All coefficients positive: Descartes gives no positive root.
	if (c.every((v) => v > 0n)) return { positive: true, path: 'exact', positiveRoots: 0 };
	if (!forceExact) {
		const { a, err } = toFloatWithBounds(c);
		const roots = polyRoots(a);
		const disks = inclusionDisks(a, err, roots);
		if (disks && !disksMeetNonnegativeReals(disks))
			return { positive: true, path: 'filter', positiveRoots: 0 };
		// Try the approximate positive roots' neighbourhoods as exact witnesses of a sign change.
		const cand: number[] = [];
		const reals = roots
			.filter((r) => r.re > 0 && Math.abs(r.im) <= 1e-6 * Math.max(1e-300, r.re))
			.map((r) => r.re)
			.sort((p, q) => p - q);
		for (let i = 0; i + 1 < reals.length; i++) cand.push((reals[i] + reals[i + 1]) / 2);
		for (const r of reals) cand.push(r);
		for (const x of cand) {
			if (x > 0 && Number.isFinite(x) && signAt(c, dyadicOf(x)) <= 0)
				return { positive: false, path: 'filter', witness: x };
		}
	}
	const iso = firstPositiveRoot(c);
	if (iso.kind === 'none') return { positive: true, path: 'exact', positiveRoots: 0 };
	if (iso.kind === 'undecided')
		return { positive: false, path: 'exact', undecided: true, reason: iso.reason };
	const lo = dyadicToNumber(iso.lo.m, iso.lo.e);
	const hi = dyadicToNumber(iso.hi.m, iso.hi.e);
	const w = iso.nonPositiveAt ? dyadicToNumber(iso.nonPositiveAt.m, iso.nonPositiveAt.e) : undefined;
	return {
		positive: false,
		path: 'exact',
		positiveRoots: 1,
		rootInterval: [lo, hi],
		...(w !== undefined && signAt(c, dyadicOf(w)) <= 0 ? { witness: w } : {})
	};
}

export function dyadicFromNumber(x: number): Dyadic {
	return dyadicOf(x);
}

/** Float copy of an exact polynomial on the common scale 2^shift (given), with rounding bounds. */
function floatOn(p: DPoly, shift: number): { a: number[]; err: number[] } {
	const a = p.c.map((v) => dyadicToNumber(v, p.e + shift));
	return { a, err: a.map((v) => Math.abs(v) * 1.2 * 2 ** -52 + 2 ** -1070) };
}

function topBit(p: DPoly): number {
	let top = -Infinity;
	for (const v of p.c) if (v !== 0n) top = Math.max(top, bitLength(v) + p.e);
	return top;
}

/**
 * Floating E(x) = Re[P(jw) Q(-jw)] with a rigorous bound on |E_m - fl(E_m)|. P, Q are rounded from the exact
 * polynomials (relative error <= 1.2u each); each E_m is a signed sum of L products, so
 * |E_m - fl(E_m)| <= ((L + 1) u + 2.4u + 2u^2) S_m with S_m = sum |P_i||Q_j| (Higham, Accuracy and Stability
 * of Numerical Algorithms, 2nd ed., eq. (3.5) for inner products); S_m itself is computed in floating point,
 * so the bound is inflated by a further (1 + 2(L + 1)u) and a safety factor of 1.01.
 */
export function evenRealPartWithBounds(P: DPoly, Q: DPoly): { a: number[]; err: number[]; shift: number } {
	const sP = -topBit(P);
	const sQ = -topBit(Q);
	const pf = floatOn(P, sP).a;
	const qf = floatOn(Q, sQ).a.map((v, i) => (i % 2 ? -v : v));
	const nE = Math.floor((pf.length + qf.length - 2) / 2) + 1;
	const a: number[] = new Array(nE).fill(0);
	const err: number[] = new Array(nE).fill(0);
	const u = 2 ** -53;
	for (let m = 0; m < nE; m++) {
		let s = 0;
		let abs = 0;
		let L = 0;
		const k = 2 * m;
		const i0 = Math.max(0, k - (qf.length - 1));
		const i1 = Math.min(pf.length - 1, k);
		for (let i = i0; i <= i1; i++) {
			const t = pf[i] * qf[k - i];
			s += t;
			abs += Math.abs(t);
			L++;
		}
		a[m] = m % 2 ? -s : s;
		err[m] = ((L + 1) * u + 2.4 * u + 2 * u * u) * abs * (1 + 2 * (L + 1) * u) * 1.01 + 2 ** -1060;
	}
	// No trailing coefficient is dropped: an uncertain leading coefficient sends the caller to the exact path.
	// true E = 2^-(sP + sQ) * (a +- err)
	return { a, err, shift: sP + sQ };
}

/** Even and odd parts: p(jw) = pe(x) + j w po(x), x = w^2 (exact integer coefficients). */
function evenOdd(p: DPoly): { e: bigint[]; o: bigint[] } {
	const e: bigint[] = [];
	const o: bigint[] = [];
	for (let i = 0; i < p.c.length; i++) {
		const k = Math.floor(i / 2);
		const v = k % 2 ? -p.c[i] : p.c[i];
		if (i % 2 === 0) e.push(v);
		else o.push(v);
	}
	return { e, o };
}

export function evalAt(c: readonly bigint[], x: Dyadic): { m: bigint; e: number } {
	// exact value of the integer polynomial at a dyadic point, as m * 2^e
	const n = c.length - 1;
	if (n < 0) return { m: 0n, e: 0 };
	if (x.e >= 0) {
		const xv = x.m << BigInt(x.e);
		let acc = 0n;
		for (let i = n; i >= 0; i--) acc = acc * xv + c[i];
		return { m: acc, e: 0 };
	}
	const f = BigInt(-x.e);
	let acc = 0n;
	let d = 1n;
	for (let i = n; i >= 0; i--) {
		acc = acc * x.m + c[i] * d;
		d <<= f;
	}
	return { m: acc, e: x.e * n };
}

function addDy(a: { m: bigint; e: number }, b: { m: bigint; e: number }) {
	const e = Math.min(a.e, b.e);
	return { m: (a.m << BigInt(a.e - e)) + (b.m << BigInt(b.e - e)), e };
}

/**
 * Exact sign of E(x) = Pe Qe + x Po Qo at a dyadic x >= 0 without forming E: four Horner evaluations of
 * half-degree integer polynomials.
 */
export function signOfEAt(P: DPoly, Q: DPoly, x: number): number {
	const xd = dyadicOf(x);
	const p = evenOdd(P);
	const q = evenOdd(Q);
	const pe = evalAt(p.e, xd);
	const qe = evalAt(q.e, xd);
	const po = evalAt(p.o, xd);
	const qo = evalAt(q.o, xd);
	const t1 = { m: pe.m * qe.m, e: pe.e + qe.e };
	const t2 = { m: po.m * qo.m * xd.m, e: po.e + qo.e + xd.e };
	const s = addDy(t1, t2);
	return s.m > 0n ? 1 : s.m < 0n ? -1 : 0;
}

/**
 * E(x) = Re[P(jw) Q(-jw)] > 0 on [0, inf)? Floating filter on the bounded floating E first (Smith disks),
 * exact witnesses at the hints, and the exact polynomial and Sturm sequence only when the filter cannot decide.
 * Requires deg P, deg Q known (exact inputs); the caller checks the conditions at infinity.
 */
export function certifiedPositiveEven(
	P: DPoly,
	Q: DPoly,
	hints: readonly number[] = [],
	forceExact = false
): PositivityResult & { E?: DPoly; nearAxis?: number[] } {
	let nearAxis: number[] | undefined;
	if (!forceExact) {
		for (const h of hints) {
			if (h >= 0 && Number.isFinite(h) && signOfEAt(P, Q, h) <= 0)
				return { positive: false, path: 'filter', witness: h };
		}
		const { a, err } = evenRealPartWithBounds(P, Q);
		const n = a.length - 1;
		const lcSure = Math.abs(a[n]) > err[n];
		const c0Sure = a[0] > err[0];
		if (n >= 1 && lcSure && c0Sure && a[n] > 0) {
			const roots = polyRoots(a);
			nearAxis = roots.filter((r) => r.re > 0 && Math.abs(r.im) < r.re).map((r) => r.re);
			const disks = inclusionDisks(a, err, roots);
			if (disks && !disksMeetNonnegativeReals(disks))
				return { positive: true, path: 'filter', positiveRoots: 0, nearAxis };
			const reals = roots
				.filter((r) => r.re > 0 && Math.abs(r.im) <= 1e-6 * Math.max(1e-300, r.re))
				.map((r) => r.re)
				.sort((p, q) => p - q);
			const cand: number[] = [];
			for (let i = 0; i + 1 < reals.length; i++) cand.push((reals[i] + reals[i + 1]) / 2);
			for (const x of cand)
				if (signOfEAt(P, Q, x) <= 0) return { positive: false, path: 'filter', witness: x, nearAxis };
		} else if (n === 0 && a[0] > err[0]) return { positive: true, path: 'filter', positiveRoots: 0 };
	}
	// Second stage: the exact E, rounded once (tight bounds), through the same filter; then Sturm.
	const E = evenRealPart(P, Q);
	return { ...certifiedPositiveOnHalfLine(E, hints, forceExact), E, nearAxis };
}

/**
 * The first of a few values just below an estimated limit, from + (estimate - from)(1 - f) for
 * f = 1e-9, 1e-7, ..., 0.5, that `passes` proves exactly; null when none does. The estimate is numerical;
 * only what `passes` decides is reported as proved.
 */
export function provedBelow(estimate: number, passes: (k: number) => boolean, from = 0): number | null {
	for (const f of [1e-9, 1e-7, 1e-5, 1e-3, 1e-2, 0.1, 0.5]) {
		const k = from + (estimate - from) * (1 - f);
		if (k > from && passes(k)) return k;
	}
	return null;
}
