// Checks on discrete-time (sampled-data) loops: the discrete circle criterion in its sector cases, its
// largest sector, and the Tsypkin criterion for monotone nonlinearities. Every verdict is decided exactly on
// polynomials: Schur stability by Jury's test (discrete.ts), the frequency condition on theta in [0, pi] by
// the bilinear map onto omega in [0, inf] and an exact positivity test on [0, inf) (certify.ts).
//
// Discrete circle criterion (sampled-data form; e.g. Vidyasagar, Nonlinear Systems Analysis, 2nd ed., the
// discrete-time circle criterion of section 6.6, and Khalil, Nonlinear Systems, 3rd ed., Theorem 7.1 for the
// continuous statement it mirrors; from memory): for x[k+1] = A x[k] + B u[k], y = C x + D u, u = -phi(k, y),
// phi in the sector [k1, k2] with k2 finite, the loop is absolutely stable when
// Z(z) = (1 + k2 G(z)) / (1 + k1 G(z)) is strictly positive real in the discrete sense: all poles of Z
// inside the open unit disk (1 + k1 G Schur: the closed loop with k1 is stable, which for 0 < k1 is the
// encirclement count of the scalar statement) and Re Z(e^(j theta)) > 0 for every theta in [0, pi].
// With G = N/D, Z = P/Q, P = D + k2 N, Q = D + k1 N; under w = (z - 1)/(z + 1), Re Z(e^(j theta)) has the
// sign of E(x) = Re[P~(j omega) Q~(-j omega)], x = omega^2 = tan^2(theta / 2), a polynomial of degree n whose
// leading coefficient has the sign of P(-1) Q(-1) (theta = pi).
//
// k2 = infinity is refused for discrete loops: the mean of Re H over the unit circle is H(inf) (H analytic
// outside the disk), so a strictly proper G / (1 + k1 G) is never positive on the whole circle, and with a
// feedthrough the loop is ill posed for large gains.
import { type DPoly, addD, degree, dyadicOf, evenRealPart, isZero, mulD, scaleD, signAt } from '../exact';
import { type EngineOptions, withBudget } from '../budget';
import { certifiedPositiveOnHalfLine, evalAt, provedBelow } from '../certify';
import { bilinear, isSchurExact, spectralRadius, thetaOfX } from '../discrete';
import { evenRealPartF, toFloatCommon } from '../fpoly';
import { exactTransferFunction } from '../model';
import { minRatioFromCandidates, polyRoots, resonanceX } from '../roots';
import type { Model } from '../schema';
import { type CheckResult, enc } from '../types';
import { budgetResult } from './circle-check';
import { xRange } from './circle';
import { regionWords } from '../present';

const fmt = (x: number) => (Number.isFinite(x) ? Number(x.toPrecision(6)).toString() : String(x));

/** G(z) = N(z)/D(z) exactly (ascending in z), degree n of D, and the sample time. */
export interface DiscretePlant {
	N: DPoly;
	D: DPoly;
	n: number;
	T: number;
}

export function discretePlant(model: Model): DiscretePlant {
	const tf = exactTransferFunction(model);
	return { N: tf.N, D: tf.D, n: degree(tf.D), T: model.sampleTime ?? NaN };
}

const Z: DPoly = { c: [0n, 1n], e: 0 };
const ZM1: DPoly = { c: [-1n, 1n], e: 0 };

function combine(dp: DiscretePlant, k: number): DPoly {
	return isZero(dp.N) ? dp.D : addD(dp.D, scaleD(dp.N, dyadicOf(k)));
}

/** 1 + k G(inf) != 0 for every k in [k1, k2]: the leading coefficient of D + k N keeps one nonzero sign. */
function wellPosed(dp: DiscretePlant, k1: number, k2: number): boolean {
	const lead = (k: number) => {
		const q = combine(dp, k);
		return degree(q) === dp.n ? Math.sign(Number(q.c[dp.n] > 0n) - Number(q.c[dp.n] < 0n)) : 0;
	};
	const a = lead(k1);
	const b = lead(k2);
	return a !== 0 && a === b;
}

