// Lightly damped modes whose Nyquist curve dips into the forbidden region over a band far narrower than a
// 500-point logarithmic grid resolves. The engine must fail them and pass the matching case just outside.
// The expected thresholds are closed forms derived below; the test also shows that the grid is fooled.
import { describe, expect, it } from 'vitest';
import { runCheck, type Model } from '../../../src/lib/stability/index';
import { gJwBig } from './helpers';

const logGrid = (lo: number, hi: number, n: number) =>
	Array.from({ length: n }, (_, i) => lo * (hi / lo) ** (i / (n - 1)));

describe.each([1e-3, 1e-4])('damping ratio %s', (zeta) => {
	const wn = 1.37; // not on the grid, as a real structural mode would not be
	const model: Model = { kind: 'tf', num: [wn * wn], den: [1, 2 * zeta * wn, wn * wn] };
	const grid = logGrid(1e-2, 1e2, 500);

	it('k1 = 0: sector [0, k2] around k2* = 4 zeta (1 + zeta) (own derivation)', () => {
		// G(jw) = 1/(1 - v^2 + 2 j zeta v), v = w/wn. With u = v^2 - 1, Re G = -u/(u^2 + 4 zeta^2 (1 + u)); its
		// minimum is at u = 2 zeta (derivative: 4 zeta^2 - u^2 = 0), where Re G = -1/(4 zeta (1 + zeta)).
		const k2star = 4 * zeta * (1 + zeta);
		const above = runCheck(model, { type: 'circle', sector: [0, k2star * 1.02] });
		const below = runCheck(model, { type: 'circle', sector: [0, k2star * 0.98] });
		expect(above.verdict).toBe('fail');
		expect(below.verdict).toBe('pass');
		expect(above.criticalFrequency!).toBeCloseTo(wn * Math.sqrt(1 + 2 * zeta), 6);
		// The grid sees nothing wrong: its smallest Re G stays above -1/k2 (evaluated at 64 digits).
		const gridMin = Math.min(...grid.map((w) => gJwBig([wn * wn], [1, 2 * zeta * wn, wn * wn], w).re));
		expect(gridMin).toBeGreaterThan(-1 / (k2star * 1.02));
		const ms = runCheck(model, { type: 'max-sector', lower: 0 });
		expect(Number(ms.threshold)).toBeCloseTo(k2star, 9);
		expect(Number(ms.threshold)).toBeLessThanOrEqual(k2star);
	});

	it('k1 < 0 < k2: symmetric sector [-k, k] around k* = 2 zeta sqrt(1 - zeta^2) (own derivation)', () => {
		// The disk of [-k, k] is |G| < 1/k. |G(jw)|^2 = 1/((1 - v^2)^2 + 4 zeta^2 v^2) peaks at
		// v^2 = 1 - 2 zeta^2 with value 1/(4 zeta^2 (1 - zeta^2)).
		const kstar = 2 * zeta * Math.sqrt(1 - zeta * zeta);
		expect(runCheck(model, { type: 'circle', sector: [-kstar * 1.02, kstar * 1.02] }).verdict).toBe('fail');
		expect(runCheck(model, { type: 'circle', sector: [-kstar * 0.98, kstar * 0.98] }).verdict).toBe('pass');
		const gridMax = Math.max(
			...grid.map((w) => {
				const g = gJwBig([wn * wn], [1, 2 * zeta * wn, wn * wn], w);
				return Math.hypot(g.re, g.im);
			})
		);
		expect(gridMax).toBeLessThan(1 / (kstar * 1.02));
	});

	it('0 < k1 < k2: a disk beside the resonance loop, radius just above / below its distance', () => {
		// Near resonance G(jw) ~ 1/(2(1 - v) + 2 j zeta)... traces (approximately) the circle through 0 with
		// centre -j R, R = 1/(4 zeta). A disk centred at c = -2R on the real axis is then about
		// R (sqrt 5 - 1) away. The exact distance is taken from a direct double-precision evaluation of the
		// closed form G = wn^2/(wn^2 - w^2 + 2 j zeta wn w) on 200,000 points across the band plus a wide grid.
		const R = 1 / (4 * zeta);
		const c = -2 * R;
		const g = (w: number) => {
			const re = wn * wn - w * w;
			const im = 2 * zeta * wn * w;
			const d = re * re + im * im;
			return { re: (wn * wn * re) / d, im: (-wn * wn * im) / d };
		};
		let dmin = Infinity;
		const consider = (w: number) => {
			const z = g(w);
			dmin = Math.min(dmin, Math.hypot(z.re - c, z.im));
		};
		for (const w of logGrid(1e-3, 1e3, 20000)) consider(w);
		for (let i = 0; i <= 200000; i++) consider(wn * (1 - 40 * zeta + (80 * zeta * i) / 200000));
		const sector = (r: number): [number, number] => [1 / (2 * R + r), 1 / (2 * R - r)];
		expect(runCheck(model, { type: 'circle', sector: sector(dmin * 1.02) }).verdict).toBe('fail');
		const ok = runCheck(model, { type: 'circle', sector: sector(dmin * 0.98) });
		expect(ok.verdict).toBe('pass');
		expect(ok.numbers.nyquistDistance as number).toBeCloseTo(dmin * 0.02, 4);
		// The 500-point grid again misses the violation.
		const [k1, k2] = sector(dmin * 1.02);
		const cc = -(1 / k1 + 1 / k2) / 2;
		const rr = (1 / k1 - 1 / k2) / 2;
		const gridDist = Math.min(...grid.map((w) => Math.hypot(g(w).re - cc, g(w).im) - rr));
		expect(gridDist).toBeGreaterThan(0);
	});
});
