// Curves for plots: adaptive sampling must show a damping-1e-3 mode as a proper loop, and the geometry
// must match Khalil, 3rd ed., section 7.1 (disk with diameter from -1/k1 to -1/k2; half-plane for k1 = 0).
import { describe, expect, it } from 'vitest';
import {
	nyquistCurve,
	popovCurve,
	reZCurve,
	sectorGeometry,
	type Model
} from '../../../src/lib/stability/index';

describe('present', () => {
	const zeta = 1e-3;
	const wn = 1.37;
	const model: Model = { kind: 'tf', num: [wn * wn], den: [1, 2 * zeta * wn, wn * wn] };

	it('Nyquist curve resolves the resonance loop of a damping-1e-3 mode', () => {
		const pts = nyquistCurve(model);
		// Closed form (light-damping.test.ts): min Re G = -1/(4 zeta (1 + zeta)); peak |G| ~ 1/(2 zeta).
		const minRe = Math.min(...pts.map((p) => p.re));
		expect(minRe).toBeLessThan((-1 / (4 * zeta * (1 + zeta))) * 0.99);
		const maxAbs = Math.max(...pts.map((p) => Math.hypot(p.re, p.im)));
		expect(maxAbs).toBeGreaterThan((1 / (2 * zeta)) * 0.99);
		// Many points inside the half-power band wn (1 +- zeta), so the loop is drawn, not jumped over.
		const inBand = pts.filter((p) => Math.abs(p.w / wn - 1) <= zeta).length;
		expect(inBand).toBeGreaterThan(20);
		// Frequencies increase and every point is finite.
		for (let i = 1; i < pts.length; i++) expect(pts[i].w).toBeGreaterThan(pts[i - 1].w);
	});

	it('sector geometry for the three cases', () => {
		expect(sectorGeometry(0, 4)).toEqual({ kind: 'half-plane', boundary: -0.25, curveMust: 'stay-right' });
		const d = sectorGeometry(0.5, 2);
		expect(d).toMatchObject({ kind: 'disk', curveMust: 'stay-outside', diameter: [-2, -0.5] });
		if (d.kind === 'disk') {
			expect(d.centre).toBeCloseTo(-1.25, 12);
			expect(d.radius).toBeCloseTo(0.75, 12);
		}
		expect(sectorGeometry(-1, 1)).toMatchObject({
			kind: 'disk',
			centre: 0,
			radius: 1,
			curveMust: 'stay-inside'
		});
	});

	it('Popov curve and line for 1/(s+1)^3: the line passes through -1/k with slope 1/q, k close to 8', () => {
		// Reference: reference.test.ts (q = 1 certifies every k < 8).
		const c = popovCurve({ kind: 'tf', num: [1], den: [1, 3, 3, 1] });
		expect(c.line).not.toBeNull();
		expect(c.line!.k).toBeCloseTo(8, 5);
		expect(c.line!.x0).toBeCloseTo(-1 / 8, 6);
		// Every plotted point lies right of the line x - q y = -1/k (to plotting accuracy).
		for (const p of c.points) expect(p.x - c.line!.q * p.y).toBeGreaterThan(c.line!.x0 - 1e-9);
	});

	it('Re Z over frequency dips below zero exactly when the circle check fails', () => {
		const k2 = 4 * zeta * (1 + zeta) * 1.02;
		const r = reZCurve(model, [0, k2]);
		expect(Math.min(...r.map((p) => p.reZ))).toBeLessThan(0);
		const ok = reZCurve(model, [0, k2 / 1.04]);
		expect(Math.min(...ok.map((p) => p.reZ))).toBeGreaterThan(0);
	});
});
