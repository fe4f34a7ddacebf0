// Popov criterion (Khalil, Nonlinear Systems, 3rd ed., Theorem 7.3; Popov 1961): for a time-invariant
// nonlinearity in the sector [0, k], G strictly proper and Hurwitz (A Hurwitz, (A, B) controllable,
// (A, C) observable), the loop is absolutely stable if some q >= 0 gives
//     1/k + Re[(1 + j w q) G(jw)] > 0   for all real w.
// With G = N/D, Re[N(jw) D(-jw)] = R(x) and Im[N(jw) D(-jw)] = w J(x), x = w^2:
//     Re[(1 + j w q) G(jw)] = (R(x) - q x J(x)) / |D(jw)|^2,
// so the condition is the polynomial E_q(x) = |D|^2 + k (R - q x J) > 0 on [0, inf), decided exactly.
//
// g(q) = min_w Re[(1 + jwq) G(jw)] is concave in q (a minimum of affine functions), so the best multiplier
// q* = argmax g is found by a one-dimensional search, and the largest certified k is -1/g(q*).
// A fail is certified by witnesses: frequencies at which the constraints on q (each frequency gives
// q < bound or q > bound) contradict each other, evaluated exactly.
import {
	type DPoly,
	type Dyadic,
	addD,
	degree,
	dyadicOf,
	evenRealPart,
	oddImagPart,
	oddMultiplicityPositiveRoots,
	scaleD
} from '../exact';
import { type EngineOptions, tick, withBudget } from '../budget';
import { certifiedPositiveOnHalfLine, provedBelow } from '../certify';
import { toFloatCommon } from '../fpoly';
import { circleFamily, golden } from '../frequency';
import type { Plant } from '../model';
import type { C } from '../roots';
import { popovMultipliers } from '../preflight';
import { type CheckResult, enc } from '../types';
import { budgetResult } from './circle-check';

const fmt = (x: number) => (Number.isFinite(x) ? Number(x.toPrecision(6)).toString() : String(x));

interface PopovPolys {
	M: DPoly;
	R: DPoly;
	xJ: DPoly;
	/** Sample frequencies (scaled w) with Re G and w Im G there, for g(q) (see gOf). */
	ws: number[];
	reG: number[];
	wImG: number[];
	G: (w: number) => { re: number; im: number };
	relDeg: number;
	lcRatio: number;
}

function popovPolys(plant: Plant, roots: readonly C[]): PopovPolys {
	const M = evenRealPart(plant.Ds, plant.Ds);
	const R = evenRealPart(plant.Ns, plant.Ds);
	const J = oddImagPart(plant.Ns, plant.Ds);
	const xJ: DPoly = { c: [0n, ...J.c], e: J.e };
	// G(jw) from N and D in complex arithmetic (far better conditioned near lightly damped modes than the
	// squared polynomials M, R, J in x; exact where its error bound is too large: frequency.ts), sampled on a
	// log sweep plus the dips of D's roots.
	const [Nf, Df] = toFloatCommon([plant.Ns, plant.Ds]);
	const G = circleFamily(plant, 0).gAtW;
	let lo = Infinity;
	let hi = 0;
	for (const r of roots) {
		const m = Math.hypot(r.re, r.im);
		if (m > 0) {
			lo = Math.min(lo, m);
			hi = Math.max(hi, m);
		}
	}
	if (!(hi > 0)) [lo, hi] = [1, 1];
	lo *= 1e-2;
	hi *= 1e2;
	const ws: number[] = [];
	for (let i = 0; i <= 160; i++) ws.push(lo * (hi / lo) ** (i / 160));
	for (const q of roots) {
		if (!(q.im > 0)) continue;
		const h = Math.max(Math.abs(q.re), 1e-300);
		for (const k of [-4, -2, -1, -0.5, 0, 0.5, 1, 2, 4]) if (q.im + k * h > 0) ws.push(q.im + k * h);
	}
	let sorted = [...new Set(ws)].sort((a, b) => a - b);
	let reG: number[] = [];
	let wImG: number[] = [];
	for (const w of sorted) {
		const g = G(w);
		reG.push(g.re);
		wImG.push(w * g.im);
	}
	// Halve the intervals where Re G or w Im G jumps by much of its range (a narrow dip may sit between the
	// samples), up to 3000 samples: the search over q then runs on the samples alone.
	for (let pass = 0; pass < 24 && sorted.length < 3000; pass++) {
		const span = (a: number[]) => Math.max(...a) - Math.min(...a);
		const t1 = 0.02 * span(reG);
		const t2 = 0.02 * span(wImG);
		const ns: number[] = [];
		const nr: number[] = [];
		const ni: number[] = [];
		let added = 0;
		for (let i = 0; i < sorted.length; i++) {
			ns.push(sorted[i]);
			nr.push(reG[i]);
			ni.push(wImG[i]);
			if (
				i + 1 < sorted.length &&
				sorted[i + 1] - sorted[i] > 1e-9 * sorted[i] &&
				(!(Math.abs(reG[i + 1] - reG[i]) <= t1) || !(Math.abs(wImG[i + 1] - wImG[i]) <= t2))
			) {
				tick();
				const w = (sorted[i] + sorted[i + 1]) / 2;
				const g = G(w);
				ns.push(w);
				nr.push(g.re);
				ni.push(w * g.im);
				added++;
			}
		}
		sorted = ns;
		reG = nr;
		wImG = ni;
		if (added === 0) break;
	}
	const relDeg = Df.length - Nf.length;
	const lcRatio = Nf.length ? Nf[Nf.length - 1] / Df[Df.length - 1] : 0;
	return { M, R, xJ, ws: sorted, reG, wImG, G, relDeg, lcRatio };
}

