// Curves for plots. Plots illustrate; the algebra in checks/ decides (Sturm / root-isolation decisions, never a grid).
// Frequencies are chosen adaptively: a log-spaced base grid spanning the pole and zero magnitudes, dense
// clusters around every lightly damped pole and zero (spacing proportional to the damping, since a mode
// s = -sigma + j wd has a resonance band of half-width about sigma around wd), points around the critical
// frequency, then bisection of every step whose chord on the curve is long compared to the curve there.
import { degree, isZero } from './exact';
import { circleCore, diskOf } from './checks/circle';
import { popovCore } from './checks/popov';
import { divC, evalJw, toFloatCommon } from './fpoly';
import { type Plant, preparePlant } from './model';
import { polyRoots } from './roots';
import { type Model, parseModel } from './schema';

export interface CurvePoint {
	w: number;
	re: number;
	im: number;
}

export interface CurveOptions {
	/** Most points returned (default 3000). */
	maxPoints?: number;
	/** Extra frequencies (rad/s) to refine around, e.g. a critical frequency. */
	focus?: number[];
	wMin?: number;
	wMax?: number;
}

function plantOf(model: Model): Plant {
	return preparePlant(parseModel(model));
}

/** Base frequencies in scaled units (w' = w / w0). */
function baseFrequencies(plant: Plant, opts: CurveOptions): number[] {
	const feats: { wd: number; sigma: number }[] = [];
	const [Nf, Df] = toFloatCommon([plant.Ns, plant.Ds]);
	for (const r of [...polyRoots(Df), ...(Nf.length > 1 ? polyRoots(Nf) : [])]) {
		const mag = Math.hypot(r.re, r.im);
		if (mag > 0) feats.push({ wd: Math.abs(r.im), sigma: Math.abs(r.re) });
	}
	const mags = feats.map((f) => Math.hypot(f.wd, f.sigma)).filter((m) => m > 0);
	let lo = mags.length ? Math.min(...mags) / 100 : 1e-2;
	let hi = mags.length ? Math.max(...mags) * 100 : 1e2;
	if (opts.wMin) lo = opts.wMin / plant.w0;
	if (opts.wMax) hi = opts.wMax / plant.w0;
	const ws: number[] = [];
	const nBase = 240;
	for (let i = 0; i <= nBase; i++) ws.push(lo * (hi / lo) ** (i / nBase));
	const around = (wc: number, width: number) => {
		for (const t of [
			-30, -10, -5, -3, -2, -1.5, -1, -0.7, -0.5, -0.3, -0.2, -0.1, -0.05, 0, 0.05, 0.1, 0.2, 0.3, 0.5, 0.7,
			1, 1.5, 2, 3, 5, 10, 30
		]) {
			const w = wc + t * width;
			if (w > 0) ws.push(w);
		}
	};
	for (const f of feats) if (f.wd > 0 && f.sigma < 0.5 * f.wd) around(f.wd, Math.max(f.sigma, 1e-12 * f.wd));
	for (const w of opts.focus ?? []) if (w > 0) around(w / plant.w0, (w / plant.w0) * 1e-3);
	return ws
		.filter((w) => w >= lo && w <= hi)
		.sort((a, b) => a - b)
		.filter((w, i, a) => i === 0 || w > a[i - 1]);
}

function refine(ws: number[], f: (w: number) => { re: number; im: number }, maxPoints: number): CurvePoint[] {
	let pts = ws.map((w) => ({ w, ...f(w) }));
	for (let pass = 0; pass < 14 && pts.length < maxPoints; pass++) {
		const next: typeof pts = [pts[0]];
		let added = 0;
		for (let i = 1; i < pts.length; i++) {
			const a = pts[i - 1];
			const b = pts[i];
			const chord = Math.hypot(b.re - a.re, b.im - a.im);
			const scale = Math.max(Math.hypot(a.re, a.im), Math.hypot(b.re, b.im), 1e-300);
			if (chord > 0.03 * scale && pts.length + added < maxPoints && b.w / a.w > 1 + 1e-12) {
				const wm = Math.sqrt(a.w * b.w);
				next.push({ w: wm, ...f(wm) });
				added++;
			}
			next.push(b);
		}
		pts = next;
		if (added === 0) break;
	}
	return pts;
}

function gEvaluator(plant: Plant): (w: number) => { re: number; im: number } {
	const [Nf, Df] = toFloatCommon([plant.Ns, plant.Ds]);
	return (w) => (isZero(plant.Ns) ? { re: 0, im: 0 } : divC(evalJw(Nf, w), evalJw(Df, w)));
}

/** Nyquist curve G(jw) for w > 0, adaptively sampled. w in rad/s. */
export function nyquistCurve(model: Model, opts: CurveOptions = {}): CurvePoint[] {
	const plant = plantOf(model);
	const g = gEvaluator(plant);
	const pts = refine(baseFrequencies(plant, opts), g, opts.maxPoints ?? 3000);
	return pts
		.filter((p) => Number.isFinite(p.re) && Number.isFinite(p.im))
		.map((p) => ({ ...p, w: p.w * plant.w0 }));
}

/**
 * G(jw) at one frequency (rad/s), evaluated like the curves (scaled frequency, the plant's exact
 * polynomials rounded once to doubles). Plots use it to place a marker exactly at a frequency the engine
 * reported, rather than at the nearest sample of a curve.
 */
export function frequencyResponse(model: Model, w: number): CurvePoint {
	const plant = plantOf(model);
	const g = gEvaluator(plant)(w / plant.w0);
	return { w, re: g.re, im: g.im };
}

