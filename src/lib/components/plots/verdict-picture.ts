import { decisionRegions, frequencyText, sectorOf, type DecisionRegion } from '../../verification/decision';
import type { SectorGeometry } from './frame';

// What a verdict's picture shows, read from one stored run and nothing else (pure, no drawing):
// - the region the verdict was tested against: the sector the engine decided with (result.decidedWith,
//   the stated sector widened by the required margin), and the stated sector beside it when they differ;
// - the curves, the worst operating point's highlighted;
// - the critical-frequency marker: G(jw) at the engine's criticalFrequency for the worst point, as the
//   worker evaluated it on the model (curves.points[].critical), never the nearest sample of a curve.
// The critical frequency is where the engine's test comes closest to failing: for the circle criterion
// the minimiser of Re Z(jw), Z = (1 + k2 G)/(1 + k1 G) (Khalil, Nonlinear Systems, 3rd ed., Theorem 7.1);
// Re Z(jw) < 0 exactly where G(jw) lies in the forbidden region, so when the frequency condition fails
// the marker lies in the tested region, and when the verdict passes it lies outside.

export interface StoredRun {
	verdict: 'pass' | 'fail' | 'inconclusive' | null;
	worstPoint: string | null;
	result: Record<string, unknown> | null;
	curves?: {
		points: {
			label: string;
			nyquist: [number, number, number][];
			critical?: { w: number; re: number; im: number } | null;
			popov?: { xy: [number, number][]; line: { k: number; q: number } | null };
		}[];
	} | null;
}

export type PictureRegion = DecisionRegion;

export interface Marker {
	w: number;
	re: number;
	im: number;
	label: string;
}

export interface NyquistPicture {
	curves: { label: string; points: [number, number, number][]; highlight: boolean }[];
	regions: PictureRegion[];
	marker: Marker | null;
}

const fmt = (x: number) => String(Number(x.toPrecision(6)));

/** The tested sector (and the stated one when a margin widened it) of a stored circle-criterion result. */
export function verdictRegions(result: Record<string, unknown> | null): PictureRegion[] {
	const check = result?.check as { type?: string } | undefined;
	if (!result || check?.type !== 'circle') return [];
	const margin = typeof result.requiredMargin === 'number' ? result.requiredMargin : null;
	return decisionRegions(check, result.decidedWith ?? check, margin);
}

function markerOf(run: StoredRun, label: string | undefined): Marker | null {
	const p = run.curves?.points.find((c) => c.label === label);
	const c = p?.critical;
	const w = run.result?.criticalFrequency;
	// The marker is the engine's number: a stored point for another frequency (an older run) is not used.
	if (!c || typeof w !== 'number' || c.w !== w) return null;
	return { ...c, label: `critical frequency ω = ${frequencyText(w)}` };
}

export function nyquistPicture(run: StoredRun): NyquistPicture {
	const pts = run.curves?.points ?? [];
	const worst = run.worstPoint ?? pts[0]?.label;
	const many = pts.length > 1;
	return {
		curves: pts.map((p) => ({
			label: p.label + (many && p.label === worst ? ' (worst)' : ''),
			points: p.nyquist,
			highlight: p.label === worst
		})),
		regions: verdictRegions(run.result),
		marker: markerOf(run, worst)
	};
}

export interface PopovLine {
	role: 'tested' | 'stated';
	k: number;
	q: number;
	label: string;
}

export interface PopovPicture {
	label: string;
	points: [number, number][];
	lines: PopovLine[];
	marker: Marker | null;
}

/**
 * The Popov plot of the worst point with the line of the decided k (x - q y = -1/k, q the multiplier the
 * verdict used, or the best one found when it failed) and the stated k's line beside it when a margin
 * widened the sector.
 */
export function popovPicture(run: StoredRun): PopovPicture | null {
	const pts = run.curves?.points ?? [];
	const worst = pts.find((p) => p.label === run.worstPoint && p.popov) ?? pts.find((p) => p.popov);
	if (!worst?.popov) return null;
	const stated = sectorOf(run.result?.check);
	const tested = sectorOf(run.result?.decidedWith ?? run.result?.check);
	const lines: PopovLine[] = [];
	const line = worst.popov.line;
	if (line && tested) {
		const widened = stated && stated[1] !== tested[1];
		lines.push({
			role: 'tested',
			k: line.k,
			q: line.q,
			label: `tested k = ${fmt(line.k)}${widened ? ` (stated ${fmt(stated[1])} with the required margin)` : ''}`
		});
		if (widened && Number.isFinite(stated[1]) && stated[1] > 0)
			lines.push({ role: 'stated', k: stated[1], q: line.q, label: `stated k = ${fmt(stated[1])}` });
	}
	const m = markerOf(run, worst.label);
	return {
		label: worst.label,
		points: worst.popov.xy,
		lines,
		// On the Popov plane the point is (Re G(jw), w Im G(jw)) (Khalil, 3rd ed., section 7.1).
		marker: m ? { ...m, re: m.re, im: m.w * m.im } : null
	};
}

/** Whether G = re + j im lies in the open forbidden region of the circle criterion (pure geometry). */
export function inForbiddenRegion(g: SectorGeometry, re: number, im: number): boolean {
	if (g.kind === 'half-plane') return re < g.boundary;
	const d = Math.hypot(re - g.centre, im);
	return g.curveMust === 'stay-outside' ? d < g.radius : d > g.radius;
}

/** Whether the Popov point (x, y) lies left of the line x - q y = -1/k, where the curve must not go. */
export function leftOfPopovLine(line: { k: number; q: number }, x: number, y: number): boolean {
	return x - line.q * y < -1 / line.k;
}