/** Numerical minimum over theta of Re[U(z) / Q(z)] (bilinear side: Re[U~ Q~*] / |Q~|^2). Reports only. */
function minRatio(U: DPoly, Q: DPoly, n: number): { value: number; x: number | null } {
	const [Uf, Qf] = toFloatCommon([bilinear(U, n), bilinear(Q, n)]);
	const num = evenRealPartF(Uf, Qf);
	const den = evenRealPartF(Qf, Qf);
	const roots = polyRoots(Qf);
	const r = minRatioFromCandidates(num, den, resonanceX(roots), xRange(roots));
	return { value: r.value, x: r.atInfinity ? null : r.x };
}

export interface DiscreteCircleCore {
	pass: boolean;
	failure?: 'ill-posed' | 'schur' | 'frequency' | 'undecided';
	reason?: string;
	schur: boolean;
	spectralRadius: number | null;
	/** theta (rad per sample) where Re Z is smallest (numerical), and where E <= 0 was shown exactly. */
	criticalTheta: number | null;
	witnessTheta?: number;
	minReZ?: number;
	decidedBy?: 'exact' | 'filter';
}

/** The exact discrete circle decision for a finite sector [k1, k2], k1 < k2. */
export function discreteCircleCore(dp: DiscretePlant, k1: number, k2: number): DiscreteCircleCore {
	const n = dp.n;
	const Q = combine(dp, k1);
	const P = combine(dp, k2);
	if (!wellPosed(dp, k1, k2))
		return { pass: false, failure: 'ill-posed', schur: false, spectralRadius: null, criticalTheta: null };
	const sch = isSchurExact(Q.c);
	const rho = spectralRadius(Q);
	if (!sch.schur)
		return { pass: false, failure: 'schur', schur: false, spectralRadius: rho, criticalTheta: null };
	const mr = isZero(dp.N) ? { value: 0, x: 0 } : minRatio(dp.N, Q, n);
	const minReZ = 1 + (k2 - k1) * mr.value;
	const base = { schur: true, spectralRadius: rho, criticalTheta: thetaOfX(mr.x), minReZ };
	if (n === 0) {
		const pos = signAt(P.c, { m: 0n, e: 0 }) * signAt(Q.c, { m: 0n, e: 0 }) > 0;
		return pos
			? { pass: true, ...base, decidedBy: 'exact' }
			: { pass: false, failure: 'frequency', ...base, witnessTheta: 0 };
	}
	const E = evenRealPart(bilinear(P, n), bilinear(Q, n));
	// theta = pi: the coefficient of x^n (P(-1) Q(-1) up to a positive factor) must be positive.
	if (degree(E) < n || E.c[n] <= 0n)
		return { pass: false, failure: 'frequency', ...base, witnessTheta: Math.PI, decidedBy: 'exact' };
	if (mr.x !== null && minReZ <= 0 && signAt(E.c, dyadicOf(mr.x)) <= 0)
		return { pass: false, failure: 'frequency', ...base, witnessTheta: thetaOfX(mr.x), decidedBy: 'exact' };
	const pos = certifiedPositiveOnHalfLine(E, mr.x !== null ? [mr.x] : []);
	if (pos.undecided) return { pass: false, failure: 'undecided', reason: pos.reason, ...base };
	if (!pos.positive) {
		const at =
			pos.witness ?? (pos.rootInterval ? (pos.rootInterval[0] + pos.rootInterval[1]) / 2 : undefined);
		return {
			pass: false,
			failure: 'frequency',
			...base,
			decidedBy: pos.path,
			...(at !== undefined ? { witnessTheta: thetaOfX(at) } : {})
		};
	}
	return { pass: true, ...base, decidedBy: pos.path };
}

export const DISCRETE_ASSUMPTIONS =
	'Discrete-time loop at the sample instants (the nonlinearity acts on the sampled output); holds for every nonlinearity, time-varying or not, in the sector; the linear model is taken as exact; the criterion is sufficient, not necessary.';

export function runDiscreteCircle(
	model: Model,
	k1: number,
	k2: number,
	opts: EngineOptions = {}
): CheckResult {
	return withBudget(
		opts.budgetSeconds,
		() => discreteCircleResult(discretePlant(model), k1, k2),
		(e) => budgetResult('circle', e.message, DISCRETE_ASSUMPTIONS, { k1, k2: enc(k2) })
	);
}

const perSecond = (theta: number | null | undefined, T: number) =>
	theta === null || theta === undefined ? null : theta / T;

