import {
	type Check,
	type Model,
	regionMargin,
	sectorGeometry,
	toTransferFunction
} from '../../stability/index';
import type { MeasuredPoint } from './frequency-response';

// What a measured frequency response says next to a stability specification:
// 1. a SAMPLED sector check: does each measured point stay out of (or inside) the forbidden region of
//    the circle criterion? A finite sample can miss a narrow excursion between two frequencies and says
//    nothing about the encirclement / Hurwitz conditions, so this is never a proved verdict
//    (a sampled check, never a proof);
// 2. model-versus-test agreement at the measured frequencies, against a tolerance on the requirement.

export const DEFAULT_TOLERANCE = { relativeError: 0.1, phaseDeg: 5 } as const;

export interface Complex {
	re: number;
	im: number;
}

/** G(jw) of a model, by Horner's rule on its transfer-function coefficients (highest power first). */
export function modelResponse(model: Model): (w: number) => Complex {
	const { num, den } = toTransferFunction(model);
	const horner = (c: number[], w: number): Complex => {
		let re = 0;
		let im = 0;
		for (const a of c) {
			// (re + j im)(j w) + a
			const nre = -im * w + a;
			const nim = re * w;
			re = nre;
			im = nim;
		}
		return { re, im };
	};
	return (w) => {
		const n = horner(num, w);
		const d = horner(den, w);
		const q = d.re * d.re + d.im * d.im;
		return { re: (n.re * d.re + n.im * d.im) / q, im: (n.im * d.re - n.re * d.im) / q };
	};
}

export type SampledRegion =
	| { kind: 'disk'; centre: number; radius: number; curveMust: 'stay-outside' | 'stay-inside' }
	| { kind: 'half-plane'; boundary: number; curveMust: 'stay-right' | 'stay-left' };

export interface SampledCheck {
	label: 'sampled';
	applicable: boolean;
	/** 'pass': every measured point is on the allowed side; 'fail': at least one is not. */
	verdict: 'pass' | 'fail' | 'not-applicable';
	region: SampledRegion | null;
	/** Smallest signed distance to the region's boundary (positive: allowed side), in the G-plane. */
	margin: number | null;
	/** Frequency (rad/s) of the point with the smallest margin. */
	worstFrequency: number | null;
	violations: number;
	points: number;
	/** The sector the region stands for. */
	sector: [number, number] | null;
	explanation: string;
}

const NOT_CERTIFIED =
	'This is a sampled check on the measured points only; it cannot see between them and does not test the encirclement or Hurwitz conditions, so it is not a proved verdict.';

/** The forbidden region a specification implies, or null when it has none (margins, max-sector). */
export function regionOf(
	check: Check
): { region: SampledRegion; sector: [number, number]; note: string } | null {
	if (check.type === 'circle') {
		const [k1, k2] = check.sector;
		const g = sectorGeometry(k1, k2);
		return g.kind === 'disk'
			? {
					region: { kind: 'disk', centre: g.centre, radius: g.radius, curveMust: g.curveMust },
					sector: [k1, k2],
					note: ''
				}
			: {
					region: { kind: 'half-plane', boundary: g.boundary, curveMust: g.curveMust },
					sector: [k1, k2],
					note: ''
				};
	}
	if (check.type === 'popov') {
		const k = check.sector[1];
		// With multiplier q = 0 the Popov inequality is Re G(jw) > -1/k: stricter than Popov with q > 0.
		return {
			region: { kind: 'half-plane', boundary: -1 / k, curveMust: 'stay-right' },
			sector: [0, k],
			note: ' The Popov specification is sampled with multiplier q = 0 (Re G > -1/k), which is stricter than the Popov criterion itself.'
		};
	}
	if (check.type === 'positive-real') {
		return {
			region: { kind: 'half-plane', boundary: 0, curveMust: 'stay-right' },
			sector: [0, Infinity],
			note: ' For a positive-real specification the sample is checked for Re G(jw) > 0.'
		};
	}
	return null;
}

function signedMargin(region: SampledRegion, p: Complex): number {
	return regionMargin(region, p.re, p.im);
}

