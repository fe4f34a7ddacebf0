// Circle criterion (Khalil, Nonlinear Systems, 3rd ed., section 7.1, Theorem 7.1 and the scalar circle
// criterion stated after it): the loop is absolutely stable for every phi (possibly time-varying) in the
// sector [k1, k2] when Z(s) = (1 + k2 G(s)) / (1 + k1 G(s)) is strictly positive real; for k2 = infinity
// the condition is that G / (1 + k1 G) is SPR (same theorem, sector [K1, infinity]).
//
// With G = N/D: Z = P/Q, P = D + k2 N (P = N when k2 = infinity), Q = D + k1 N. SPR is decided by
// Khalil's Lemma 6.1 (scalar form): Z Hurwitz (Q Hurwitz), Re Z(jw) > 0 for all real w, and at infinity
// either Z(inf) > 0 or Z(inf) = 0 with lim w^2 Re Z(jw) > 0. Re Z(jw) = E(x) / |Q(jw)|^2 with
// E(x) = Re[P(jw) Q(-jw)], x = w^2, so the frequency condition is E > 0 on [0, inf).
import { type DPoly, addD, degree, dyadicOf, evenRealPart, isZero, scaleD } from '../exact';
import { certifiedHurwitz, certifiedPositiveEven, type DecisionPath, signOfEAt } from '../certify';
import { addF, evenRealPartF, toFloat, toFloatCommon } from '../fpoly';
import { circleFamily, familyConsider, familyMinimum } from '../frequency';
import type { Plant } from '../model';
import { type C, minRatioFromCandidates, polyRoots, resonanceX } from '../roots';

export interface CircleCore {
	pass: boolean;
	/** Which condition failed, in words; undefined on pass. */
	failure?: 'ill-posed' | 'hurwitz' | 'infinity' | 'frequency' | 'lossless' | 'undecided';
	/** Why undecided (the work limit that was reached). */
	reason?: string;
	qHurwitz: boolean;
	hurwitzPath: DecisionPath;
	positivityPath?: DecisionPath;
	/** Largest real part of the roots of Q (rad/s, numerical). */
	qMaxRealPart: number | null;
	/** Scaled x = (w/w0)^2 where E <= 0 was shown exactly (fail witness). */
	witnessX?: number;
	/** On a fail proved by root isolation: a scaled x interval holding a root of E. */
	rootInterval?: [number, number];
	/** min over w of Re Z(jw) and where (scaled x), null at infinity; see frequency.ts. */
	minReZ?: number;
	argminX?: number | null;
}

export function zPolys(plant: Plant, k1: number, k2: number): { P: DPoly; Q: DPoly } {
	const { Ns, Ds } = plant;
	const Q = isZero(Ns) ? Ds : addD(Ds, scaleD(Ns, dyadicOf(k1)));
	let P: DPoly;
	if (k2 === Infinity) P = Ns;
	else P = isZero(Ns) ? Ds : addD(Ds, scaleD(Ns, dyadicOf(k2)));
	return { P, Q };
}

/**
 * The exact SPR decision for Z, with the minimum of Re Z (frequency.ts) as the candidate witness for a fail:
 * a fail is proved by the exact sign of E at a frequency, a pass by the floating filter or by certified root
 * isolation of E on [0, inf).
 */