function discreteCircleResult(dp: DiscretePlant, k1: number, k2: number): CheckResult {
	const sector = `[${fmt(k1)}, ${fmt(k2)}]`;
	if (k2 === Infinity) {
		const reason =
			'The discrete circle criterion is applied here to finite sectors only: with k2 = infinity no strictly proper G(z) / (1 + k1 G(z)) is positive on the whole unit circle (its mean there is its value at infinity).';
		return {
			type: 'circle',
			verdict: 'inconclusive',
			numbers: { k1, k2: 'Infinity', sampleTime: dp.T },
			explanation: reason,
			reason,
			notApplicable: { precondition: 'a finite upper sector bound k2', remedy: 'Give a finite k2.' },
			assumptions: DISCRETE_ASSUMPTIONS
		};
	}
	const core = discreteCircleCore(dp, k1, k2);
	const caseName =
		k1 === 0 ? 'k1 = 0' : k2 === 0 ? 'k2 = 0' : k1 > 0 ? 'k1 > 0' : k2 < 0 ? 'k1 < k2 < 0' : 'k1 < 0';
	const numbers: Record<string, number | string | null> = {
		k1,
		k2,
		sampleTime: dp.T,
		sectorCase: caseName,
		minReZ: enc(core.minReZ ?? NaN),
		criticalAngle: core.criticalTheta,
		closedLoopSchur: core.schur ? 'yes' : 'no',
		closedLoopSpectralRadius: core.spectralRadius,
		schurDecidedBy: 'exact (Jury)',
		positivityDecidedBy: core.decidedBy ?? null,
		witnessAngle: core.witnessTheta ?? null
	};
	const region = regionWords(k1, k2);
	let reason: string | undefined;
	let notApplicable: CheckResult['notApplicable'];
	switch (core.failure) {
		case 'ill-posed':
			reason = `1 + k G(∞) = 0 for a gain k in ${sector}: the sampled loop is not well posed.`;
			notApplicable = {
				precondition: 'the loop is well posed for every gain in the sector (1 + k G(∞) ≠ 0)',
				remedy: 'A sector that excludes -1/G(∞) makes the criterion applicable.'
			};
			break;
		case 'schur':
			reason =
				k1 === 0
					? 'G(z) has a pole on or outside the unit circle (Jury test, exact), so the case k1 = 0 proves nothing.'
					: `The loop closed with gain k1 = ${fmt(k1)} is unstable: 1 + k1 G(z) has a zero on or outside the unit circle (Jury test, exact).`;
			if (k1 === 0)
				notApplicable = {
					precondition: 'G(z) is Schur stable (required by the sector case k1 = 0)',
					remedy: 'A lower bound k1 > 0 that stabilises the loop makes the criterion applicable.'
				};
			break;
		case 'undecided':
			reason = `The exact root isolation of the frequency condition stopped: ${core.reason ?? 'work budget exceeded'}.`;
			break;
		case 'frequency':
			reason = `The curve G(e^jθ) enters the forbidden region${
				core.witnessTheta !== undefined
					? ` (shown exactly at θ = ${fmt(core.witnessTheta)} rad, ${fmt(core.witnessTheta / dp.T)} rad/s)`
					: ''
			}.`;
	}
	const pass = core.pass;
	const explanation = pass
		? `Absolutely stable for every nonlinearity in the sector ${sector} at the sample instants: the curve G(e^jθ), θ in [0, π], stays in ${region} and 1 + k1 G(z) is Schur stable, proved exactly.`
		: core.failure === 'undecided'
			? `Undecided for the sector ${sector}: ${reason}`
			: `Not proved for the sector ${sector}: ${reason}`;
	return {
		type: 'circle',
		verdict: pass ? 'pass' : core.failure === 'undecided' ? 'inconclusive' : 'fail',
		criticalFrequency: perSecond(core.witnessTheta ?? core.criticalTheta, dp.T),
		margin: enc(core.minReZ ?? NaN),
		numbers,
		explanation,
		...(reason ? { reason } : {}),
		...(notApplicable ? { notApplicable } : {}),
		assumptions: DISCRETE_ASSUMPTIONS
	};
}