export function sampledSectorCheck(points: MeasuredPoint[], check: Check): SampledCheck {
	const r = regionOf(check);
	if (!r) {
		return {
			label: 'sampled',
			applicable: false,
			verdict: 'not-applicable',
			region: null,
			margin: null,
			worstFrequency: null,
			violations: 0,
			points: points.length,
			sector: null,
			explanation: `A ${check.type} specification has no forbidden region to sample against.`
		};
	}
	let margin = Infinity;
	let worst: number | null = null;
	let violations = 0;
	for (const p of points) {
		const m = signedMargin(r.region, p);
		if (!(m > 0)) violations++;
		if (m < margin) {
			margin = m;
			worst = p.w;
		}
	}
	const verdict = violations === 0 ? 'pass' : 'fail';
	const where =
		r.region.kind === 'half-plane'
			? `${r.region.curveMust === 'stay-left' ? 'left' : 'right'} of Re G = ${r.region.boundary.toPrecision(4)}`
			: r.region.curveMust === 'stay-outside'
				? 'outside the disk'
				: 'inside the disk';
	return {
		label: 'sampled',
		applicable: true,
		verdict,
		region: r.region,
		margin: Number.isFinite(margin) ? margin : null,
		worstFrequency: worst,
		violations,
		points: points.length,
		sector: r.sector,
		explanation:
			(verdict === 'pass'
				? `All ${points.length} measured points lie ${where} (sampled).`
				: `${violations} of ${points.length} measured points are not ${where} (sampled).`) +
			r.note +
			' ' +
			NOT_CERTIFIED
	};
}

export interface Agreement {
	label: string;
	points: number;
	maxRelativeError: number;
	rmsRelativeError: number;
	/** 20 log10(|G_measured| / |G_model|), the one with the largest absolute value, dB. */
	maxGainDifferenceDb: number;
	/** arg G_measured - arg G_model wrapped to (-180, 180], the one with the largest absolute value, degrees. */
	maxPhaseDifferenceDeg: number;
	worstFrequency: number;
	tolerance: { relativeError: number; phaseDeg: number };
	withinTolerance: boolean;
	/** Per measured point, for the table and plot. */
	perPoint: { w: number; relativeError: number; gainDb: number; phaseDeg: number }[];
}

/**
 * Model versus test at the measured frequencies. Relative error |Gm - G| / |G| (Gm measured, G model);
 * within tolerance when the largest relative error and the largest absolute phase difference are both
 * at most the tolerance.
 */
export function agreement(
	points: MeasuredPoint[],
	model: Model,
	tolerance: { relativeError: number; phaseDeg: number },
	label = 'model'
): Agreement {
	const G = modelResponse(model);
	let maxRel = 0;
	let sumSq = 0;
	let maxGain = 0;
	let maxPhase = 0;
	let worst = points[0]?.w ?? 0;
	const perPoint: Agreement['perPoint'] = [];
	for (const p of points) {
		const g = G(p.w);
		const gMag = Math.hypot(g.re, g.im);
		const mMag = Math.hypot(p.re, p.im);
		const rel = Math.hypot(p.re - g.re, p.im - g.im) / gMag;
		const gainDb = 20 * Math.log10(mMag / gMag);
		let phase = ((Math.atan2(p.im, p.re) - Math.atan2(g.im, g.re)) * 180) / Math.PI;
		phase = ((((phase + 180) % 360) + 360) % 360) - 180;
		if (phase === -180) phase = 180;
		perPoint.push({ w: p.w, relativeError: rel, gainDb, phaseDeg: phase });
		if (rel > maxRel || Number.isNaN(rel)) {
			maxRel = Number.isNaN(rel) ? Infinity : rel;
			worst = p.w;
		}
		sumSq += rel * rel;
		if (Math.abs(gainDb) > Math.abs(maxGain)) maxGain = gainDb;
		if (Math.abs(phase) > Math.abs(maxPhase)) maxPhase = phase;
	}
	const rms = points.length ? Math.sqrt(sumSq / points.length) : 0;
	return {
		label,
		points: points.length,
		maxRelativeError: maxRel,
		rmsRelativeError: rms,
		maxGainDifferenceDb: maxGain,
		maxPhaseDifferenceDeg: maxPhase,
		worstFrequency: worst,
		tolerance,
		withinTolerance: maxRel <= tolerance.relativeError && Math.abs(maxPhase) <= tolerance.phaseDeg,
		perPoint
	};
}