export function circleCore(
	plant: Plant,
	k1: number,
	k2: number,
	opts: { forceExact?: boolean } = {}
): CircleCore {
	const n = plant.order;
	const { P, Q } = zPolys(plant, k1, k2);
	if (degree(Q) < n)
		return { pass: false, failure: 'ill-posed', qHurwitz: false, hurwitzPath: 'exact', qMaxRealPart: null };
	const fam = circleFamily(plant, k1);
	const h = opts.forceExact ? certifiedHurwitz(Q, true) : fam.hurwitz;
	const base = { qHurwitz: h.hurwitz, hurwitzPath: h.path, qMaxRealPart: h.maxRealPart };
	if (h.undecided) return { pass: false, failure: 'undecided', ...base };
	if (!h.hurwitz) return { pass: false, failure: 'hurwitz', ...base };
	// Infinity part of Lemma 6.1: relative degree of Z at most 1 and deg E >= n - 1 (E's top coefficients
	// are decided exactly from those of P and Q).
	const topE = exactTopDegree(P, Q, n);
	// Re Z = 1 + (k2 - k1) r (r itself for k2 = infinity); one minimum of r serves every k2.
	let mn = familyMinimum(fam);
	const reZ = (r: number) => (k2 === Infinity ? r : 1 + (k2 - k1) * r);
	const numeric = () => ({ minReZ: reZ(mn.r), argminX: mn.x });
	if (topE === -1) return { pass: false, failure: 'lossless', ...base, ...numeric() };
	if (topE < n - 1 || degree(P) < n - 1) return { pass: false, failure: 'infinity', ...base, ...numeric() };
	// The numerical minimum as a witness: the exact sign of E there.
	if (!opts.forceExact && mn.x !== null && reZ(mn.r) <= 0 && signOfEAt(P, Q, mn.x) <= 0)
		return {
			pass: false,
			failure: 'frequency',
			...base,
			positivityPath: 'exact',
			witnessX: mn.x,
			...numeric()
		};
	const pos = certifiedPositiveEven(P, Q, [], opts.forceExact);
	if (pos.undecided)
		return {
			pass: false,
			failure: 'undecided',
			...(pos.reason ? { reason: pos.reason } : {}),
			...base,
			positivityPath: pos.path,
			...numeric()
		};
	if (!pos.positive) {
		// The isolation found a violation the sweep had missed: refine the minimum there.
		const at =
			pos.witness ?? (pos.rootInterval ? (pos.rootInterval[0] + pos.rootInterval[1]) / 2 : undefined);
		if (at !== undefined && at > 0) mn = familyConsider(fam, at);
		return {
			pass: false,
			failure: 'frequency',
			...base,
			positivityPath: pos.path,
			...(pos.witness !== undefined ? { witnessX: pos.witness } : {}),
			...(pos.rootInterval ? { rootInterval: pos.rootInterval } : {}),
			...numeric()
		};
	}
	return { pass: true, ...base, positivityPath: pos.path, ...numeric() };
}

/**
 * Exact degree of E = Re[P(jw) Q(-jw)] when it is n or n - 1 (computed from the top coefficients only),
 * n - 2 meaning "below n - 1", and -1 when E is identically zero (then checked in full).
 */
function exactTopDegree(P: DPoly, Q: DPoly, n: number): number {
	const coeff = (m: number) => {
		// E_m = (-1)^m sum_{i + j = 2m} (-1)^j p_i q_j
		let s = 0n;
		for (let i = Math.max(0, 2 * m - (Q.c.length - 1)); i <= Math.min(P.c.length - 1, 2 * m); i++) {
			const j = 2 * m - i;
			s += (j % 2 ? -1n : 1n) * P.c[i] * Q.c[j];
		}
		return s;
	};
	if (coeff(n) !== 0n) return n;
	if (n >= 1 && coeff(n - 1) !== 0n) return n - 1;
	return isZero(evenRealPart(P, Q)) ? -1 : n - 2;
}

/**
 * The region of the circle criterion for the sector [k1, k2] (Khalil, Nonlinear Systems, 3rd ed., section 7.1).
 * Re Z > 0 for Z = (1 + k2 G)/(1 + k1 G) reads 1 + (k1 + k2) Re G + k1 k2 |G|^2 > 0 (k2 finite), so:
 * k1 k2 > 0: G outside the disk D(k1, k2) whose diameter is [-1/k1, -1/k2] (for k1 < k2 < 0 this disk lies
 * on the positive real axis: the criterion for -G in the sector [-k2, -k1], mirrored through the origin);
 * k1 < 0 < k2: G inside D(k1, k2); k1 = 0: the half-plane Re G > -1/k2; k2 = 0 (k1 < 0): the half-plane
 * Re G < -1/k1. For k2 = infinity, Re[G (1 + k1 G*)] > 0: the disk with diameter [-1/k1, 0] (outside for
 * k1 > 0, inside for k1 < 0), or Re G > 0 for k1 = 0.
 */
