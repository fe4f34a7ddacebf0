import { scaleLinear, type ScaleLinear } from 'd3-scale';
import type { sectorGeometry } from '../../stability/index';

// Shared geometry of the complex-plane plots: an equal-aspect frame (one unit is as long on both axes,
// so circles stay circles) with ticks from d3-scale.

export interface Frame {
	width: number;
	height: number;
	pad: { left: number; right: number; top: number; bottom: number };
	x: ScaleLinear<number, number>;
	y: ScaleLinear<number, number>;
	xTicks: number[];
	yTicks: number[];
	fmt: (v: number) => string;
}

export interface Box {
	x0: number;
	x1: number;
	y0: number;
	y1: number;
}

/** A box around the points that ignores far excursions (near a pole on the axis the curve runs off to infinity). */
export function robustBox(xy: [number, number][], extra: Box[] = []): Box {
	const finite = xy.filter(([a, b]) => Number.isFinite(a) && Number.isFinite(b));
	const mags = finite.map(([a, b]) => Math.hypot(a, b)).sort((a, b) => a - b);
	const cap = mags.length ? Math.max(mags[Math.floor(0.95 * (mags.length - 1))] * 1.6, 1e-9) : 1;
	let box: Box = { x0: Infinity, x1: -Infinity, y0: Infinity, y1: -Infinity };
	for (const [a, b] of finite) {
		if (Math.hypot(a, b) > cap) continue;
		box = {
			x0: Math.min(box.x0, a),
			x1: Math.max(box.x1, a),
			y0: Math.min(box.y0, b),
			y1: Math.max(box.y1, b)
		};
	}
	for (const e of extra)
		box = {
			x0: Math.min(box.x0, e.x0),
			x1: Math.max(box.x1, e.x1),
			y0: Math.min(box.y0, e.y0),
			y1: Math.max(box.y1, e.y1)
		};
	if (!Number.isFinite(box.x0)) box = { x0: -1, x1: 1, y0: -1, y1: 1 };
	return box;
}

export function makeFrame(box: Box, width = 520, height = 380, equalAspect = true): Frame {
	const pad = { left: 52, right: 14, top: 12, bottom: 36 };
	const iw = width - pad.left - pad.right;
	const ih = height - pad.top - pad.bottom;
	let { x0, x1, y0, y1 } = box;
	// Always show the origin and leave a margin.
	x0 = Math.min(x0, 0);
	x1 = Math.max(x1, 0);
	y0 = Math.min(y0, 0);
	y1 = Math.max(y1, 0);
	let dx = x1 - x0 || 1;
	let dy = y1 - y0 || 1;
	x0 -= dx * 0.06;
	x1 += dx * 0.06;
	y0 -= dy * 0.06;
	y1 += dy * 0.06;
	dx = x1 - x0;
	dy = y1 - y0;
	if (equalAspect) {
		const unit = Math.max(dx / iw, dy / ih);
		const cx = (x0 + x1) / 2;
		const cy = (y0 + y1) / 2;
		x0 = cx - (unit * iw) / 2;
		x1 = cx + (unit * iw) / 2;
		y0 = cy - (unit * ih) / 2;
		y1 = cy + (unit * ih) / 2;
	}
	const x = scaleLinear()
		.domain([x0, x1])
		.range([pad.left, width - pad.right]);
	const y = scaleLinear()
		.domain([y0, y1])
		.range([height - pad.bottom, pad.top]);
	const xTicks = x.ticks(7);
	const yTicks = y.ticks(6);
	const f = x.tickFormat(7);
	const g = y.tickFormat(6);
	return { width, height, pad, x, y, xTicks, yTicks, fmt: (v) => (xTicks.includes(v) ? f(v) : g(v)) };
}

/** SVG path through the points; a gap wherever a point is not finite or jumps far outside the frame. */
export function pathOf(frame: Frame, xy: [number, number][]): string {
	const [X0, X1] = frame.x.domain();
	const [Y0, Y1] = frame.y.domain();
	const far = 50 * Math.max(X1 - X0, Y1 - Y0);
	let d = '';
	let pen = false;
	for (const [a, b] of xy) {
		if (!Number.isFinite(a) || !Number.isFinite(b) || Math.abs(a) > far || Math.abs(b) > far) {
			pen = false;
			continue;
		}
		const px = frame.x(a).toFixed(1);
		const py = frame.y(b).toFixed(1);
		d += `${pen ? 'L' : 'M'}${px},${py}`;
		pen = true;
	}
	return d;
}

/** Dash patterns so overlaid curves differ by more than colour. */
export const DASHES = ['', '7 4', '2 3', '10 3 2 3', '4 4'];
export const STROKES = ['#12343b', '#b7791f', '#6b4fa0', '#1f6f43', '#a12a22'];