// ------------------------------------------------------------------------------------------------
// Largest sector [k1, k2] for the discrete circle criterion. Z = 1 + (k2 - k1) N / Q with Q = D + k1 N, so
// Re Z > 0 on the circle reads |Q~|^2 + (k2 - k1) Re[N~ Q~*] > 0: the limit is k2* = k1 - 1/r with
// r = min over theta of Re[N / Q](e^(j theta)) (unbounded when r >= 0). The estimate r is numerical; the
// reported threshold is a k2 just below it that passes the exact test, and `upperBoundProved` one just above
// at which the exact test fails, so the true limit is bracketed.
// ------------------------------------------------------------------------------------------------

export function runDiscreteMaxSector(model: Model, k1: number, opts: EngineOptions = {}): CheckResult {
	return withBudget(
		opts.budgetSeconds,
		() => discreteMaxSectorResult(discretePlant(model), k1),
		(e) => budgetResult('max-sector', e.message, DISCRETE_ASSUMPTIONS, { k1 })
	);
}

export interface DiscreteMaxSector {
	estimate: number;
	proved: number | null;
	upperBoundProved: number | null;
	criticalTheta: number | null;
	reason?: string;
}

export function discreteMaxSectorCore(dp: DiscretePlant, k1: number): DiscreteMaxSector {
	const Q = combine(dp, k1);
	if (!wellPosed(dp, k1, k1) || !isSchurExact(Q.c).schur)
		return {
			estimate: NaN,
			proved: null,
			upperBoundProved: null,
			criticalTheta: null,
			reason: `1 + k1 G(z) is not Schur stable (or the loop is ill posed) at k1 = ${fmt(k1)}: no sector with this lower bound is proved.`
		};
	const mr = isZero(dp.N) ? { value: 0, x: 0 } : minRatio(dp.N, Q, dp.n);
	if (isZero(dp.N)) return { estimate: Infinity, proved: null, upperBoundProved: null, criticalTheta: null };
	if (mr.value >= 0)
		return {
			estimate: Infinity,
			proved: null,
			upperBoundProved: null,
			criticalTheta: thetaOfX(mr.x),
			reason:
				'No finite upper bound is proved by this check (the curve does not reach the left of the axis numerically).'
		};
	const est = k1 - 1 / mr.value;
	const proved = provedBelow(est, (k) => discreteCircleCore(dp, k1, k).pass, k1);
	let upper: number | null = null;
	for (const f of [1e-9, 1e-7, 1e-5, 1e-3, 1e-2, 0.1]) {
		const k = k1 + (est - k1) * (1 + f);
		const c = discreteCircleCore(dp, k1, k);
		if (!c.pass && c.failure === 'frequency') {
			upper = k;
			break;
		}
	}
	return { estimate: est, proved, upperBoundProved: upper, criticalTheta: thetaOfX(mr.x) };
}

function discreteMaxSectorResult(dp: DiscretePlant, k1: number): CheckResult {
	const c = discreteMaxSectorCore(dp, k1);
	const numbers = {
		k1,
		sampleTime: dp.T,
		thresholdEstimate: enc(c.estimate),
		upperBoundProved: enc(c.upperBoundProved),
		criticalAngle: c.criticalTheta
	};
	const base = { type: 'max-sector' as const, assumptions: DISCRETE_ASSUMPTIONS, numbers };
	if (c.proved === null) {
		const reason =
			c.reason ?? `No sector above k1 = ${fmt(k1)} could be proved near the estimate ${fmt(c.estimate)}.`;
		return {
			...base,
			verdict: 'inconclusive',
			threshold: null,
			explanation: reason,
			reason,
			criticalFrequency: perSecond(c.criticalTheta, dp.T)
		};
	}
	return {
		...base,
		verdict: 'pass',
		threshold: enc(c.proved),
		criticalFrequency: perSecond(c.criticalTheta, dp.T),
		explanation: `The discrete circle criterion proves the sector [${fmt(k1)}, ${fmt(c.proved)}] exactly${
			c.upperBoundProved !== null
				? `; it fails exactly at k2 = ${fmt(c.upperBoundProved)}, so its limit lies between the two`
				: ''
		}.`
	};
}