export type SectorGeometry =
	| {
			kind: 'disk';
			centre: number;
			radius: number;
			curveMust: 'stay-outside' | 'stay-inside';
			diameter: [number, number];
	  }
	| { kind: 'half-plane'; boundary: number; curveMust: 'stay-right' | 'stay-left' };

/**
 * Forbidden region of the circle criterion (Khalil, 3rd ed., section 7.1) for the sector [k1, k2], all
 * cases: outside the disk for k1 k2 > 0 (for k1 < k2 < 0 the disk lies on the positive real axis), inside
 * it for k1 < 0 < k2, right of -1/k2 for k1 = 0, left of -1/k1 for k2 = 0 (checks/circle.ts diskOf).
 */
export function sectorGeometry(k1: number, k2: number): SectorGeometry {
	const d = diskOf(k1, k2);
	if (d.kind === 'half-plane')
		return {
			kind: 'half-plane',
			boundary: d.boundary,
			curveMust: d.side === 'right' ? 'stay-right' : 'stay-left'
		};
	const a = -1 / k1;
	const b = k2 === Infinity ? 0 : -1 / k2;
	return {
		kind: 'disk',
		centre: d.centre,
		radius: d.radius,
		curveMust: d.side === 'outside' ? 'stay-outside' : 'stay-inside',
		diameter: [Math.min(a, b), Math.max(a, b)]
	};
}

/** Signed distance of the point re + j im from the region's boundary: positive on the allowed side. */
export function regionMargin(
	g:
		| { kind: 'disk'; centre: number; radius: number; curveMust: 'stay-outside' | 'stay-inside' }
		| { kind: 'half-plane'; boundary: number; curveMust: 'stay-right' | 'stay-left' },
	re: number,
	im: number
): number {
	if (g.kind === 'half-plane') return g.curveMust === 'stay-right' ? re - g.boundary : g.boundary - re;
	const d = Math.hypot(re - g.centre, im);
	return g.curveMust === 'stay-outside' ? d - g.radius : g.radius - d;
}

const fmt = (x: number) => (Number.isFinite(x) ? Number(x.toPrecision(6)).toString() : String(x));

/** Where the circle criterion needs the Nyquist curve of G, in words (the geometry of sectorGeometry). */
export function regionWords(k1: number, k2: number): string {
	const g = sectorGeometry(k1, k2);
	if (g.kind === 'half-plane')
		return `the half-plane Re G ${g.curveMust === 'stay-right' ? '>' : '<'} ${fmt(g.boundary)}`;
	const disk = `the disk centred at ${fmt(g.centre)} with radius ${fmt(g.radius)} (diameter [${fmt(g.diameter[0])}, ${fmt(g.diameter[1])}] on the real axis)`;
	if (g.curveMust === 'stay-inside') return `the inside of ${disk}`;
	const mirrored =
		k2 < 0
			? ', which lies on the positive real axis because both bounds are negative (the usual disk for -G and the sector [-k2, -k1], mirrored through the origin)'
			: '';
	return `the outside of ${disk}${mirrored}, encircling it counter-clockwise once for each pole of G in the open right half-plane`;
}

export interface PopovCurve {
	points: { w: number; x: number; y: number }[];
	/** Line x - q y = -1/k through (-1/k, 0) with slope 1/q (vertical when q = 0). */
	line: { k: number; q: number; x0: number; slope: number | 'Infinity' } | null;
}

/**
 * Popov plot (Re G(jw), w Im G(jw)) (Khalil, 3rd ed., section 7.1, after Theorem 7.3) with the proving
 * line. Without opts.k the line is drawn for the largest k the Popov search proves.
 */
export function popovCurve(model: Model, opts: CurveOptions & { k?: number; q?: number } = {}): PopovCurve {
	const plant = plantOf(model);
	const g = gEvaluator(plant);
	const pts = refine(baseFrequencies(plant, opts), g, opts.maxPoints ?? 3000);
	const points = pts
		.map((p) => ({ w: p.w * plant.w0, x: p.re, y: p.w * plant.w0 * p.im }))
		.filter((p) => Number.isFinite(p.x) && Number.isFinite(p.y));
	let line: PopovCurve['line'] = null;
	if (degree(plant.Ns) < plant.order) {
		const core = popovCore(plant);
		if (core.hurwitz) {
			const q = opts.q ?? core.qScaled / plant.w0;
			const k = opts.k ?? core.thresholdCertified ?? core.threshold;
			if (Number.isFinite(k) && k > 0) line = { k, q, x0: -1 / k, slope: q === 0 ? 'Infinity' : 1 / q };
		}
	}
	return { points, line };
}

/** Re Z(jw) for Z = (1 + k2 G)/(1 + k1 G) (G/(1 + k1 G) for k2 = infinity), refined near its minimum. */
export function reZCurve(
	model: Model,
	sector: [number, number],
	opts: CurveOptions = {}
): { w: number; reZ: number }[] {
	const plant = plantOf(model);
	const [k1, k2] = sector;
	const g = gEvaluator(plant);
	const core = circleCore(plant, k1, k2);
	const focus = [...(opts.focus ?? [])];
	if (core.argminX !== undefined && core.argminX !== null) focus.push(Math.sqrt(core.argminX) * plant.w0);
	const z = (w: number) => {
		const G = g(w);
		const num = k2 === Infinity ? G : { re: 1 + k2 * G.re, im: k2 * G.im };
		return divC(num, { re: 1 + k1 * G.re, im: k1 * G.im });
	};
	const pts = refine(baseFrequencies(plant, { ...opts, focus }), z, opts.maxPoints ?? 3000);
	return pts.filter((p) => Number.isFinite(p.re)).map((p) => ({ w: p.w * plant.w0, reZ: p.re }));
}
