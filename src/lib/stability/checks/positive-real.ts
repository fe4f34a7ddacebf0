// Positive realness of G = N/D.
// SPR: Khalil, Nonlinear Systems, 3rd ed., Lemma 6.1 (scalar form): G Hurwitz, Re G(jw) > 0 for all real w,
// and G(inf) > 0, or G(inf) = 0 with lim w^2 Re G(jw) > 0. Decided exactly (Hurwitz + Sturm on
// E(x) = Re[N(jw) D(-jw)], x = w^2).
// PR: Khalil, 3rd ed., Definition 6.4 (scalar form): poles in Re s <= 0, poles on the imaginary axis simple
// with real positive residues, Re G(jw) >= 0 wherever jw is not a pole. Also Khalil section 6.1: a PR
// function has relative degree 0 or 1 (from memory; it follows from the residue condition at infinity).
// The non-strict case is decided exactly except for the residues at imaginary-axis poles away from the
// origin, which are evaluated numerically (stated in the result).
// Hidden modes are decided before this test, for the model as entered (preflight.ts): one on or right of
// the imaginary axis makes the class "neither" there; those that reach this file lie in the open left
// half-plane, where cancelling them (the PR part below) and keeping them (the SPR part) give the same class.
import {
	type DPoly,
	bitLength,
	dyadicOf,
	signAt,
	countPositiveWithZero,
	degree,
	derivInt,
	divExact,
	evenRealPart,
	gcdPoly,
	isZero,
	oddMultiplicityPositiveRoots,
	primitive,
	signB
} from '../exact';
import { EXACT_BUDGET, certifiedHurwitz, certifiedPositiveOnHalfLine } from '../certify';
import { divC, evalJw, toFloat } from '../fpoly';
import { type FrequencyMinimum, circleFamily, familyConsider, familyMinimum } from '../frequency';
import type { Plant } from '../model';
import { derivR, positiveRealRoots } from '../roots';
import type { CheckResult, PositiveRealClass } from '../types';

const fmt = (x: number) => (Number.isFinite(x) ? Number(x.toPrecision(6)).toString() : String(x));

function evenOddParts(d: bigint[]): { De: bigint[]; Do: bigint[] } {
	// D(jw) = De(w^2) + j w Do(w^2): s^(2k) -> (-1)^k x^k; s^(2k+1) -> j w (-1)^k x^k.
	const De: bigint[] = [];
	const Do: bigint[] = [];
	for (let i = 0; i < d.length; i++) {
		const k = Math.floor(i / 2);
		const v = k % 2 ? -d[i] : d[i];
		if (i % 2 === 0) De.push(v);
		else Do.push(v);
	}
	return { De, Do };
}