/**
 * g(q) = min over w of Re[(1 + j w q) G(jw)] = Re G - q w Im G (scaled units) and its minimiser x = w^2:
 * the local minima of the samples, refined by golden section between their neighbours (Kiefer 1953).
 * Numerical: it chooses q and the candidate witnesses; the verdicts are decided exactly.
 */
function gOf(pp: PopovPolys, q: number, refine = true): { value: number; x: number | null } {
	const f = (w: number) => {
		const g = pp.G(w);
		return g.re - q * w * g.im;
	};
	const v = pp.ws.map((_, i) => pp.reG[i] - q * pp.wImG[i]);
	const g0 = pp.G(0).re;
	let best = { value: g0, x: 0 as number | null };
	const locals: number[] = [];
	for (let i = 0; i < v.length; i++)
		if (v[i] <= (i > 0 ? v[i - 1] : Infinity) && v[i] <= (i + 1 < v.length ? v[i + 1] : Infinity))
			locals.push(i);
	locals.sort((i, j) => v[i] - v[j]);
	if (!refine)
		// Samples only (the search over q): the vertex of the parabola through each of the three lowest local
		// minima and its neighbours, which is far closer to the true minimum than the sample itself.
		for (const i of locals.slice(0, 3)) {
			let val = v[i];
			let w = pp.ws[i];
			if (i > 0 && i + 1 < v.length) {
				const [a, b, c] = [pp.ws[i - 1], pp.ws[i], pp.ws[i + 1]];
				const [fa, fb, fc] = [v[i - 1], v[i], v[i + 1]];
				const den = (b - a) * (fb - fc) - (b - c) * (fb - fa);
				if (den !== 0) {
					const t = b - (0.5 * ((b - a) ** 2 * (fb - fc) - (b - c) ** 2 * (fb - fa))) / den;
					if (t > a && t < c) {
						// value of the parabola at its vertex (Lagrange form)
						const pv =
							(fa * (t - b) * (t - c)) / ((a - b) * (a - c)) +
							(fb * (t - a) * (t - c)) / ((b - a) * (b - c)) +
							(fc * (t - a) * (t - b)) / ((c - a) * (c - b));
						if (pv < val) {
							val = pv;
							w = t;
						}
					}
				}
			}
			if (val < best.value) best = { value: val, x: w * w };
		}
	for (const i of refine ? locals.slice(0, 2) : []) {
		tick();
		const a = i > 0 ? pp.ws[i - 1] : pp.ws[i] / 2;
		const b = i + 1 < pp.ws.length ? pp.ws[i + 1] : pp.ws[i] * 2;
		const { w, v: fv } = golden(f, a, b, 1e-9);
		if (fv < best.value) best = { value: fv, x: w * w };
	}
	// The limit as w -> infinity: for relative degree 1, G ~ (lc N / lc D) / (jw), so the value tends to
	// q lc N / lc D; for higher relative degree it tends to 0.
	const lim = pp.relDeg === 1 ? q * pp.lcRatio : 0;
	if (lim < best.value) best = { value: lim, x: null };
	return best;
}

