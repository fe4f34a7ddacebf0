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
import { type Model, isDiscrete, parseModel } from './schema';
import { discreteModel } from './discrete-model';
import { exactTransferFunction } from './model';

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

/**
 * A discrete model's G(e^(j w T)) as a function of w in rad/s (0 < w <= pi / T): Horner in complex
 * arithmetic on the exact polynomials rounded once. For plots only.
 */
function discreteEvaluator(model: Model): {
	g: (w: number) => { re: number; im: number };
	T: number;
	angles: number[];
} {
	const dm = discreteModel(model).model;
	const tf = exactTransferFunction(dm);
	const [Nf, Df] = toFloatCommon([tf.N, tf.D]);
	const T = dm.sampleTime!;
	const at = (p: number[], th: number) => {
		let re = 0;
		let im = 0;
		const c = Math.cos(th);
		const sn = Math.sin(th);
		for (let i = p.length - 1; i >= 0; i--) [re, im] = [re * c - im * sn + p[i], re * sn + im * c];
		return { re, im };
	};
	// Pole angles: lightly damped poles near the unit circle give narrow peaks there.
	const angles = polyRoots(Df)
		.filter((r) => r.im >= 0)
		.map((r) => Math.atan2(r.im, r.re));
	return { g: (w) => divC(at(Nf, w * T), at(Df, w * T)), T, angles };
}

function discreteCurve(
	model: Model,
	opts: CurveOptions,
	f: (g: { re: number; im: number }) => { re: number; im: number }
): CurvePoint[] {
	const { g, T, angles } = discreteEvaluator(model);
	const ws: number[] = [];
	for (let i = 1; i <= 400; i++) ws.push((Math.PI * i) / 400 / T);
	for (const a of angles)
		for (const t of [-1e-2, -3e-3, -1e-3, -3e-4, -1e-4, 0, 1e-4, 3e-4, 1e-3, 3e-3, 1e-2]) {
			const th = a + t;
			if (th > 0 && th <= Math.PI) ws.push(th / T);
		}
	for (const w of opts.focus ?? []) if (w > 0 && w * T <= Math.PI) ws.push(w);
	const sorted = ws.sort((a, b) => a - b).filter((w, i, a) => i === 0 || w > a[i - 1]);
	return refine(sorted, (w) => f(g(w)), opts.maxPoints ?? 3000).filter(
		(p) => Number.isFinite(p.re) && Number.isFinite(p.im)
	);
}

/**
 * Nyquist curve G(jw) for w > 0, adaptively sampled. w in rad/s. For a discrete model, the curve
 * G(e^(j w T)) for 0 < w <= pi / T (theta = w T in (0, pi]).
 */
export function nyquistCurve(model: Model, opts: CurveOptions = {}): CurvePoint[] {
	if (isDiscrete(parseModel(model))) return discreteCurve(parseModel(model), opts, (g) => g);
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
	if (isDiscrete(parseModel(model))) return { w, ...discreteEvaluator(parseModel(model)).g(w) };
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
	const [k1, k2] = sector;
	const zOf = (G: { re: number; im: number }) =>
		divC(k2 === Infinity ? G : { re: 1 + k2 * G.re, im: k2 * G.im }, { re: 1 + k1 * G.re, im: k1 * G.im });
	if (isDiscrete(parseModel(model)))
		return discreteCurve(parseModel(model), opts, zOf).map((p) => ({ w: p.w, reZ: p.re }));
	const plant = plantOf(model);
	const g = gEvaluator(plant);
	const core = circleCore(plant, k1, k2);
	const focus = [...(opts.focus ?? [])];
	if (core.argminX !== undefined && core.argminX !== null) focus.push(Math.sqrt(core.argminX) * plant.w0);
	const pts = refine(baseFrequencies(plant, { ...opts, focus }), (w) => zOf(g(w)), opts.maxPoints ?? 3000);
	return pts.filter((p) => Number.isFinite(p.re)).map((p) => ({ w: p.w * plant.w0, reZ: p.re }));
}