/** The plotting area inside the frame's padding. */
export function innerRect(frame: Frame): { x: number; y: number; w: number; h: number } {
	return {
		x: frame.pad.left,
		y: frame.pad.top,
		w: frame.width - frame.pad.left - frame.pad.right,
		h: frame.height - frame.pad.top - frame.pad.bottom
	};
}

/** The forbidden region of a sector on the Nyquist plane (a disk, its outside, or a half-plane). */
export type SectorGeometry = ReturnType<typeof sectorGeometry>;

/** What of the plane the region needs to show: the disk, or a strip around the half-plane's edge. */
export function regionBox(g: SectorGeometry): Box {
	if (g.kind === 'disk')
		return { x0: g.centre - g.radius, x1: g.centre + g.radius, y0: -g.radius, y1: g.radius };
	return { x0: g.boundary - 0.2, x1: g.boundary + 0.2, y0: -0.2, y1: 0.2 };
}

/** SVG path of the forbidden region, clipped to the plotting area, with the fill rule it needs. */
export function regionPath(frame: Frame, g: SectorGeometry): { d: string; rule: 'nonzero' | 'evenodd' } {
	const { x, y, w, h } = innerRect(frame);
	if (g.kind === 'half-plane') {
		// Forbidden: left of the boundary (stay-right) or right of it (stay-left, a sector [k1, 0]).
		const bx = Math.max(x, Math.min(x + w, frame.x(g.boundary)));
		const edge = g.curveMust === 'stay-left' ? x + w : x;
		return { d: `M${edge},${y}H${bx}V${y + h}H${edge}Z`, rule: 'nonzero' };
	}
	const cx = frame.x(g.centre);
	const cy = frame.y(0);
	const r = Math.abs(frame.x(g.centre + g.radius) - cx);
	const circle = `M${cx - r},${cy}a${r},${r} 0 1,0 ${2 * r},0a${r},${r} 0 1,0 ${-2 * r},0Z`;
	if (g.curveMust === 'stay-outside') return { d: circle, rule: 'nonzero' };
	return { d: `M${x},${y}H${x + w}V${y + h}H${x}Z` + circle, rule: 'evenodd' };
}

const unionBox = (boxes: Box[]): Box =>
	boxes.reduce(
		(b, e) => ({
			x0: Math.min(b.x0, e.x0),
			x1: Math.max(b.x1, e.x1),
			y0: Math.min(b.y0, e.y0),
			y1: Math.max(b.y1, e.y1)
		}),
		{ x0: Infinity, x1: -Infinity, y0: Infinity, y1: -Infinity }
	);

/**
 * The box a decision plot shows. The part of the plane that decides is around the forbidden region,
 * the critical point and the marker (`focus`); when the curve spans far more than that (an integrator's
 * curve runs off to infinity along an asymptote) the axes are chosen around the focus, with room for
 * the curve nearby, and `far` says that the curve continues outside the frame.
 */
export function focusedBox(xy: [number, number][], focus: Box[]): { box: Box; far: boolean } {
	const f = unionBox([...focus, { x0: 0, x1: 0, y0: 0, y1: 0 }]);
	const full = robustBox(xy, focus);
	const span = (b: Box) => Math.max(b.x1 - b.x0, b.y1 - b.y0);
	const sf = Math.max(span(f), 1e-9);
	const finite = xy.filter(([a, b]) => Number.isFinite(a) && Number.isFinite(b));
	const outsideFull = finite.some(([a, b]) => a < full.x0 || a > full.x1 || b < full.y0 || b > full.y1);
	if (span(full) <= 6 * sf) return { box: full, far: outsideFull };
	// Keep the curve within about twice the focus size around it.
	const m = sf;
	const zoom = { x0: f.x0 - m, x1: f.x1 + m, y0: f.y0 - m, y1: f.y1 + m };
	const near = finite.filter(([a, b]) => a >= zoom.x0 && a <= zoom.x1 && b >= zoom.y0 && b <= zoom.y1);
	return { box: unionBox([f, ...near.map(([a, b]) => ({ x0: a, x1: a, y0: b, y1: b }))]), far: true };
}

