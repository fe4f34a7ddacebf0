import type PDFDocument from 'pdfkit';
import {
	DASHES,
	HATCH_ANGLES,
	STROKES,
	exitsOf,
	innerRect,
	nyquistFrame,
	pathOf,
	popovFrame,
	popovLineGeometry,
	regionLook,
	regionPath,
	usablePopovLines,
	type Frame
} from '../../components/plots/frame';
import type { NyquistPicture, PopovPicture } from '../../components/plots/verdict-picture';
import { frequencyText } from '../../verification/decision';

// The verdict plots of the report as vector graphics. What is drawn comes from the stored run only
// (components/plots/verdict-picture.ts, the same pure reading the web pages use) and where it is drawn
// from the same frame rules (components/plots/frame.ts: equal-aspect frame, focus on the region and −1,
// region paths, curve paths with gaps, exit arrows, Popov line geometry). Only the pen differs: pdfkit
// instead of SVG elements. Hatching is drawn as clipped parallel lines (PDF has no SVG pattern element).

type Doc = InstanceType<typeof PDFDocument>;
export interface PlotFonts {
	regular: string;
}

const dashOf = (d: string): number[] | null => (d ? d.split(/\s+/).map(Number) : null);

function pen(doc: Doc, color: string, width: number, dash: string) {
	doc.strokeColor(color).lineWidth(width);
	const d = dashOf(dash);
	// pdfkit takes a dash array (its typings only declare the single length).
	if (d) (doc.dash as unknown as (l: number[], o: object) => Doc).call(doc, d, {});
	else doc.undash();
}

function axes(doc: Doc, f: Frame, fonts: PlotFonts, xLabel: string, yLabel: string) {
	const r = innerRect(f);
	doc.font(fonts.regular).fontSize(6.5).fillColor('#4b5d63');
	for (const t of f.xTicks) {
		const x = f.x(t);
		doc.save();
		pen(doc, '#d9d4c8', t === 0 ? 1.2 : 0.5, '');
		doc
			.moveTo(x, r.y)
			.lineTo(x, r.y + r.h)
			.stroke();
		doc.restore();
		doc.text(f.fmt(t), x - 20, r.y + r.h + 4, { width: 40, align: 'center', lineBreak: false });
	}
	for (const t of f.yTicks) {
		const y = f.y(t);
		doc.save();
		pen(doc, '#d9d4c8', t === 0 ? 1.2 : 0.5, '');
		doc
			.moveTo(r.x, y)
			.lineTo(r.x + r.w, y)
			.stroke();
		doc.restore();
		doc.text(f.fmt(t), r.x - 44, y - 3, { width: 40, align: 'right', lineBreak: false });
	}
	doc.save();
	pen(doc, '#4b5d63', 0.8, '');
	doc.rect(r.x, r.y, r.w, r.h).stroke();
	doc.restore();
	doc.fontSize(7.5);
	doc.text(xLabel, r.x, f.height - 12, { width: r.w, align: 'center', lineBreak: false });
	doc.save();
	doc.rotate(-90, { origin: [10, r.y + r.h / 2] });
	doc.text(yLabel, 10 - r.h / 2, r.y + r.h / 2 - 4, { width: r.h, align: 'center', lineBreak: false });
	doc.restore();
}

/** Parallel lines at `angle` degrees over the plotting area, to be drawn inside a clip. */
function hatch(doc: Doc, f: Frame, color: string, angle: number) {
	const r = innerRect(f);
	const step = 6;
	const diag = Math.hypot(r.w, r.h);
	doc.save();
	doc.translate(r.x + r.w / 2, r.y + r.h / 2).rotate(angle);
	pen(doc, color, 0.6, '');
	doc.strokeOpacity(0.55);
	for (let s = -diag; s <= diag; s += step) doc.moveTo(-diag, s).lineTo(diag, s);
	doc.stroke();
	doc.restore();
}

function markerAt(doc: Doc, x: number, y: number) {
	doc.save();
	pen(doc, '#172a30', 1.6, '');
	doc.circle(x, y, 5).fillAndStroke('#ffffff', '#172a30');
	doc.circle(x, y, 1.8).fill('#172a30');
	doc.restore();
}

