// Certified sign decisions: a floating-point filter with a rigorous error bound first, exact integer
// arithmetic when the filter cannot separate the answer from zero. This is the pattern of exact geometric
// predicates (Shewchuk, "Adaptive precision floating-point arithmetic and fast robust geometric
// predicates", Discrete Comput. Geom. 18 (1997)); here the filter is Smith's inclusion theorem (roots.ts).

import {
	type DPoly,
	type Dyadic,
	dyadicToNumber,
	dyadicOf,
	isHurwitzExact,
	signAt,
	sturmPositiveRootCount
} from './exact';
import { type C, inclusionDisks, polyRoots, disksMeetNonnegativeReals, type Disk } from './roots';

/** How a decision was reached: by the floating filter, or by the exact fallback. */
export type DecisionPath = 'filter' | 'exact';

/** Rounded copy of an exact integer polynomial (scaled so the largest coefficient is near 1) with bounds. */
export function toFloatWithBounds(c: readonly bigint[]): { a: number[]; err: number[]; shift: number } {
	let maxBits = 0;
	for (const v of c) {
		const b = v === 0n ? 0 : (v < 0n ? -v : v).toString(2).length;
		if (b > maxBits) maxBits = b;
	}
	const shift = -maxBits;
	const a = c.map((v) => dyadicToNumber(v, shift));
	const err = a.map((v) => Math.abs(v) * 1.2 * 2 ** -52 + 2 ** -1070);
	return { a, err, shift };
}

export interface HurwitzResult {
	hurwitz: boolean;
	path: DecisionPath;
	roots: C[];
	/** Largest real part among the roots (numerical, for reporting). */
	maxRealPart: number | null;
}

/** Is the exact polynomial Hurwitz? Filter: all inclusion disks in the open left half-plane. */
export function certifiedHurwitz(p: DPoly, forceExact = false): HurwitzResult {
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

function someComponentInOpenRHP(disks: Disk[]): boolean {
	const inRhp = disks.map((d) => d.c.re - d.r > 0);
	for (let i = 0; i < disks.length; i++) {
		if (!inRhp[i]) continue;
		let isolated = true;
		for (let j = 0; j < disks.length && isolated; j++) {
			if (inRhp[j] || j === i) continue;
			const d = Math.hypot(disks[i].c.re - disks[j].c.re, disks[i].c.im - disks[j].c.im);
			if (d <= disks[i].r + disks[j].r) isolated = false;
		}
		// The component of disk i consists only of open-RHP disks, so it holds at least one root there.
		if (isolated) return true;
	}
	return false;
}

export interface PositivityResult {
	/** E(x) > 0 for every x >= 0. */
	positive: boolean;
	path: DecisionPath;
	/** When not positive: a dyadic x >= 0 where E(x) <= 0 was shown exactly, if one was found. */
	witness?: number;
	/** Distinct roots in (0, inf) (exact path only). */
	positiveRoots?: number;
}

/**
 * Is the exact polynomial E strictly positive on [0, inf)? E must not be identically zero.
 * Filter: E(0) > 0 and no inclusion disk meets [0, inf). Exact: E(0) > 0 and Sturm count zero.
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
	const cnt = sturmPositiveRootCount(c);
	return { positive: cnt === 0, path: 'exact', positiveRoots: cnt };
}

export function dyadicFromNumber(x: number): Dyadic {
	return dyadicOf(x);
}