/** Where a curve leaves the frame's plotting area: an arrow position on the edge and its direction (radians). */
export function exitsOf(frame: Frame, xy: [number, number][]): { x: number; y: number; angle: number }[] {
	const [X0, X1] = frame.x.domain();
	const [Y0, Y1] = frame.y.domain();
	const inside = ([a, b]: [number, number]) =>
		Number.isFinite(a) && Number.isFinite(b) && a >= X0 && a <= X1 && b >= Y0 && b <= Y1;
	const out: { x: number; y: number; angle: number }[] = [];
	const r = innerRect(frame);
	for (let i = 1; i < xy.length; i++) {
		const a = xy[i - 1];
		const b = xy[i];
		const ia = inside(a);
		const ib = inside(b);
		if (ia === ib) continue;
		const [p, q] = ia ? [a, b] : [b, a];
		if (!Number.isFinite(q[0]) || !Number.isFinite(q[1])) continue;
		const px = frame.x(p[0]);
		const py = frame.y(p[1]);
		const angle = Math.atan2(frame.y(q[1]) - py, frame.x(q[0]) - px);
		out.push({
			x: Math.max(r.x + 6, Math.min(r.x + r.w - 6, px)),
			y: Math.max(r.y + 6, Math.min(r.y + r.h - 6, py)),
			angle
		});
	}
	return out.slice(0, 8);
}

// The drawing rules of the verdict plots, shared by the web components (NyquistPlot, PopovPlot) and the
// data package's PDF report (src/lib/server/packages/pdf-plots.ts), so both show the same picture.

/** Region outlines: the tested region red and solid; the stated one dark and dashed; several
 * requirements' regions (the publish preview) each their own colour, dash and hatch angle. */
export const REGION_STROKES = ['#a12a22', '#1d4f8c', '#8a5a00', '#5b3a8c', '#1f6f43'];
export const HATCH_ANGLES = [45, -45, 90, 22, -68];
export function regionLook(
	role: 'tested' | 'stated' | undefined,
	i: number
): { stroke: string; dash: string; hatch: number; width: number } {
	if (role === 'tested') return { stroke: REGION_STROKES[0], dash: '', hatch: 0, width: 1.6 };
	if (role === 'stated') return { stroke: '#172a30', dash: '6 3', hatch: -1, width: 1.4 };
	return {
		stroke: REGION_STROKES[i % REGION_STROKES.length],
		dash: DASHES[i % DASHES.length],
		hatch: i,
		width: 1.5
	};
}

/**
 * The frame of a Nyquist plot: the curves (mirrored for negative frequencies), the regions, the
 * critical point −1 and the marker decide what is shown (focusedBox); `far` says a curve leaves it.
 */
export function nyquistFrame(
	curves: [number, number][][],
	regions: SectorGeometry[],
	marker: { re: number; im: number } | null,
	mirror: boolean,
	width: number,
	height: number
): { frame: Frame; far: boolean } {
	const all: [number, number][] = [];
	for (const c of curves) for (const [a, b] of c) all.push([a, b], mirror ? [a, -b] : [a, b]);
	const focus = [
		...regions.map(regionBox),
		{ x0: -1, x1: -1, y0: 0, y1: 0 },
		...(marker ? [{ x0: marker.re, x1: marker.re, y0: marker.im, y1: marker.im }] : [])
	];
	const { box, far } = focusedBox(all, focus);
	return { frame: makeFrame(box, width, height), far };
}

/** The frame of a Popov plot: the curve, each line over the curve's height, and the marker. */
export function popovFrame(
	points: [number, number][],
	lines: { k: number; q: number }[],
	marker: { re: number; im: number } | null,
	width: number,
	height: number
): Frame {
	const ys = points.map((p) => p[1]).filter(Number.isFinite);
	const lo = Math.min(0, ...ys);
	const hi = Math.max(0, ...ys);
	return makeFrame(
		robustBox(points, [
			...lines.map((l) => {
				const xs = [-1 / l.k + l.q * lo, -1 / l.k + l.q * hi, -1 / l.k];
				return { x0: Math.min(...xs), x1: Math.max(...xs), y0: 0, y1: 0 };
			}),
			...(marker ? [{ x0: marker.re, x1: marker.re, y0: marker.im, y1: marker.im }] : [])
		]),
		width,
		height,
		false
	);
}

/**
 * A Popov line x − q y = −1/k in pixels, as two points at the frame's top and bottom (vertical when
 * q = 0), and the polygon of its forbidden (left) side (Khalil, Nonlinear Systems, 3rd ed., section 7.1).
 */
export function popovLineGeometry(frame: Frame, l: { k: number; q: number }) {
	const [y0, y1] = frame.y.domain();
	const xAt = (y: number) => -1 / l.k + l.q * y;
	const a = { x: frame.x(xAt(y0)), y: frame.y(y0) };
	const b = { x: frame.x(xAt(y1)), y: frame.y(y1) };
	const far = innerRect(frame).x - 2000;
	return { a, b, forbidden: `M${far},${a.y}L${a.x},${a.y}L${b.x},${b.y}L${far},${b.y}Z` };
}

/** Sector lines with a usable k (finite, positive) are drawn; others have no line. */
export const usablePopovLines = <T extends { k: number }>(lines: T[]): T[] =>
	lines.filter((l) => Number.isFinite(l.k) && l.k > 0);