export function diskOf(
	k1: number,
	k2: number
):
	| { kind: 'disk'; centre: number; radius: number; side: 'outside' | 'inside' }
	| { kind: 'half-plane'; boundary: number; side: 'right' | 'left' } {
	if (k1 === 0) return { kind: 'half-plane', boundary: k2 === Infinity ? 0 : -1 / k2, side: 'right' };
	if (k2 === 0) return { kind: 'half-plane', boundary: -1 / k1, side: 'left' };
	const a = -1 / k1;
	const b = k2 === Infinity ? 0 : -1 / k2;
	const side = k1 < 0 && k2 > 0 ? 'inside' : 'outside';
	return { kind: 'disk', centre: (a + b) / 2, radius: Math.abs(a - b) / 2, side };
}

/**
 * Distance of the Nyquist curve from the forbidden region (positive = criterion's geometric condition met
 * with room): half-plane right: min Re G + 1/k2; half-plane left: -1/k1 - max Re G; outside the disk:
 * min |G - c| - r; inside the disk: r - max |G - c|. Numerical, from stationary points of
 * |N - cD|^2 / |D|^2 (or Re[N D*] / |D|^2) in x.
 */
export function nyquistDistance(
	plant: Plant,
	k1: number,
	k2: number
): { distance: number; x: number | null } {
	const g = diskOf(k1, k2);
	if (g.kind === 'half-plane' && g.side === 'right') {
		// k1 = 0: the distance is min Re G + 1/k2, the same minimum (and frequency) as the circle check's.
		const m = familyMinimum(circleFamily(plant, 0));
		return { distance: m.r - g.boundary, x: m.x };
	}
	const [Nf, Df] = toFloatCommon([plant.Ns, plant.Ds]);
	const DD = evenRealPartF(Df, Df);
	const dr = denominatorRoots(plant);
	const cands = resonanceX(dr);
	const range = xRange(dr);
	const minRatioOnHalfLine = (u: number[], v: number[]) => minRatioFromCandidates(u, v, cands, range);
	if (g.kind === 'half-plane') {
		// k2 = 0: the curve must stay left of -1/k1; the distance is -1/k1 - max Re G.
		const m = minRatioOnHalfLine(
			evenRealPartF(Nf, Df).map((v) => -v),
			DD
		);
		return { distance: g.boundary + m.value, x: m.x };
	}
	const NC = addF(Nf, Df, -g.centre);
	const U = evenRealPartF(NC, NC);
	if (g.side === 'outside') {
		const m = minRatioOnHalfLine(U, DD);
		return { distance: Math.sqrt(Math.max(0, m.value)) - g.radius, x: m.x };
	}
	const m = minRatioOnHalfLine(
		U.map((v) => -v),
		DD
	);
	return { distance: g.radius - Math.sqrt(Math.max(0, -m.value)), x: m.x };
}

export { toFloat };

/** Sweep range in x = w^2 around the root magnitudes (scaled units). */
export function xRange(roots: readonly C[]): [number, number] {
	let lo = Infinity;
	let hi = 0;
	for (const r of roots) {
		const m = r.re * r.re + r.im * r.im;
		if (m > 0) {
			lo = Math.min(lo, m);
			hi = Math.max(hi, m);
		}
	}
	if (!(hi > 0)) return [1e-6, 1e6];
	return [lo * 1e-4, hi * 1e4];
}

const rootCache = new WeakMap<Plant, C[]>();

/** Roots of the scaled denominator (numerical, cached per plant; for candidate frequencies only). */
export function denominatorRoots(plant: Plant): C[] {
	let r = rootCache.get(plant);
	if (!r) {
		r = polyRoots(toFloatCommon([plant.Ds])[0]);
		rootCache.set(plant, r);
	}
	return r;
}