export function runPositiveReal(plant: Plant): CheckResult {
	const { Ns, Ds, w0 } = plant;
	const n = degree(Ds);
	const numbers: Record<string, number | string | null> = { frequencyScale: w0 };
	const done = (cls: PositiveRealClass, reason: string, verdict?: 'inconclusive'): CheckResult => ({
		type: 'positive-real',
		verdict: verdict ?? (cls === 'neither' ? 'fail' : 'pass'),
		class: cls,
		criticalFrequency: (numbers.minReGFrequency as number | null) ?? null,
		margin: (numbers.minReG as number | null) ?? null,
		numbers,
		explanation:
			verdict === 'inconclusive'
				? `Positive realness could not be decided: ${reason}`
				: cls === 'SPR'
					? 'G is strictly positive real: it is the transfer function of a strictly passive linear system.'
					: cls === 'PR'
						? `G is positive real but not strictly: ${reason}`
						: `G is not positive real: ${reason}`,
		reason,
		assumptions:
			'A property of the linear model alone; passivity-based results built on it assume the model is exact.'
	});
	if (isZero(Ns)) return done('PR', 'G is identically zero (lossless and trivially positive real).');
	const rd = n - degree(Ns);
	numbers.relativeDegree = rd;
	// min Re G for the report: the k1 = 0 family of frequency.ts, where r = Re[G/(1 + 0 G)] = Re G exactly; its
	// minimum comes from the exact stationary points of Re G (roots of S = B'M - BM', bracketed exactly).
	const fam = circleFamily(plant, 0);
	const mn = { value: NaN, x: null as number | null };
	const report = (m: FrequencyMinimum) => {
		mn.value = m.r;
		mn.x = m.x;
		numbers.minReG = Number.isFinite(m.r) ? m.r : null;
		numbers.minReGFrequency = m.x === null ? null : Math.sqrt(m.x) * w0;
	};
	report(familyMinimum(fam));
	const ratioSign = signB(Ns.c[Ns.c.length - 1]) * signB(Ds.c[n]);
	if (rd > 1) return done('neither', `relative degree ${rd} exceeds one.`);
	if (ratioSign < 0)
		return done(
			'neither',
			'the high-frequency gain has the wrong sign (G behaves like a negative gain or a negative integrator as w grows).'
		);
	// SPR, exactly.
	const h = certifiedHurwitz(Ds);
	numbers.polesMaxRealPart = h.maxRealPart === null ? null : h.maxRealPart * w0;
	const E = evenRealPart(Ns, Ds);
	let sprFailure: string | null = null;
	if (h.undecided)
		return done(
			'neither',
			'whether G is Hurwitz could not be decided within the work limit of the exact test.',
			'inconclusive'
		);
	if (!h.hurwitz) sprFailure = 'G is not Hurwitz (a pole on or right of the imaginary axis).';
	else if (isZero(E)) sprFailure = 'Re G(jw) is identically zero (lossless).';
	else if (degree(E) < n - 1 || (rd === 1 && degree(E) !== n - 1))
		sprFailure = 'Re G(jw) falls off faster than 1/w^2 at high frequency.';
	else {
		const pos = certifiedPositiveOnHalfLine(E, mn.x !== null ? [mn.x] : []);
		numbers.positivityDecidedBy = pos.path;
		// Where the exact test found Re G <= 0 that the minimum missed, look for the minimum there as well.
		if (!pos.positive && !(mn.value <= 0)) {
			const at =
				pos.witness ?? (pos.rootInterval ? (pos.rootInterval[0] + pos.rootInterval[1]) / 2 : undefined);
			if (at !== undefined && at > 0) report(familyConsider(fam, at));
		}
		// A frequency where Re G(jw) < 0 exactly (with D(jw) != 0 as D is Hurwitz) rules out PR as well.
		if (!pos.positive && pos.witness !== undefined && signAt(E.c, dyadicOf(pos.witness)) < 0)
			return done(
				'neither',
				`Re G(jw) is negative (shown exactly at ${fmt(Math.sqrt(pos.witness) * w0)} rad/s; minimum about ${fmt(mn.value)}).`
			);
		if (!pos.positive)
			sprFailure =
				mn.value < 0
					? `Re G(jw) is negative, down to ${fmt(mn.value)} at ${fmt(Math.sqrt(mn.x ?? 0) * w0)} rad/s.`
					: 'Re G(jw) reaches zero at some frequency.';
	}
	if (sprFailure === null) return done('SPR', '');
	// PR, on the reduced function (common factors of N and D cancelled: PR is a property of the function).
	// The non-strict test needs gcds and square-free parts in exact arithmetic; beyond the work limit say so.
	let size = 0;
	for (const v of [...Ns.c, ...Ds.c]) size = Math.max(size, bitLength(v));
	if (size * n > EXACT_BUDGET)
		return done(
			'neither',
			`G is not strictly positive real (${sprFailure.charAt(0).toLowerCase()}${sprFailure.slice(1)}); whether it is positive real (non-strict) was not decided: the exact test is beyond its work limit for this model.`,
			'inconclusive'
		);
	const g = gcdPoly(Ns.c, Ds.c);
	let Nr = primitive(Ns.c);
	let Dr = primitive(Ds.c);
	if (g.length > 1) {
		Nr = divExact(Nr, g);
		Dr = divExact(Dr, g);
		numbers.cancelledCommonFactorDegree = g.length - 1;
	}
	if (Dr[Dr.length - 1] < 0n) {
		Dr = Dr.map((v) => -v);
		Nr = Nr.map((v) => -v);
	}
	let m0 = 0;
	while (m0 < Dr.length - 1 && Dr[m0] === 0n) m0++;
	if (m0 > 1) return done('neither', 'repeated pole at the origin.');
	const D1 = Dr.slice(m0);
	if (m0 === 1 && signB(Nr[0]) * signB(D1[0]) <= 0)
		return done('neither', 'the pole at the origin has a residue that is not positive.');
	const { De, Do } = evenOddParts(D1);
	const hx = gcdPoly(De, Do);
	let Drest = D1;
	const axisX: number[] = [];
	if (hx.length > 1) {
		// Common roots x of De and Do: jw poles for x > 0; x < 0 or complex x mean mirror-image (RHP) poles.
		const sq = gcdPoly(hx, derivInt(hx));
		if (sq.length > 1) return done('neither', 'repeated poles on the imaginary axis.');
		if (hx[0] === 0n || countPositiveWithZero(hx) !== hx.length - 1)
			return done('neither', 'poles in the open right half-plane.');
		// A(s) = h(-s^2)
		const A: bigint[] = [];
		for (let k = 0; k < hx.length; k++) {
			A.push(k % 2 ? -hx[k] : hx[k]);
			if (k + 1 < hx.length) A.push(0n);
		}
		Drest = divExact(D1, primitive(A));
		for (const x of positiveRealRoots(toFloat({ c: hx, e: 0 }), 1e-6)) axisX.push(x);
	}
	if (Drest.length > 1 && !certifiedHurwitz({ c: Drest, e: 0 }).hurwitz)
		return done('neither', 'poles in the open right half-plane.');
	const Er = evenRealPart({ c: Nr, e: 0 } as DPoly, { c: Dr, e: 0 } as DPoly);
	if (!isZero(Er)) {
		if (Er.c[Er.c.length - 1] < 0n || oddMultiplicityPositiveRoots(Er.c) > 0)
			return done(
				'neither',
				`Re G(jw) is negative, down to ${fmt(mn.value)} at ${fmt(Math.sqrt(mn.x ?? 0) * w0)} rad/s.`
			);
	}
	// Residues at jw poles, numerically: res = N(jw0) / D'(jw0).
	if (axisX.length) {
		const Nf = toFloat({ c: Nr, e: 0 });
		const Dfp = derivR(toFloat({ c: Dr, e: 0 }));
		for (const x of axisX) {
			const w = Math.sqrt(x);
			const r = divC(evalJw(Nf, w), evalJw(Dfp, w));
			const mag = Math.hypot(r.re, r.im);
			numbers.axisResidueMin = Math.min((numbers.axisResidueMin as number) ?? Infinity, r.re);
			if (Math.abs(r.im) > 1e-8 * mag || Math.abs(r.re) <= 1e-10 * mag)
				return done(
					'neither',
					`the imaginary-axis pole at ${fmt(w * w0)} rad/s has a residue that is not real and positive (evaluated numerically; near-boundary cases deserve a closer look).`,
					Math.abs(r.im) <= 1e-6 * mag && r.re > 0 ? 'inconclusive' : undefined
				);
			if (r.re < 0)
				return done('neither', `the imaginary-axis pole at ${fmt(w * w0)} rad/s has a negative residue.`);
		}
		numbers.axisPoles = axisX.length;
		numbers.residuesEvaluated = 'numerically';
	}
	return done('PR', sprFailure);
}
