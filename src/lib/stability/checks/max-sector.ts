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
import { type MaxSectorLimits, applyMaxSectorLimits } from '../preflight';
import { type CheckResult, enc } from '../types';
import { circleCore, zPolys } from './circle';
import { type GainInterval, hurwitzAtGain, intervalContaining, linearGainIntervals } from './gain-range';

const fmt = (x: number) => (Number.isFinite(x) ? Number(x.toPrecision(6)).toString() : String(x));
/** Six digits rounded down, so the words never claim more than the proved bound. */
function fmtDown(x: number): string {
	if (!Number.isFinite(x) || x === 0) return fmt(x);
	let p = Number(x.toPrecision(6));
	if (p > x) p = Number((p - 10 ** (Math.floor(Math.log10(Math.abs(x))) - 5)).toPrecision(6));
	return p.toString();
}

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
	// Accept roots well off the axis too (repeated factors make the stationary roots inaccurate) and polish.
	for (const x of positiveRealRoots(stat, 0.05)) cand.push(x);
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
	// Independent sweep with local refinement (robust when repeated factors spoil the stationary roots).
	const sw = sweepEstimate(A, B);
	if (sw.k2 < best) return sw;
	return { k2: best, x: bx };
}

function sweepEstimate(A: number[], B: number[]): { k2: number; x: number | null } {
	const r = (x: number) => {
		const b = hornerR(B, x);
		return b < 0 ? -hornerR(A, x) / b : Infinity;
	};
	const N = 2000;
	let best = Infinity;
	let bi = -1;
	const xs: number[] = [];
	for (let i = 0; i <= N; i++) xs.push(1e-8 * 1e16 ** (i / N));
	xs.forEach((x, i) => {
		const v = r(x);
		if (v < best) {
			best = v;
			bi = i;
		}
	});
	if (bi < 0) return { k2: Infinity, x: null };
	// Golden-section refinement in log x between the neighbours.
	let a = Math.log(xs[Math.max(0, bi - 1)]);
	let b = Math.log(xs[Math.min(N, bi + 1)]);
	const phi = (Math.sqrt(5) - 1) / 2;
	for (let it = 0; it < 100; it++) {
		const c = b - phi * (b - a);
		const d = a + phi * (b - a);
		if (r(Math.exp(c)) < r(Math.exp(d))) b = d;
		else a = c;
	}
	const xm = Math.exp((a + b) / 2);
	const vm = r(xm);
	return vm < best ? { k2: vm, x: xm } : { k2: best, x: xs[bi] };
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
					? 'The plant is not Hurwitz, so no sector [0, k2] can be proved.'
					: `The loop closed with gain k1 = ${fmt(k1)} is unstable, so no sector with this lower bound can be proved.`
		};
	const est = estimateK2(plant, k1);
	if (est.k2 === Infinity) {
		const inf = circleCore(plant, k1, Infinity);
		if (inf.pass)
			return { feasible: true, threshold: Infinity, failAbove: null, estimate: Infinity, argminX: null };
	}
	// Certify just below the estimate (and show failure just above), widening the offset when a decision is
	// too close to the boundary for the filter; bisect on the certified test if the estimate was wrong.
	const tryAt = (k2: number): 'pass' | 'fail' | 'undecided' => {
		const c = circleCore(plant, k1, k2);
		return c.pass ? 'pass' : c.failure === 'undecided' ? 'undecided' : 'fail';
	};
	let hi = est.k2;
	if (!(hi > k1)) {
		// The floating estimate is unusable (cancellation near repeated roots): the sector can be no wider than
		// the linear gain range, so bisect below its upper end.
		const iv = intervalContaining(linearGainIntervals(plant), k1 + Math.abs(k1) * 1e-12 + 1e-300);
		hi = iv && Number.isFinite(iv.high) ? iv.high : Math.max(1, Math.abs(k1)) * 2;
	}
	if (!Number.isFinite(hi)) {
		// Estimate unbounded but the infinite sector failed (a condition at infinity): grow until failure.
		let g = Math.max(1, Math.abs(k1)) * 2;
		for (let i = 0; i < 200 && tryAt(g) === 'pass'; i++) g *= 4;
		hi = g;
	}
	let threshold: number | null = null;
	let failAbove: number | null = null;
	const span = hi - k1;
	let wrong = false;
	for (const f of [1e-10, 1e-8, 1e-6, 1e-4, 1e-2, 0.1]) {
		const below = hi - span * f;
		if (!(below > k1)) break;
		const r = tryAt(below);
		if (r === 'pass') {
			threshold = below;
			break;
		}
		if (r === 'fail') {
			wrong = true;
			break;
		}
	}
	for (const f of [1e-10, 1e-8, 1e-6, 1e-4, 1e-2, 0.1]) {
		const above = hi + span * f;
		const r = tryAt(above);
		if (r === 'fail') {
			failAbove = above;
			break;
		}
		if (r === 'pass') {
			threshold = above;
			break;
		}
	}
	if (wrong || threshold === null) {
		let a = k1;
		let b = failAbove ?? hi;
		for (let i = 0; i < 40; i++) {
			const m = (a + b) / 2;
			if (m <= a || m >= b || b - a <= 1e-9 * Math.abs(b)) break;
			const r = tryAt(m);
			// An undecided test is treated as "not certified": the reported bound stays a proved one.
			if (r === 'pass') a = m;
			else b = m;
		}
		threshold = a > k1 ? a : threshold;
		failAbove = failAbove ?? b;
	}
	// Report the frequency where Re Z is smallest at the certified threshold (robust even when the estimate
	// above was off, e.g. for repeated factors).
	let argminX = est.x;
	if (threshold !== null && Number.isFinite(threshold)) {
		const at = circleCore(plant, k1, threshold);
		if (at.argminX !== undefined) argminX = at.argminX;
	}
	return { feasible: threshold !== null, threshold, failAbove, estimate: est.k2, argminX };
}

