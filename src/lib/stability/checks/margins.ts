// Classical gain and phase margins of the unit negative-feedback loop (e.g. Franklin, Powell &
// Emami-Naeini, Feedback Control of Dynamic Systems, section 6.4; Ogata, Modern Control Engineering,
// section 7.6). The gain margins are the ends of the interval of stable loop gains that contains k = 1
// (computed from the exact Hurwitz tests of gain-range.ts), so unstable open loops and conditionally
// stable loops are handled without reading crossings off a plot. Phase margin: at each gain crossover
// |G(jw)| = 1, i.e. a positive root of |N(jw)|^2 - |D(jw)|^2 in x = w^2, PM = 180 deg + arg G(jw); the
// smallest in magnitude is reported. Crossover frequencies come from polynomial roots, not a grid.
import { evenRealPart } from '../exact';
import { divC, evalJw, toFloatCommon } from '../fpoly';
import type { Plant } from '../model';
import { positiveRealRoots, subR } from '../roots';
import { type CheckResult, enc } from '../types';
import { hurwitzAtGain, intervalContaining, linearGainIntervals } from './gain-range';

const fmt = (x: number) => (Number.isFinite(x) ? Number(x.toPrecision(4)).toString() : String(x));

export function runMargins(plant: Plant, minGainMarginDb?: number, minPhaseMarginDeg?: number): CheckResult {
	const stable = hurwitzAtGain(plant, 1);
	const iv = linearGainIntervals(plant);
	const around = stable ? intervalContaining(iv, 1) : null;
	const gmUpper = around ? around.high : NaN;
	const gmLower = around ? around.low : NaN;
	const gmDb = around ? (gmUpper === Infinity ? Infinity : 20 * Math.log10(gmUpper)) : NaN;
	const gmLowerDb = around && gmLower > 0 ? 20 * Math.log10(gmLower) : around ? -Infinity : NaN;
	// Phase margin.
	const [Nf, Df] = toFloatCommon([plant.Ns, plant.Ds]);
	const [NN, DD] = toFloatCommon([evenRealPart(plant.Ns, plant.Ns), evenRealPart(plant.Ds, plant.Ds)]);
	let pm = Infinity;
	let pmW: number | null = null;
	for (const x of positiveRealRoots(subR(NN, DD), 1e-6)) {
		const w = Math.sqrt(x);
		const g = divC(evalJw(Nf, w), evalJw(Df, w));
		let ph = (Math.atan2(g.im, g.re) * 180) / Math.PI + 180;
		if (ph > 180) ph -= 360;
		if (Math.abs(ph) < Math.abs(pm)) {
			pm = ph;
			pmW = w * plant.w0;
		}
	}
	// w = 0 crossover when |G(0)| = 1 exactly is measure-zero; ignored.
	const meetsGm =
		minGainMarginDb === undefined || (Number.isFinite(gmDb) ? gmDb >= minGainMarginDb : gmDb === Infinity);
	const meetsPm = minPhaseMarginDeg === undefined || pm >= minPhaseMarginDeg;
	const pass = stable && meetsGm && meetsPm;
	const numbers: Record<string, number | string | null> = {
		closedLoopStable: stable ? 'yes' : 'no',
		gainMarginDb: enc(gmDb),
		gainMarginFactor: enc(gmUpper),
		phaseCrossoverFrequency: around ? around.highFrequency : null,
		lowerGainMarginFactor: enc(gmLower),
		lowerGainMarginDb: enc(gmLowerDb),
		lowerPhaseCrossoverFrequency: around ? around.lowFrequency : null,
		phaseMarginDeg: enc(pm),
		gainCrossoverFrequency: pmW,
		minGainMarginDb: minGainMarginDb ?? null,
		minPhaseMarginDeg: minPhaseMarginDeg ?? null
	};
	let explanation: string;
	let reason: string | undefined;
	if (!stable) {
		reason =
			'The unit-feedback loop is unstable (1 + G has a zero with non-negative real part), so it has no margins.';
		explanation = reason;
	} else {
		explanation = `Closed loop stable with gain margin ${fmt(gmDb)} dB${
			around?.highFrequency ? ` at ${fmt(around.highFrequency)} rad/s` : ''
		} and phase margin ${fmt(pm)} deg${pmW !== null ? ` at ${fmt(pmW)} rad/s` : ''}.`;
		if (!pass) {
			reason = `Margins below the required ${minGainMarginDb ?? '-'} dB / ${minPhaseMarginDeg ?? '-'} deg.`;
			explanation += ` ${reason}`;
		}
	}
	return {
		type: 'margins',
		verdict: pass ? 'pass' : 'fail',
		criticalFrequency: around?.highFrequency ?? pmW,
		margin: enc(gmDb),
		linearGainIntervals: iv.map((g) => [enc(g.low) as number, enc(g.high) as number]),
		numbers,
		explanation,
		...(reason ? { reason } : {}),
		assumptions:
			'Classical margins describe one constant gain or phase change at a time for the linear loop; they say nothing about nonlinear elements.'
	};
}