function maximiseG(pp: PopovPolys): { q: number; g: number; x: number | null } {
	const g0 = gOf(pp, 0, false);
	let best = { q: 0, g: g0.value, x: g0.x };
	const grid: number[] = [];
	for (let e = -8; e <= 8; e += 0.5) grid.push(10 ** e);
	let bi = -1;
	for (let i = 0; i < grid.length; i++) {
		const r = gOf(pp, grid[i], false);
		if (r.value > best.g) {
			best = { q: grid[i], g: r.value, x: r.x };
			bi = i;
		}
	}
	// Golden-section search on the concave g between the neighbours of the best grid point.
	const a = bi <= 0 ? 0 : grid[bi - 1];
	const b = bi < 0 ? grid[0] : bi + 1 < grid.length ? grid[bi + 1] : grid[bi] * 10;
	const phi = (Math.sqrt(5) - 1) / 2;
	// The maximum of g is the minimum of -g.
	const qm = golden((q) => -gOf(pp, q, false).value, a, b, 1e-9).w;
	let qs = gOf(pp, qm, false).value > best.g ? qm : best.q;
	// A short golden-section search on the refined g (between the samples) around that multiplier: the
	// samples alone misplace the maximum of g where it is a kink.
	if (qs > 0) {
		let a2 = qs * 0.98;
		let b2 = qs * 1.02;
		for (let it = 0; it < 25; it++) {
			const c2 = b2 - phi * (b2 - a2);
			const d2 = a2 + phi * (b2 - a2);
			if (gOf(pp, c2).value > gOf(pp, d2).value) b2 = d2;
			else a2 = c2;
		}
		const qr = (a2 + b2) / 2;
		if (gOf(pp, qr).value > gOf(pp, qs).value) qs = qr;
	}
	const r = gOf(pp, qs);
	return { q: qs, g: r.value, x: r.x };
}

/** E_q(x) = M + k R - k q xJ, exact for dyadic k and q. */
function popovE(pp: PopovPolys, k: number, q: number): DPoly {
	const kd = dyadicOf(k);
	const kq: Dyadic = dyadicOf(q);
	let E = addD(pp.M, scaleD(pp.R, kd));
	if (q !== 0) E = addD(E, scaleD(pp.xJ, { m: -kd.m * kq.m, e: kd.e + kq.e }));
	return E;
}

function evalDyadic(p: DPoly, x: Dyadic): Dyadic {
	// exact value of p at a dyadic x, as a dyadic
	const n = p.c.length - 1;
	if (n < 0) return { m: 0n, e: 0 };
	if (x.e >= 0) {
		const xv = x.m << BigInt(x.e);
		let acc = 0n;
		for (let i = n; i >= 0; i--) acc = acc * xv + p.c[i];
		return { m: acc, e: p.e };
	}
	const f = BigInt(-x.e);
	let acc = 0n;
	let d = 1n;
	for (let i = n; i >= 0; i--) {
		acc = acc * x.m + p.c[i] * d;
		d <<= f;
	}
	return { m: acc, e: p.e + x.e * n };
}

function cmpDyadic(a: Dyadic, b: Dyadic): number {
	const e = Math.min(a.e, b.e);
	const av = a.m << BigInt(a.e - e);
	const bv = b.m << BigInt(b.e - e);
	return av > bv ? 1 : av < bv ? -1 : 0;
}

function mulDy(a: Dyadic, b: Dyadic): Dyadic {
	return { m: a.m * b.m, e: a.e + b.e };
}

/**
 * Exact proof that no q >= 0 satisfies the Popov inequality for this k, from candidate frequencies.
 * F = M + kR, H = k xJ. Each x gives F(x) - q H(x) > 0: q < F/H if H > 0, q > F/H if H < 0, F > 0 if H = 0.
 */
function infeasibilityWitness(pp: PopovPolys, k: number, xs: number[]): number[] | null {
	const kd = dyadicOf(k);
	const F = addD(pp.M, scaleD(pp.R, kd));
	const H = scaleD(pp.xJ, kd);
	const pts = xs
		.filter((x) => x >= 0 && Number.isFinite(x))
		.map((x) => {
			const xd = dyadicOf(x);
			return { x, f: evalDyadic(F, xd), h: evalDyadic(H, xd) };
		});
	const zero = { m: 0n, e: 0 };
	for (const p of pts) if (cmpDyadic(p.f, zero) <= 0 && cmpDyadic(p.h, zero) >= 0) return [p.x];
	const lower = pts.filter((p) => cmpDyadic(p.h, zero) < 0);
	const upper = pts.filter((p) => cmpDyadic(p.h, zero) > 0);
	for (const l of lower)
		for (const u of upper) {
			// q > Fl/Hl and q < Fu/Hu contradict when Fl/Hl >= Fu/Hu; Hl < 0 < Hu: Fl Hu <= Fu Hl.
			if (cmpDyadic(mulDy(l.f, u.h), mulDy(u.f, l.h)) <= 0) return [l.x, u.x];
		}
	return null;
}

