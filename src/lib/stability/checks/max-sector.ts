// Largest sector [k1, k2] the circle criterion certifies for a given k1, next to the linear gain range.
//
// With Q = D + k1 N fixed, E(x; k2) = Re[(D + k2 N)(jw) Q(-jw)] = A(x) + k2 B(x), A = Re[D Q*], B = Re[N Q*],
// is affine in k2, so the supremum is k2* = min over {x >= 0 : B(x) < 0} of -A(x)/B(x) (infinite when B >= 0).
// For k1 = 0 this is k2* = -1/min Re G(jw) (Khalil, 3rd ed., section 7.1, the k1 = 0 case). The estimate is
// numerical; the reported threshold is a value just below it that the EXACT circle test has passed, and
// thresholdFailAbove a value just above it that the exact test has failed, so the true supremum is bracketed.
import { evenRealPart } from '../exact';
import { toFloatCommon } from '../fpoly';
import type { Plant } from '../model';
import { derivR, hornerR, mulR, positiveRealRoots, subR, trimR } from '../roots';
import { type CheckResult, enc } from '../types';
import { circleCore, zPolys } from './circle';
import { type GainInterval, hurwitzAtGain, intervalContaining, linearGainIntervals } from './gain-range';

const fmt = (x: number) => (Number.isFinite(x) ? Number(x.toPrecision(6)).toString() : String(x));

export interface MaxSectorCore {
	feasible: boolean;
	/** Certified-pass upper bound (Infinity when the sector [k1, inf] itself is certified). */
	threshold: number | null;
	/** Smallest value shown to fail exactly, if found. */
	failAbove: number | null;
	estimate: number;
	argminX: number | null;
	reason?: string;
}

/** Numerical k2* = min over x >= 0 with B < 0 of -A/B, from stationary points of A/B. */
function estimateK2(plant: Plant, k1: number): { k2: number; x: number | null } {
	const { Q } = zPolys(plant, k1, k1);
	const [Af, Bf] = toFloatCommon([evenRealPart(plant.Ds, Q), evenRealPart(plant.Ns, Q)]);
	const A = trimR(Af);
	const B = trimR(Bf);
	if (B.length === 0) return { k2: Infinity, x: null };
	const cand: (number | null)[] = [0];
	const stat = subR(mulR(derivR(A), B), mulR(A, derivR(B)));
	for (const x of positiveRealRoots(stat)) cand.push(x);
	let best = Infinity;
	let bx: number | null = null;
	for (const x of cand) {
		if (x === null) continue;
		const b = hornerR(B, x);
		if (!(b < 0)) continue;
		const v = -hornerR(A, x) / b;
		if (v < best) {
			best = v;
			bx = x;
		}
	}
	// Behaviour at infinity: B's leading coefficient negative means the ratio tends to -lc(A)/lc(B) x^(dA-dB).
	const lb = B[B.length - 1];
	if (lb < 0) {
		const dA = A.length - 1;
		const dB = B.length - 1;
		const lim = dA > dB ? Infinity : dA === dB ? -A[dA] / lb : 0;
		if (lim < best) {
			best = lim;
			bx = null;
		}
	}
	return { k2: best, x: bx };
}

export function maxSectorCore(plant: Plant, k1: number): MaxSectorCore {
	if (!hurwitzAtGain(plant, k1))
		return {
			feasible: false,
			threshold: null,
			failAbove: null,
			estimate: NaN,
			argminX: null,
			reason:
				k1 === 0
					? 'The plant is not Hurwitz, so no sector [0, k2] can be certified.'
					: `The loop closed with gain k1 = ${fmt(k1)} is unstable, so no sector with this lower bound can be certified.`
		};
	const est = estimateK2(plant, k1);
	if (est.k2 === Infinity) {
		const inf = circleCore(plant, k1, Infinity);
		if (inf.pass)
			return { feasible: true, threshold: Infinity, failAbove: null, estimate: Infinity, argminX: null };
	}
	// Certify just below the estimate; bisect on the exact test if the first try fails.
	const tryAt = (k2: number) => circleCore(plant, k1, k2).pass;
	let lo = k1;
	let hi = Number.isFinite(est.k2) ? est.k2 : Math.max(1, Math.abs(k1)) * 2;
	if (!Number.isFinite(est.k2)) {
		// Estimate says unbounded but the infinite sector failed (a condition at infinity): grow until failure.
		let g = hi;
		for (let i = 0; i < 200 && tryAt(g); i++) {
			lo = g;
			g *= 4;
		}
		hi = g;
	}
	let threshold: number | null = null;
	let failAbove: number | null = null;
	const span = hi - k1;
	const below = hi - span * 1e-9;
	if (below > k1 && tryAt(below)) threshold = below;
	const above = hi + Math.max(span, 1e-300) * 1e-9;
	if (!tryAt(above)) failAbove = above;
	if (threshold === null) {
		let a = lo;
		let b = failAbove ?? above;
		for (let i = 0; i < 80; i++) {
			const m = (a + b) / 2;
			if (m <= a || m >= b) break;
			if (tryAt(m)) a = m;
			else b = m;
		}
		if (a > k1) threshold = a;
		failAbove = b;
	}
	return { feasible: threshold !== null, threshold, failAbove, estimate: est.k2, argminX: est.x };
}

function intervalOut(
	iv: GainInterval[]
): [number | 'Infinity' | '-Infinity', number | 'Infinity' | '-Infinity'][] {
	return iv.map((g) => [enc(g.low) as number, enc(g.high) as number]);
}

export function runMaxSector(plant: Plant, k1: number): CheckResult {
	const core = maxSectorCore(plant, k1);
	const iv = linearGainIntervals(plant);
	const around = intervalContaining(iv, k1) ?? intervalContaining(iv, k1 + 1e-9 * Math.max(1, Math.abs(k1)));
	const w = core.argminX === null ? null : Math.sqrt(core.argminX) * plant.w0;
	const numbers: Record<string, number | string | null> = {
		lower: k1,
		threshold: enc(core.threshold),
		thresholdEstimate: enc(core.estimate),
		thresholdFailAbove: enc(core.failAbove),
		linearGainLow: around ? enc(around.low) : null,
		linearGainHigh: around ? enc(around.high) : null,
		linearGainHighFrequency: around ? around.highFrequency : null,
		frequencyScale: plant.w0
	};
	let explanation: string;
	if (!core.feasible) explanation = core.reason ?? 'No sector with this lower bound can be certified.';
	else {
		const t = core.threshold === Infinity ? 'infinity' : fmt(core.threshold!);
		const lin = around ? `[${fmt(around.low)}, ${fmt(around.high)}]` : 'empty around k1';
		explanation = `The circle criterion certifies sectors up to [${fmt(k1)}, ${t}]; linear gains are stable over ${lin}, which shows what the sufficiency of the criterion costs.`;
	}
	return {
		type: 'max-sector',
		verdict: core.feasible ? 'pass' : 'fail',
		threshold: enc(core.threshold),
		criticalFrequency: w,
		linearGainIntervals: intervalOut(iv),
		numbers,
		explanation,
		...(core.feasible ? {} : { reason: core.reason }),
		assumptions:
			'The threshold is certified by the exact circle test; the linear gain range holds for constant gains only, the sector for any nonlinearity in it.'
	};
}