// ------------------------------------------------------------------------------------------------
// Tsypkin criterion (Ya. Z. Tsypkin, "A criterion for absolute stability of automatic pulse systems with
// monotonic characteristics of the nonlinear element", Soviet Physics Doklady 9 (1964) 263-266; E. I. Jury and
// B. W. Lee, "On the stability of a certain class of nonlinear sampled-data systems", IEEE Trans. Automatic
// Control AC-9 (1964) 51-61; from memory). For G(z) Schur stable and strictly proper, and a time-invariant
// nonlinearity phi that is monotone non-decreasing with phi(0) = 0 and 0 <= phi(y) / y <= k, the loop is
// absolutely stable if some q >= 0 gives
//     Re[(1 + q (1 - z^-1)) G(z)] + 1/k > 0   for every z = e^(j theta), theta in [0, pi].
// With G = N/D: (1 + q (1 - z^-1)) G = (z N + q (z - 1) N) / (z D), so the condition is, on the bilinear side
// at degree n + 1, E_q(x) = M(x) + k (R0(x) + q R1(x)) > 0 on [0, inf] with M = |(zD)~|^2,
// R0 = Re[(zN)~ (zD)~*], R1 = Re[((z - 1) N)~ (zD)~*], decided exactly for a dyadic q. The best q maximises
// g(q) = min_theta (R0 + q R1) / M, concave in q (a minimum of affine functions), by golden-section search; a
// fail is proved by frequencies whose constraints on q contradict each other, evaluated exactly.
// ------------------------------------------------------------------------------------------------

interface TsypkinPolys {
	M: DPoly;
	R0: DPoly;
	R1: DPoly;
	f: { M: number[]; R0: number[]; R1: number[]; cands: number[]; range: [number, number] };
}

function tsypkinPolys(dp: DiscretePlant): TsypkinPolys {
	const m = dp.n + 1;
	const zD = bilinear(mulD(Z, dp.D), m);
	const zN = bilinear(mulD(Z, dp.N), m);
	const dN = bilinear(mulD(ZM1, dp.N), m);
	const M = evenRealPart(zD, zD);
	const R0 = evenRealPart(zN, zD);
	const R1 = evenRealPart(dN, zD);
	const [fzD, fzN, fdN] = toFloatCommon([zD, zN, dN]);
	const roots = polyRoots(fzD);
	return {
		M,
		R0,
		R1,
		f: {
			M: evenRealPartF(fzD, fzD),
			R0: evenRealPartF(fzN, fzD),
			R1: evenRealPartF(fdN, fzD),
			cands: resonanceX(roots),
			range: xRange(roots)
		}
	};
}

function gOf(tp: TsypkinPolys, q: number): { value: number; x: number | null } {
	const u = tp.f.R0.map((v, i) => v + q * (tp.f.R1[i] ?? 0));
	const r = minRatioFromCandidates(u, tp.f.M, tp.f.cands, tp.f.range);
	return { value: r.value, x: r.atInfinity ? null : r.x };
}

/**
 * E > 0 on [0, inf] including theta = pi: positive on [0, inf) (certify.ts) with the full degree, since
 * |(zD)~|^2 has degree n + 1 and a lower-degree E gives Re = 0 at theta = pi.
 */
function positiveOnCircle(
	E: DPoly,
	deg: number,
	hints: number[] = []
): ReturnType<typeof certifiedPositiveOnHalfLine> {
	if (degree(E) < deg) return { positive: false, path: 'exact' };
	return certifiedPositiveOnHalfLine(E, hints);
}

function tsypkinE(tp: TsypkinPolys, k: number, q: number): DPoly {
	const inner = q === 0 ? tp.R0 : addD(tp.R0, scaleD(tp.R1, dyadicOf(q)));
	return addD(tp.M, scaleD(inner, dyadicOf(k)));
}

function maximiseG(tp: TsypkinPolys): { q: number; g: number; x: number | null } {
	let hi = 1;
	let g0 = gOf(tp, 0).value;
	while (hi < 2 ** 20 && gOf(tp, hi).value > g0) {
		g0 = gOf(tp, hi).value;
		hi *= 2;
	}
	let a = 0;
	let b = hi;
	const phi = (Math.sqrt(5) - 1) / 2;
	let c = b - phi * (b - a);
	let d = a + phi * (b - a);
	let gc = gOf(tp, c).value;
	let gd = gOf(tp, d).value;
	for (let i = 0; i < 80 && b - a > 1e-12 * Math.max(1, b); i++) {
		if (gc >= gd) {
			b = d;
			d = c;
			gd = gc;
			c = b - phi * (b - a);
			gc = gOf(tp, c).value;
		} else {
			a = c;
			c = d;
			gc = gd;
			d = a + phi * (b - a);
			gd = gOf(tp, d).value;
		}
	}
	const cands = [0, (a + b) / 2];
	let best = { q: 0, g: -Infinity, x: null as number | null };
	for (const q of cands) {
		const r = gOf(tp, q);
		if (r.value > best.g) best = { q, g: r.value, x: r.x };
	}
	return best;
}