export interface PopovCore {
	applicable: boolean;
	reason?: string;
	hurwitz: boolean;
	qScaled: number;
	gBest: number;
	threshold: number;
	thresholdCertified: number | null;
	argminX: number | null;
	pp?: PopovPolys;
}

export function popovCore(plant: Plant): PopovCore {
	if (degree(plant.Ns) >= plant.order)
		return {
			applicable: false,
			reason:
				'The Popov criterion (Khalil, Theorem 7.3) is stated for a strictly proper plant; this one has a direct feedthrough.',
			hurwitz: false,
			qScaled: NaN,
			gBest: NaN,
			threshold: NaN,
			thresholdCertified: null,
			argminX: null
		};
	const hw = circleFamily(plant, 0).hurwitz;
	if (hw.undecided)
		return {
			applicable: false,
			reason: 'Whether the plant is Hurwitz could not be decided within the work limit of the exact test.',
			hurwitz: false,
			qScaled: NaN,
			gBest: NaN,
			threshold: NaN,
			thresholdCertified: null,
			argminX: null
		};
	if (!hw.hurwitz)
		return {
			applicable: true,
			hurwitz: false,
			qScaled: NaN,
			gBest: NaN,
			threshold: NaN,
			thresholdCertified: null,
			argminX: null
		};
	const pp = popovPolys(plant, hw.roots);
	// Theorem 7.3 excludes a q with -1/q an eigenvalue of A: the multiplier is moved off one (preflight.ts).
	const found = maximiseG(pp);
	const qOk = popovMultipliers(plant, [found.q])[0] ?? found.q;
	const best = qOk === found.q ? found : (({ value, x }) => ({ q: qOk, g: value, x }))(gOf(pp, qOk));
	const threshold = best.g >= 0 ? Infinity : -1 / best.g;
	// Certify a threshold with q*: largest of a few values just below the estimate that passes exactly.
	let thresholdCertified: number | null = null;
	if (threshold === Infinity) {
		// Every finite k works with q* when R - q* x J >= 0 on [0, inf) (|D|^2 > 0 there as D is Hurwitz).
		const U = popovE({ ...pp, M: { c: [], e: 0 } }, 1, best.q);
		const strict = certifiedPositiveOnHalfLine(U).positive;
		const weak =
			strict ||
			(U.c.length > 0 && U.c[0] >= 0n && U.c[U.c.length - 1] > 0n && oddMultiplicityPositiveRoots(U.c) === 0);
		if (weak) thresholdCertified = Infinity;
	} else {
		thresholdCertified = provedBelow(
			threshold,
			(kk) => certifiedPositiveOnHalfLine(popovE(pp, kk, best.q)).positive
		);
	}
	return {
		applicable: true,
		hurwitz: true,
		qScaled: best.q,
		gBest: best.g,
		threshold,
		thresholdCertified,
		argminX: best.x,
		pp
	};
}

const POPOV_ASSUMPTIONS =
	'Only for time-invariant (memoryless) nonlinearities in the sector; the plant must be Hurwitz and strictly proper with a minimal realisation; sufficient, not necessary.';

/** The Popov check under its time budget (budget.ts). */
export function runPopov(plant: Plant, k: number, opts: EngineOptions = {}): CheckResult {
	return withBudget(
		opts.budgetSeconds,
		() => popovResult(plant, k),
		(e) => budgetResult('popov', e.message, POPOV_ASSUMPTIONS, { k })
	);
}