/** A label with a white halo, as the web plots draw theirs (paint-order stroke). */
function haloText(
	doc: Doc,
	fonts: PlotFonts,
	s: string,
	x: number,
	y: number,
	color: string,
	anchor: 'start' | 'end' | 'middle'
) {
	doc.font(fonts.regular).fontSize(7);
	const w = doc.widthOfString(s);
	const left = anchor === 'start' ? x : anchor === 'end' ? x - w : x - w / 2;
	doc.save();
	doc.rect(left - 1.5, y - 7, w + 3, 9).fill('#ffffff');
	doc.restore();
	doc.fillColor(color).text(s, left, y - 6.5, { lineBreak: false });
}

/**
 * Draw a Nyquist picture at (x, y) of the page, width × height points. Returns the caption lines
 * (what each curve, region and mark is), for the report to print under the plot.
 */
export function drawNyquist(
	doc: Doc,
	fonts: PlotFonts,
	pic: NyquistPicture,
	at: { x: number; y: number; width: number; height: number }
): string[] {
	const xy = pic.curves.map((c) => c.points.map((p) => [p[1], p[2]] as [number, number]));
	const { frame: f, far } = nyquistFrame(
		xy,
		pic.regions.map((r) => r.geometry),
		pic.marker,
		true,
		at.width,
		at.height
	);
	const r = innerRect(f);
	const anyHighlight = pic.curves.some((c) => c.highlight);
	doc.save();
	doc.translate(at.x, at.y);
	axes(doc, f, fonts, 'Re G(jω)', 'Im G(jω)');
	doc.save();
	doc.rect(r.x, r.y, r.w, r.h).clip();
	pic.regions.forEach((reg, i) => {
		const p = regionPath(f, reg.geometry);
		const l = regionLook(reg.role, i);
		if (l.hatch >= 0) {
			doc.save();
			doc.path(p.d).clip(p.rule === 'evenodd' ? 'even-odd' : 'non-zero');
			hatch(doc, f, l.stroke, HATCH_ANGLES[l.hatch % HATCH_ANGLES.length]);
			doc.restore();
		}
		doc.save();
		pen(doc, l.stroke, l.width, l.dash);
		doc.path(p.d).stroke();
		doc.restore();
	});
	const order = pic.curves
		.map((_, i) => i)
		.sort((a, b) => Number(pic.curves[a].highlight) - Number(pic.curves[b].highlight));
	for (const i of order) {
		const c = xy[i];
		const strong = !anyHighlight || pic.curves[i].highlight;
		const colour = STROKES[i % STROKES.length];
		doc.save();
		pen(doc, colour, 0.8, '2 3');
		doc.strokeOpacity(strong ? 0.4 : 0.25);
		const mirror = pathOf(
			f,
			c.map(([a, b]) => [a, -b])
		);
		if (mirror) doc.path(mirror).stroke();
		doc.restore();
		doc.save();
		pen(doc, colour, pic.curves[i].highlight ? 2.4 : strong ? 1.6 : 1.1, DASHES[i % DASHES.length]);
		doc.strokeOpacity(strong ? 1 : 0.6);
		const d = pathOf(f, c);
		if (d) doc.path(d).stroke();
		doc.restore();
	}
	if (far) {
		for (const e of xy.flatMap((c) => exitsOf(f, c))) {
			doc.save();
			doc.translate(e.x, e.y).rotate((e.angle * 180) / Math.PI);
			doc.path('M0,-4L9,0L0,4Z').fill('#4b5d63');
			doc.restore();
		}
	}
	doc.restore();
	// The critical point −1.
	const cx = f.x(-1);
	const cy = f.y(0);
	doc.save();
	pen(doc, '#172a30', 1.3, '');
	doc
		.moveTo(cx - 5, cy)
		.lineTo(cx + 5, cy)
		.moveTo(cx, cy - 5)
		.lineTo(cx, cy + 5)
		.stroke();
	doc.restore();
	haloText(doc, fonts, '−1', cx + 4, cy - 6, '#172a30', 'start');
	if (pic.marker) {
		const mx = f.x(pic.marker.re);
		const my = f.y(pic.marker.im);
		markerAt(doc, mx, my);
		const right = mx > r.x + r.w - 150;
		haloText(
			doc,
			fonts,
			`ω = ${frequencyText(pic.marker.w)}`,
			mx + (right ? -8 : 8),
			my + (my < r.y + 20 ? 14 : -8),
			'#172a30',
			right ? 'end' : 'start'
		);
	}
	doc.restore();
	return captionLines(pic, far);
}

