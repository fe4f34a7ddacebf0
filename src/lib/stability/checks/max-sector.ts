// Largest sector [k1, k2] the circle criterion certifies for a given k1, next to the linear gain range.
//
// With Q = D + k1 N fixed, E(x; k2) = Re[(D + k2 N)(jw) Q(-jw)] = A(x) + k2 B(x), A = Re[D Q*], B = Re[N Q*],
// is affine in k2, so the supremum is k2* = min over {x >= 0 : B(x) < 0} of -A(x)/B(x) (infinite when B >= 0).
// For k1 = 0 this is k2* = -1/min Re G(jw) (Khalil, 3rd ed., section 7.1, the k1 = 0 case). The estimate is
// numerical; the reported threshold is a value just below it that the EXACT circle test has passed, and
// thresholdFailAbove a value just above it that the exact test has failed, so the true supremum is bracketed.
import { type EngineOptions, withBudget } from '../budget';
import { circleFamily, familyMinimum } from '../frequency';
import type { Plant } from '../model';
import { type MaxSectorLimits, applyMaxSectorLimits } from '../preflight';
import { type CheckResult, enc } from '../types';
import { circleCore } from './circle';
import { budgetResult } from './circle-check';
import { type GainInterval, intervalContaining, linearGainIntervals } from './gain-range';

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
	/** Why no sector could be proved when the exact test ran out of its work limit. */
	undecidedReason?: string;
}

export function maxSectorCore(plant: Plant, k1: number): MaxSectorCore {
	const fam = circleFamily(plant, k1);
	if (fam.Q.c.length - 1 < plant.order || !fam.hurwitz.hurwitz || fam.hurwitz.undecided)
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
	const tryAt = (k2: number): 'pass' | 'fail' | 'undecided' => {
		const c = circleCore(plant, k1, k2);
		return c.pass ? 'pass' : c.failure === 'undecided' ? 'undecided' : 'fail';
	};
	// k2* = k1 - 1/min r (frequency.ts). The bracket: a value just above it where the exact test fails (the
	// minimum of r is the witness) and one just below it where the exact test passes (root isolation). A pass
	// that fails instead means the minimum found was not the global one: circleCore then refines the minimum
	// where the isolation found the violation, and the bracket is formed again.
	let undecidedReason: string | undefined;
	for (let round = 0; round < 6; round++) {
		const mn = familyMinimum(fam);
		if (!(mn.r < 0)) {
			// r >= 0 on [0, inf): every k2 passes the frequency condition; [k1, infinity] itself is decided
			// exactly (its condition at infinity can still fail).
			const inf = circleCore(plant, k1, Infinity);
			if (inf.pass)
				return { feasible: true, threshold: Infinity, failAbove: null, estimate: Infinity, argminX: mn.x };
			if (familyMinimum(fam) !== mn) continue;
			return growUntilFailure(plant, k1, tryAt, mn.x);
		}
		const est = k1 - 1 / mn.r;
		const scale = Math.max(Math.abs(est), est - k1);
		let failAbove: number | null = null;
		for (const f of [1e-12, 1e-11, 1e-10]) {
			const r = tryAt(est + scale * f);
			if (r === 'fail') {
				failAbove = est + scale * f;
				break;
			}
		}
		let threshold: number | null = null;
		let moved = false;
		for (const f of [1e-12, 1e-11, 1e-10]) {
			const below = est - scale * f;
			if (!(below > k1)) break;
			const r = tryAt(below);
			if (r === 'pass') {
				threshold = below;
				break;
			}
			if (r === 'fail') {
				moved = familyMinimum(fam) !== mn;
				break;
			}
			undecidedReason = circleCore(plant, k1, below).reason;
		}
		if (moved) continue;
		if (threshold !== null && failAbove !== null)
			return { feasible: true, threshold, failAbove, estimate: est, argminX: mn.x };
		return bisect(k1, threshold, failAbove ?? est * (1 + 1e-6), tryAt, est, mn.x, undecidedReason);
	}
	const mn = familyMinimum(fam);
	const est = mn.r < 0 ? k1 - 1 / mn.r : Infinity;
	return bisect(
		k1,
		null,
		Number.isFinite(est) ? est * (1 + 1e-6) : 2 * Math.max(1, Math.abs(k1)),
		tryAt,
		est,
		mn.x
	);
}

/** Fallback: bisection on the exact test between k1 and a failing value (a bound stays a proved one). */
function bisect(
	k1: number,
	passAt: number | null,
	failAt: number,
	tryAt: (k2: number) => 'pass' | 'fail' | 'undecided',
	estimate: number,
	argminX: number | null,
	reason?: string
): MaxSectorCore {
	let a = passAt ?? k1;
	let b = failAt;
	let failProved = tryAt(b) === 'fail';
	for (let i = 0; i < 200 && !failProved; i++) {
		b = k1 + (b - k1) * 2;
		failProved = tryAt(b) === 'fail';
	}
	for (let i = 0; i < 80; i++) {
		const m = (a + b) / 2;
		if (m <= a || m >= b || b - a <= 1e-10 * Math.abs(b)) break;
		const r = tryAt(m);
		if (r === 'pass') a = m;
		else b = m;
	}
	const threshold = a > k1 ? a : null;
	return {
		feasible: threshold !== null,
		threshold,
		failAbove: failProved ? b : null,
		estimate,
		argminX,
		...(threshold === null && reason ? { undecidedReason: reason } : {})
	};
}

/** The frequency condition holds for every k2 but [k1, infinity] fails at infinity: grow until failure. */
function growUntilFailure(
	plant: Plant,
	k1: number,
	tryAt: (k2: number) => 'pass' | 'fail' | 'undecided',
	argminX: number | null
): MaxSectorCore {
	let g = Math.max(1, Math.abs(k1)) * 2;
	let last: number | null = null;
	for (let i = 0; i < 200 && tryAt(g) === 'pass'; i++) {
		last = g;
		g *= 4;
	}
	return bisect(k1, last, g, tryAt, Infinity, argminX);
}

function intervalOut(
	iv: GainInterval[]
): [number | 'Infinity' | '-Infinity', number | 'Infinity' | '-Infinity'][] {
	return iv.map((g) => [enc(g.low) as number, enc(g.high) as number]);
}

const MAX_SECTOR_ASSUMPTIONS =
	'The threshold is proved by the exact circle test; the linear gain range holds for constant gains only, the sector for any nonlinearity in it.';

/** The largest-sector check under its time budget (budget.ts). */
export function runMaxSector(
	plant: Plant,
	k1: number,
	limits: MaxSectorLimits = { illPosedAbove: null, unbounded: false },
	opts: EngineOptions = {}
): CheckResult {
	return withBudget(
		opts.budgetSeconds,
		() => maxSectorResult(plant, k1, limits),
		(e) => budgetResult('max-sector', e.message, MAX_SECTOR_ASSUMPTIONS, { lower: k1 })
	);
}

function maxSectorResult(plant: Plant, k1: number, limits: MaxSectorLimits): CheckResult {
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
						`No sector above k1 could be proved: the exact root isolation stopped (${core.undecidedReason ?? 'work budget exceeded'}).`
				}),
		assumptions: MAX_SECTOR_ASSUMPTIONS
	};
}
