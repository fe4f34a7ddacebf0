import { describe, expect, it } from 'vitest';
import { focusedBox, regionBox } from '../../../src/lib/components/plots/frame';
import { nyquistCurve, sectorGeometry } from '../../../src/lib/stability/index';

// The axes of a decision plot: around the forbidden region and -1 when the curve runs far beyond them
// (issue 13: an integrator plant's ±100 axes made the region near -1 unreadable), the whole curve otherwise.
const xyOf = (model: Parameters<typeof nyquistCurve>[0]) =>
	nyquistCurve(model, { maxPoints: 800 }).flatMap((p) => [
		[p.re, p.im] as [number, number],
		[p.re, -p.im] as [number, number]
	]);
const focus = (k1: number, k2: number) => [
	regionBox(sectorGeometry(k1, k2)),
	{ x0: -1, x1: -1, y0: 0, y1: 0 }
];

describe('focusedBox', () => {
	it('an integrator 2/(s(s+1)): axes around the region and -1, with the far part flagged', () => {
		// G(jw) = -2/(1 + w^2) - 2j/(w(1 + w^2)): Re G -> -2 and Im G -> -infinity as w -> 0 (by hand).
		const xy = xyOf({ kind: 'tf', num: [2], den: [1, 1, 0] });
		expect(Math.max(...xy.map(([, b]) => Math.abs(b)))).toBeGreaterThan(100);
		const { box, far } = focusedBox(xy, focus(0.4, 2.16));
		expect(far).toBe(true);
		expect(box.x0).toBeLessThanOrEqual(-2.5);
		expect(box.x1).toBeGreaterThanOrEqual(0);
		expect(Math.max(box.x1 - box.x0, box.y1 - box.y0)).toBeLessThan(10);
	});

	it('a stable lag chain: the whole curve, nothing flagged', () => {
		// 72/((s+1.2)(s+4)(s+10)) starts at 72/48 = 1.5 on the real axis (by hand).
		const xy = xyOf({ kind: 'tf', num: [72], den: [1, 15.2, 56.8, 48] });
		const { box, far } = focusedBox(xy, focus(0.4, 2.16));
		expect(far).toBe(false);
		for (const [a, b] of xy) {
			expect(a).toBeGreaterThanOrEqual(box.x0);
			expect(a).toBeLessThanOrEqual(box.x1);
			expect(b).toBeGreaterThanOrEqual(box.y0);
			expect(b).toBeLessThanOrEqual(box.y1);
		}
	});
});