function captionLines(pic: NyquistPicture, far: boolean): string[] {
	return [
		...pic.curves.map(
			(c, i) => `Curve ${i + 1}${DASHES[i % DASHES.length] ? ' (dashed)' : ' (solid)'}: ${c.label}`
		),
		...pic.regions.map((reg) =>
			reg.role === 'stated'
				? `Dashed outline: ${reg.label}.`
				: `Hatched, red: where the curve must not go for the ${reg.label}.`
		),
		...(pic.marker ? [`Ringed point: G(jω) at the ${pic.marker.label}.`] : []),
		'Dotted: negative frequencies (mirror image).',
		...(far
			? ['The curve continues beyond the frame (arrows); the axes are chosen around the region and −1.']
			: [])
	];
}

/** The caption drawNyquist would return, without drawing (the report's layout pass). */
export function nyquistCaption(pic: NyquistPicture, size: { width: number; height: number }): string[] {
	const xy = pic.curves.map((c) => c.points.map((p) => [p[1], p[2]] as [number, number]));
	const { far } = nyquistFrame(
		xy,
		pic.regions.map((r) => r.geometry),
		pic.marker,
		true,
		size.width,
		size.height
	);
	return captionLines(pic, far);
}

/** Draw a Popov picture at (x, y); returns its caption lines. */
export function drawPopov(
	doc: Doc,
	fonts: PlotFonts,
	pic: PopovPicture,
	at: { x: number; y: number; width: number; height: number }
): string[] {
	const usable = usablePopovLines(pic.lines);
	const f = popovFrame(pic.points, usable, pic.marker, at.width, at.height);
	const r = innerRect(f);
	const fmt = (v: number) => String(Number(v.toPrecision(4)));
	doc.save();
	doc.translate(at.x, at.y);
	axes(doc, f, fonts, 'Re G(jω)', 'ω · Im G(jω)');
	doc.save();
	doc.rect(r.x, r.y, r.w, r.h).clip();
	const drawn = usable.map((l) => ({ ...l, ...popovLineGeometry(f, l) }));
	for (const l of drawn) {
		if (l.role === 'tested') {
			doc.save();
			doc.path(l.forbidden).clip();
			hatch(doc, f, '#a12a22', 45);
			doc.restore();
		}
		doc.save();
		pen(doc, l.role === 'tested' ? '#a12a22' : '#172a30', 1.4, l.role === 'tested' ? '' : '6 3');
		doc.moveTo(l.a.x, l.a.y).lineTo(l.b.x, l.b.y).stroke();
		doc.restore();
	}
	doc.save();
	pen(doc, '#12343b', 1.8, '');
	const d = pathOf(f, pic.points);
	if (d) doc.path(d).stroke();
	doc.restore();
	doc.restore();
	drawn.forEach((l, i) => {
		const x = Math.min(r.x + r.w - 4, Math.max(r.x + 4, Math.max(l.a.x, l.b.x) + 6));
		const anchor = Math.max(l.a.x, l.b.x) + 90 > r.x + r.w ? 'end' : 'start';
		haloText(
			doc,
			fonts,
			`${l.role} k = ${fmt(l.k)}`,
			x,
			r.y + 12 + 12 * i,
			l.role === 'tested' ? '#a12a22' : '#172a30',
			anchor
		);
	});
	if (pic.marker) {
		const mx = f.x(pic.marker.re);
		const my = f.y(pic.marker.im);
		markerAt(doc, mx, my);
		haloText(doc, fonts, `ω = ${frequencyText(pic.marker.w)}`, mx + 8, my - 8, '#172a30', 'start');
	}
	doc.restore();
	return popovCaption(pic);
}

/** The caption of a Popov picture (drawPopov's, without drawing). */
export function popovCaption(pic: PopovPicture): string[] {
	const usable = usablePopovLines(pic.lines);
	const fmt = (v: number) => String(Number(v.toPrecision(4)));
	return [
		`Solid: ${pic.label}.`,
		...(usable.length
			? usable.map(
					(l) =>
						`${l.role === 'tested' ? 'Solid red' : 'Dashed'} line: ${l.label}, through −1/k = ${fmt(-1 / l.k)}, slope 1/q with q = ${fmt(l.q)} s${l.role === 'tested' ? '; hatched: where the curve must not go' : ''}.`
				)
			: ['No proving line was found.']),
		...(pic.marker ? [`Ringed point: (Re G, ω Im G) at the ${pic.marker.label}.`] : [])
	];
}
