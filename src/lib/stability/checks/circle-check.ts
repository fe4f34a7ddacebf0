import { type EngineOptions, withBudget } from '../budget';
import type { Plant } from '../model';
import { type CheckResult, enc } from '../types';
import { circleCore, nyquistDistance } from './circle';
import { regionWords } from '../present';

const fmt = (x: number) => (Number.isFinite(x) ? Number(x.toPrecision(6)).toString() : String(x));

export const CIRCLE_ASSUMPTIONS =
	'Holds for every nonlinearity, time-varying or not, that stays in the sector; the linear model is taken as exact; the criterion is sufficient, not necessary.';

/** The circle check under its time budget (budget.ts); on exhaustion the verdict is inconclusive. */
export function runCircle(plant: Plant, k1: number, k2: number, opts: EngineOptions = {}): CheckResult {
	return withBudget(
		opts.budgetSeconds,
		() => circleResult(plant, k1, k2),
		(e) => budgetResult('circle', e.message, CIRCLE_ASSUMPTIONS, { k1, k2: enc(k2) })
	);
}

/** The result of a check whose time budget ran out (shared by the checks of this folder). */
export function budgetResult(
	type: CheckResult['type'],
	message: string,
	assumptions: string,
	numbers: Record<string, number | string | null>
): CheckResult {
	const reason = `Inconclusive: ${message}.`;
	return { type, verdict: 'inconclusive', numbers, explanation: reason, reason, assumptions };
}

function circleResult(plant: Plant, k1: number, k2: number): CheckResult {
	const core = circleCore(plant, k1, k2);
	const w0 = plant.w0;
	const wOf = (x: number | null | undefined) =>
		x === null || x === undefined ? null : Math.sqrt(Math.max(0, x)) * w0;
	const dist = nyquistDistance(plant, k1, k2);
	const sector = `[${fmt(k1)}, ${k2 === Infinity ? 'infinity' : fmt(k2)}]`;
	const caseName =
		k1 === 0 ? 'k1 = 0' : k2 === 0 ? 'k2 = 0' : k1 > 0 ? 'k1 > 0' : k2 < 0 ? 'k1 < k2 < 0' : 'k1 < 0';
	const criticalFrequency =
		core.witnessX !== undefined ? wOf(core.argminX ?? core.witnessX) : wOf(core.argminX);
	const numbers: Record<string, number | string | null> = {
		k1,
		k2: enc(k2),
		sectorCase: caseName,
		minReZ: enc(core.minReZ ?? NaN),
		nyquistDistance: enc(dist.distance),
		nyquistDistanceFrequency: wOf(dist.x),
		denominatorHurwitz: core.qHurwitz ? 'yes' : 'no',
		closestRootRealPart: core.qMaxRealPart === null ? null : core.qMaxRealPart * w0,
		hurwitzDecidedBy: core.hurwitzPath,
		positivityDecidedBy: core.positivityPath ?? null,
		witnessFrequency: core.witnessX !== undefined ? wOf(core.witnessX) : null,
		frequencyScale: w0
	};
	const region = regionWords(k1, k2);
	let explanation: string;
	let reason: string | undefined;
	// Preconditions of the criterion (Khalil, Nonlinear Systems, 3rd ed., Theorem 7.1 and Lemma 6.1), as
	// distinct from its condition: a failure here means the criterion says nothing, not "not proved".
	let notApplicable: CheckResult['notApplicable'];
	if (core.pass) {
		explanation = `Absolutely stable for every nonlinearity in the sector ${sector}: the Nyquist curve stays in ${region}, proved exactly.`;
	} else {
		switch (core.failure) {
			case 'ill-posed':
				reason = `1 + k1 G has lower degree than the plant: the loop with gain k1 = ${fmt(k1)} is not well posed.`;
				notApplicable = {
					precondition: `the loop is well posed for the gain k1 = ${fmt(k1)} (1 + k1 G(∞) ≠ 0)`,
					remedy: 'A lower sector bound k1 with 1 + k1 G(∞) ≠ 0 makes the criterion applicable.'
				};
				break;
			case 'hurwitz':
				reason =
					k1 === 0
						? 'The plant is not Hurwitz (a pole with non-negative real part), so the case k1 = 0 proves nothing.'
						: k1 > 0
							? `The loop closed with gain k1 = ${fmt(k1)} is unstable: the Nyquist curve does not encircle -1/k1 as many times as G has right-half-plane poles.`
							: `The loop closed with gain k1 = ${fmt(k1)} is unstable (1 + k1 G has a zero with non-negative real part).`;
				if (k1 === 0)
					notApplicable = {
						precondition: 'G is Hurwitz (required by the sector case k1 = 0)',
						remedy:
							'A loop transformation makes it applicable: a lower bound k1 > 0 that stabilises the plant (the case 0 < k1 < k2 allows unstable plants through the encirclement count), or a model of the plant with its stabilising loop closed.'
					};
				break;
			case 'infinity':
				reason =
					'At high frequency Re Z does not stay positive in the way strict positive realness requires (relative degree of Z above one).';
				notApplicable = {
					precondition: 'Z = (1 + k2 G) / (1 + k1 G) has relative degree at most one',
					remedy:
						k2 === Infinity
							? 'A finite upper bound k2 makes the criterion applicable (Z then has relative degree zero).'
							: 'Another criterion (Popov for a time-invariant element) or a plant model with its high-frequency behaviour may apply.'
				};
				break;
			case 'undecided':
				reason = `The exact root isolation of the frequency condition stopped: ${core.reason ?? 'work budget exceeded'}.`;
				break;
			case 'lossless':
				reason = 'Re Z(jw) is identically zero: Z is lossless, not strictly positive real.';
				break;
			default:
				reason = `The Nyquist curve enters the forbidden region${
					core.witnessX !== undefined
						? ` (shown exactly at ${fmt(wOf(core.witnessX) ?? 0)} rad/s)`
						: core.rootInterval
							? ` (Re Z(jw) = 0 proved between ${fmt(wOf(core.rootInterval[0]) ?? 0)} and ${fmt(wOf(core.rootInterval[1]) ?? 0)} rad/s by exact root isolation)`
							: ''
				}.`;
		}
		explanation =
			core.failure === 'undecided'
				? `Undecided for the sector ${sector}: ${reason.charAt(0).toLowerCase()}${reason.slice(1)}`
				: `Not proved for the sector ${sector}: ${reason.charAt(0).toLowerCase()}${reason.slice(1)}`;
	}
	return {
		type: 'circle',
		verdict: core.pass ? 'pass' : core.failure === 'undecided' ? 'inconclusive' : 'fail',
		criticalFrequency,
		margin: enc(core.minReZ ?? NaN),
		numbers,
		explanation,
		...(reason ? { reason } : {}),
		...(notApplicable ? { notApplicable } : {}),
		assumptions: CIRCLE_ASSUMPTIONS
	};
}
