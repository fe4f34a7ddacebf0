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
import { certifiedHurwitz, certifiedPositiveOnHalfLine, type DecisionPath } from '../certify';
import { addF, evenRealPartF, toFloat, toFloatCommon } from '../fpoly';
import type { Plant } from '../model';
import { minRatioOnHalfLine } from '../roots';

export interface CircleCore {
	pass: boolean;
	/** Which condition failed, in words; undefined on pass. */
	failure?: 'ill-posed' | 'hurwitz' | 'infinity' | 'frequency' | 'lossless';
	qHurwitz: boolean;
	hurwitzPath: DecisionPath;
	positivityPath?: DecisionPath;
	/** Largest real part of the roots of Q (rad/s, numerical). */
	qMaxRealPart: number | null;
	/** Scaled x = (w/w0)^2 where E <= 0 was shown exactly (fail witness). */
	witnessX?: number;
	/** min over w of Re Z(jw), numerical, and where (scaled x), null at infinity. */
	minReZ?: number;
	argminX?: number | null;
	E?: DPoly;
}

export function zPolys(plant: Plant, k1: number, k2: number): { P: DPoly; Q: DPoly } {
	const { Ns, Ds } = plant;
	const Q = isZero(Ns) ? Ds : addD(Ds, scaleD(Ns, dyadicOf(k1)));
	let P: DPoly;
	if (k2 === Infinity) P = Ns;
	else P = isZero(Ns) ? Ds : addD(Ds, scaleD(Ns, dyadicOf(k2)));
	return { P, Q };
}

/** The exact SPR decision for Z; `numbers` adds the numerical minimum of Re Z (needed for the hint). */
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
	const h = certifiedHurwitz(Q, opts.forceExact);
	const base = { qHurwitz: h.hurwitz, hurwitzPath: h.path, qMaxRealPart: h.maxRealPart };
	if (!h.hurwitz) return { pass: false, failure: 'hurwitz', ...base };
	const E = evenRealPart(P, Q);
	if (isZero(E)) return { pass: false, failure: 'lossless', ...base, E };
	// Numerical minimum of Re Z = E / |Q|^2 (a hint for the exact witness search and the report).
	const [Ef, Mf] = toFloatCommon([E, evenRealPart(Q, Q)]);
	const mn = minRatioOnHalfLine(Ef, Mf);
	const numeric = { minReZ: mn.value, argminX: mn.x };
	// Infinity part of Lemma 6.1: relative degree of Z at most 1 and deg E >= n - 1.
	if (degree(P) < n - 1 || degree(E) < n - 1)
		return { pass: false, failure: 'infinity', ...base, ...numeric, E };
	const pos = certifiedPositiveOnHalfLine(E, mn.x !== null ? [mn.x] : [], opts.forceExact);
	if (!pos.positive)
		return {
			pass: false,
			failure: 'frequency',
			...base,
			positivityPath: pos.path,
			witnessX: pos.witness,
			...numeric,
			E
		};
	return { pass: true, ...base, positivityPath: pos.path, ...numeric, E };
}

/** Disk D(k1, k2) of Khalil section 7.1: centre and radius on the real axis, or the half-plane for k1 = 0. */
export function diskOf(
	k1: number,
	k2: number
): { kind: 'disk'; centre: number; radius: number } | { kind: 'half-plane'; boundary: number } {
	if (k1 === 0) return { kind: 'half-plane', boundary: k2 === Infinity ? 0 : -1 / k2 };
	const a = -1 / k1;
	const b = k2 === Infinity ? 0 : -1 / k2;
	return { kind: 'disk', centre: (a + b) / 2, radius: Math.abs(a - b) / 2 };
}

/**
 * Distance of the Nyquist curve from the forbidden region (positive = criterion's geometric condition met
 * with room): k1 = 0: min Re G + 1/k2; k1 > 0: min |G - c| - r (outside the disk); k1 < 0: r - max |G - c|
 * (inside the disk). Numerical, from stationary points of |N - cD|^2 / |D|^2 in x.
 */
export function nyquistDistance(
	plant: Plant,
	k1: number,
	k2: number
): { distance: number; x: number | null } {
	const [Nf, Df] = toFloatCommon([plant.Ns, plant.Ds]);
	const g = diskOf(k1, k2);
	const DD = evenRealPartF(Df, Df);
	if (g.kind === 'half-plane') {
		const m = minRatioOnHalfLine(evenRealPartF(Nf, Df), DD);
		return { distance: m.value - g.boundary, x: m.x };
	}
	const NC = addF(Nf, Df, -g.centre);
	const U = evenRealPartF(NC, NC);
	if (k1 > 0) {
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