/** Exact value of an integer-coefficient DPoly at a dyadic x (x = null: its coefficient of degree deg). */
function valueAt(p: DPoly, x: number | null, deg: number): { m: bigint; e: number } {
	if (x === null) return { m: p.c[deg] ?? 0n, e: p.e };
	const v = evalAt(p.c, dyadicOf(x));
	return { m: v.m, e: v.e + p.e };
}

function cmpProducts(
	a: { m: bigint; e: number },
	b: { m: bigint; e: number },
	c: { m: bigint; e: number },
	d: { m: bigint; e: number }
): number {
	// sign of a b - c d, exactly
	const l = { m: a.m * b.m, e: a.e + b.e };
	const r = { m: c.m * d.m, e: c.e + d.e };
	const e = Math.min(l.e, r.e);
	const diff = (l.m << BigInt(l.e - e)) - (r.m << BigInt(r.e - e));
	return diff > 0n ? 1 : diff < 0n ? -1 : 0;
}

/** Frequencies (x values, null = theta = pi) at which no q >= 0 satisfies E_q > 0, or null. */
function tsypkinInfeasible(
	tp: TsypkinPolys,
	k: number,
	xs: (number | null)[],
	deg: number
): (number | null)[] | null {
	const A0 = addD(tp.M, scaleD(tp.R0, dyadicOf(k)));
	const A1 = scaleD(tp.R1, dyadicOf(k));
	const lower: { x: number | null; a: { m: bigint; e: number }; b: { m: bigint; e: number } }[] = [];
	const upper: typeof lower = [];
	for (const x of xs) {
		const a = valueAt(A0, x, deg);
		const b = valueAt(A1, x, deg);
		if (b.m <= 0n && a.m <= 0n) return [x];
		if (b.m > 0n) lower.push({ x, a, b });
		else if (b.m < 0n) upper.push({ x, a, b });
	}
	// q > -a1/b1 (b1 > 0) and q < -a2/b2 (b2 < 0) contradict when -a1/b1 >= -a2/b2, i.e. a1 b2 >= a2 b1.
	for (const l of lower) for (const u of upper) if (cmpProducts(l.a, u.b, u.a, l.b) >= 0) return [l.x, u.x];
	return null;
}

const TSYPKIN_ASSUMPTIONS =
	'Only for time-invariant nonlinearities that are monotone non-decreasing, with phi(0) = 0, in the sector [0, k]; G(z) Schur stable and strictly proper; the linear model is taken as exact; sufficient, not necessary.';

export function runTsypkin(model: Model, k: number, opts: EngineOptions = {}): CheckResult {
	return withBudget(
		opts.budgetSeconds,
		() => tsypkinResult(discretePlant(model), k),
		(e) => budgetResult('tsypkin', e.message, TSYPKIN_ASSUMPTIONS, { k })
	);
}

export interface TsypkinCore {
	applicable: boolean;
	reason?: string;
	schur: boolean;
	q: number;
	gBest: number;
	estimate: number;
	proved: number | null;
	criticalTheta: number | null;
	tp?: TsypkinPolys;
}

export function tsypkinCore(dp: DiscretePlant): TsypkinCore {
	const none = { q: NaN, gBest: NaN, estimate: NaN, proved: null, criticalTheta: null };
	if (degree(dp.N) >= dp.n)
		return {
			applicable: false,
			schur: false,
			reason: 'The Tsypkin criterion is applied here to strictly proper G(z) (no direct feedthrough).',
			...none
		};
	if (!isSchurExact(dp.D.c).schur) return { applicable: true, schur: false, ...none };
	const tp = tsypkinPolys(dp);
	const best = maximiseG(tp);
	const estimate = best.g >= 0 ? Infinity : -1 / best.g;
	let proved: number | null = null;
	if (estimate === Infinity) {
		const U = tsypkinE({ ...tp, M: { c: [], e: 0 } }, 1, best.q);
		if (positiveOnCircle(U, dp.n + 1).positive) proved = Infinity;
	} else
		proved = provedBelow(estimate, (kk) => positiveOnCircle(tsypkinE(tp, kk, best.q), dp.n + 1).positive);
	return {
		applicable: true,
		schur: true,
		q: best.q,
		gBest: best.g,
		estimate,
		proved,
		criticalTheta: thetaOfX(best.x),
		tp
	};
}