function intervalOut(
	iv: GainInterval[]
): [number | 'Infinity' | '-Infinity', number | 'Infinity' | '-Infinity'][] {
	return iv.map((g) => [enc(g.low) as number, enc(g.high) as number]);
}

export function runMaxSector(
	plant: Plant,
	k1: number,
	limits: MaxSectorLimits = { illPosedAbove: null, unbounded: false }
): CheckResult {
	// Unbounded and ill-posed limits are decided exactly before (or after) the search: preflight.ts.
	const core = applyMaxSectorLimits(plant, k1, limits, () => maxSectorCore(plant, k1));
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
		frequencyScale: plant.w0,
		unbounded: limits.unbounded ? 'yes' : 'no',
		...(limits.unbounded ? { infiniteSectorProved: limits.infiniteSectorProved ? 'yes' : 'no' } : {}),
		...(limits.illPosedAbove !== null ? { illPosedGain: limits.illPosedAbove } : {})
	};
	let explanation: string;
	const lin = around ? `[${fmt(around.low)}, ${fmt(around.high)}]` : 'empty around k1';
	if (!core.feasible) explanation = core.reason ?? 'No sector with this lower bound can be proved.';
	else if (limits.unbounded)
		explanation = `Unbounded: the circle criterion proves the sector [${fmt(k1)}, k2] for every finite k2 (exact)${
			limits.infiniteSectorProved
				? ', and the sector [' + fmt(k1) + ', infinity] itself'
				: '; the sector [' + fmt(k1) + ', infinity] itself is not proved'
		}. Linear gains are stable over ${lin}.`;
	else {
		const t = core.threshold === Infinity ? 'infinity' : fmtDown(core.threshold!);
		const ill =
			limits.illPosedAbove !== null && core.failAbove === limits.illPosedAbove
				? ` It stops short of k = ${fmt(limits.illPosedAbove)}, where 1 + k G(inf) = 0 and the loop is not well posed.`
				: '';
		explanation = `The circle criterion proves sectors up to [${fmt(k1)}, ${t}]; linear gains are stable over ${lin}, which shows what the sufficiency of the criterion costs.${ill}`;
	}
	return {
		type: 'max-sector',
		verdict: core.feasible ? 'pass' : core.reason ? 'fail' : 'inconclusive',
		threshold: enc(core.threshold),
		criticalFrequency: w,
		linearGainIntervals: intervalOut(iv),
		numbers,
		explanation,
		...(core.feasible
			? {}
			: {
					reason:
						core.reason ??
						'No sector above k1 could be proved within the work limit of the exact fallback (the floating-point filter cannot resolve this plant, e.g. highly repeated lightly damped factors).'
				}),
		assumptions:
			'The threshold is proved by the exact circle test; the linear gain range holds for constant gains only, the sector for any nonlinearity in it.'
	};
}