function popovResult(plant: Plant, k: number): CheckResult {
	const core = popovCore(plant);
	const w0 = plant.w0;
	const assumptions = POPOV_ASSUMPTIONS;
	const base = { type: 'popov' as const, assumptions };
	if (!core.applicable)
		return {
			...base,
			verdict: 'inconclusive',
			q: null,
			threshold: null,
			numbers: { k },
			explanation: core.reason!,
			reason: core.reason,
			// A direct feedthrough is a failed precondition; an undecided Hurwitz test is not.
			...(degree(plant.Ns) >= plant.order
				? {
						notApplicable: {
							precondition: 'G is strictly proper (required by the Popov criterion)',
							remedy: 'The circle criterion applies to plants with a direct feedthrough.'
						}
					}
				: {})
		};
	if (!core.hurwitz) {
		const reason =
			'The plant is not Hurwitz; with phi = 0 (inside the sector) the loop is not asymptotically stable.';
		return {
			...base,
			verdict: 'fail',
			q: null,
			threshold: null,
			numbers: { k },
			explanation: reason,
			reason,
			notApplicable: {
				precondition: 'G is Hurwitz (required by the Popov criterion)',
				remedy:
					'A loop transformation makes it applicable: take out a stabilising gain and use the circle criterion with a lower bound k1 > 0, which allows unstable plants.'
			}
		};
	}
	const pp = core.pp!;
	const q = core.qScaled / w0;
	const numbers: Record<string, number | string | null> = {
		k,
		q,
		thresholdEstimate: enc(core.threshold),
		thresholdProvedWithQ: enc(core.thresholdCertified),
		// Old name, kept for one engine version so readers of recorded results keep working.
		thresholdCertifiedWithQ: enc(core.thresholdCertified),
		minPopovReal: core.gBest,
		frequencyScale: w0
	};
	const critical = core.argminX === null ? null : Math.sqrt(core.argminX) * w0;
	const threshold = core.thresholdCertified;
	// Try q*, then q = 0 (the circle-criterion multiplier) for this k.
	for (const qs of popovMultipliers(plant, [core.qScaled, 0])) {
		const E = popovE(pp, k, qs);
		const pos = certifiedPositiveOnHalfLine(E, core.argminX !== null ? [core.argminX] : []);
		if (pos.positive) {
			const qq = qs / w0;
			return {
				...base,
				verdict: 'pass',
				q: qq,
				threshold: enc(threshold),
				criticalFrequency: critical,
				margin: 1 / k + core.gBest,
				numbers: { ...numbers, q: qq, positivityDecidedBy: pos.path },
				explanation: `Absolutely stable for every time-invariant nonlinearity in [0, ${fmt(k)}]: the Popov line through -1/k with slope 1/q, q = ${fmt(qq)} s, is proved exactly.`
			};
		}
	}
	// Look for an exact proof that no q works.
	const xs: number[] = [0];
	for (const qs of [core.qScaled, core.qScaled + 1e-6, 0]) {
		const r = gOf(pp, qs);
		if (r.x !== null) xs.push(r.x);
	}
	for (const dq of [1e-6, 1e-4, 1e-2, 1e-1, 1]) {
		for (const qs of [core.qScaled * (1 + dq), Math.max(0, core.qScaled * (1 - dq))]) {
			const r = gOf(pp, qs);
			if (r.x !== null) xs.push(r.x);
		}
	}
	const wit = infeasibilityWitness(pp, k, xs);
	if (wit) {
		const reason = `No multiplier q >= 0 exists: the Popov inequality at ${wit.map((x) => fmt(Math.sqrt(x) * w0)).join(' and ')} rad/s ${wit.length > 1 ? 'gives contradictory bounds on q' : 'fails for every q >= 0'} (exact).`;
		return {
			...base,
			verdict: 'fail',
			q: null,
			threshold: enc(threshold),
			criticalFrequency: critical,
			margin: 1 / k + core.gBest,
			numbers: { ...numbers, witnessFrequencies: wit.map((x) => Math.sqrt(x) * w0).join(',') },
			explanation: `Not proved for [0, ${fmt(k)}]: the Popov criterion proves sectors up to [0, ${threshold === Infinity ? 'infinity' : fmt(threshold ?? NaN)}] only.`,
			reason
		};
	}
	const reason = `The best multiplier found (q = ${fmt(q)} s) does not prove k = ${fmt(k)}, and no exact proof that none exists was found (k is within numerical reach of the Popov limit ${fmt(core.threshold)}).`;
	return {
		...base,
		verdict: 'inconclusive',
		q: null,
		threshold: enc(threshold),
		criticalFrequency: critical,
		margin: 1 / k + core.gBest,
		numbers,
		explanation: reason,
		reason
	};
}