function tsypkinResult(dp: DiscretePlant, k: number): CheckResult {
	const core = tsypkinCore(dp);
	const base = { type: 'tsypkin' as const, assumptions: TSYPKIN_ASSUMPTIONS };
	if (!core.applicable)
		return {
			...base,
			verdict: 'inconclusive',
			q: null,
			threshold: null,
			numbers: { k, sampleTime: dp.T },
			explanation: core.reason!,
			reason: core.reason,
			notApplicable: {
				precondition: 'G(z) is strictly proper (as the Tsypkin criterion is applied here)',
				remedy: 'The discrete circle criterion applies to plants with a direct feedthrough.'
			}
		};
	if (!core.schur) {
		const reason =
			'G(z) has a pole on or outside the unit circle (Jury test, exact): with phi = 0 the loop is not asymptotically stable.';
		return {
			...base,
			verdict: 'fail',
			q: null,
			threshold: null,
			numbers: { k, sampleTime: dp.T },
			explanation: reason,
			reason,
			notApplicable: {
				precondition: 'G(z) is Schur stable (required by the Tsypkin criterion)',
				remedy:
					'A loop transformation with a stabilising gain and the discrete circle criterion with k1 > 0 allow unstable plants.'
			}
		};
	}
	const tp = core.tp!;
	const numbers: Record<string, number | string | null> = {
		k,
		sampleTime: dp.T,
		q: core.q,
		thresholdEstimate: enc(core.estimate),
		thresholdProvedWithQ: enc(core.proved),
		minTsypkinReal: core.gBest,
		criticalAngle: core.criticalTheta
	};
	const critical = perSecond(core.criticalTheta, dp.T);
	for (const q of [core.q, 0]) {
		const pos = positiveOnCircle(tsypkinE(tp, k, q), dp.n + 1);
		if (pos.positive)
			return {
				...base,
				verdict: 'pass',
				q,
				threshold: enc(core.proved),
				criticalFrequency: critical,
				margin: 1 / k + core.gBest,
				numbers: { ...numbers, q, positivityDecidedBy: pos.path },
				explanation: `Absolutely stable at the sample instants for every monotone time-invariant nonlinearity in [0, ${fmt(k)}]: the Tsypkin inequality with q = ${fmt(q)} is proved exactly.`
			};
	}
	const xs: (number | null)[] = [0, null];
	for (const q of [core.q, 0, core.q * 1.01 + 1e-6, core.q * 0.99, core.q * 2 + 1e-3, core.q / 2]) {
		const r = gOf(tp, q);
		xs.push(r.x);
	}
	const wit = tsypkinInfeasible(tp, k, xs, dp.n + 1);
	if (wit) {
		const words = wit.map((x) => `θ = ${fmt(thetaOfX(x))} rad`).join(' and ');
		const reason = `No multiplier q >= 0 exists: the Tsypkin inequality at ${words} ${wit.length > 1 ? 'gives contradictory bounds on q' : 'fails for every q >= 0'} (exact).`;
		return {
			...base,
			verdict: 'fail',
			q: null,
			threshold: enc(core.proved),
			criticalFrequency: critical,
			margin: 1 / k + core.gBest,
			numbers,
			explanation: `Not proved for [0, ${fmt(k)}]: the Tsypkin criterion proves sectors up to [0, ${core.proved === null ? 'none' : fmt(core.proved)}] only.`,
			reason
		};
	}
	const reason = `The best multiplier found (q = ${fmt(core.q)}) does not prove k = ${fmt(k)}, and no exact proof that none exists was found (k is within numerical reach of the Tsypkin limit ${fmt(core.estimate)}).`;
	return {
		...base,
		verdict: 'inconclusive',
		q: null,
		threshold: enc(core.proved),
		criticalFrequency: critical,
		margin: 1 / k + core.gBest,
		numbers,
		explanation: reason,
		reason
	};
}
