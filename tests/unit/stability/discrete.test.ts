// Discrete-time loops (issue 17, item 1): zero-order hold, Jury's test, the discrete circle criterion and its
// largest sector, the Tsypkin criterion. Every expected value comes from outside the project:
// reference/discrete-reference.json, written by reference/discrete_reference.py with Debian's python3-scipy
// (signal.cont2discrete), python3-sympy (exact factorisation, nroots, real-root isolation of the frequency
// conditions written in cos(theta) through Chebyshev polynomials, not the engine's bilinear map) and
// python3-mpmath (50 digits); the library versions are in the file and are printed in the test names.
import { readFileSync } from 'node:fs';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
	frequencyResponse,
	nyquistCurve,
	runCheck,
	toTransferFunction,
	type Model
} from '../../../src/lib/stability/index';
import { isSchurExact, zohMatrices } from '../../../src/lib/stability/discrete';
import { dpolyFromNumbers } from '../../../src/lib/stability/exact';
// The same conversion the checks use.
import { discreteModel } from '../../../src/lib/stability/discrete-model';

if (process.env.CI) fc.configureGlobal({ seed: 20261202 });

const ref = JSON.parse(readFileSync(new URL('./reference/discrete-reference.json', import.meta.url), 'utf8'));
const V = ref.versions;
const SCIPY = `scipy ${V.scipy} signal.cont2discrete`;
const SYMPY = `sympy ${V.sympy} / mpmath ${V.mpmath}, exact in cos(theta)`;

const num = (v: unknown) => (v === 'Infinity' ? Infinity : Number(v));

/** Complex G(e^{j theta}) from descending coefficients, in doubles (a dense evaluation, for the properties). */
function gAt(numD: number[], denD: number[], theta: number): { re: number; im: number } {
	const ev = (p: number[]) => {
		let re = 0;
		let im = 0;
		const c = Math.cos(theta);
		const s = Math.sin(theta);
		for (const a of p) {
			const nre = re * c - im * s + a;
			im = re * s + im * c;
			re = nre;
		}
		return { re, im };
	};
	const n = ev(numD);
	const d = ev(denD);
	const dd = d.re * d.re + d.im * d.im;
	return { re: (n.re * d.re + n.im * d.im) / dd, im: (n.im * d.re - n.re * d.im) / dd };
}

describe(`zero-order hold against ${SCIPY}`, () => {
	for (const z of ref.zoh) {
		it(`${z.id}, T = ${z.T} s`, () => {
			if (z.ss) {
				const r = zohMatrices(z.ss.A, z.ss.B, z.T);
				for (let i = 0; i < z.Ad.length; i++)
					for (let j = 0; j < z.Ad.length; j++) {
						// scipy's expm is a double computation (Pade 13, relative error near 1e-15): its own error plus
						// the engine's rigorous bound.
						expect(Math.abs(r.Ad[i][j] - z.Ad[i][j])).toBeLessThanOrEqual(
							r.errorBound + 1e-14 * Math.max(1, Math.abs(z.Ad[i][j]))
						);
					}
				for (let i = 0; i < z.Bd.length; i++)
					expect(Math.abs(r.Bd[i][0] - z.Bd[i][0])).toBeLessThanOrEqual(
						r.errorBound + 1e-14 * Math.max(1, Math.abs(z.Bd[i][0]))
					);
				expect(r.errorBound).toBeLessThan(1e-15);
			} else {
				const m = {
					kind: 'tf',
					num: z.tf[0],
					den: z.tf[1],
					discretize: { method: 'zoh', sampleTime: z.T }
				} as Model;
				// The engine's discrete model, as a transfer function in z, normalised like scipy's (den[0] = 1).
				const r = runCheck(m, { type: 'max-sector', lower: 0 });
				expect(r.numbers.discretizedBy).toBe('zero-order hold');
				const tf = toTransferFunction(discreteModel(m).model);
				const scale = tf.den[0];
				const den = tf.den.map((v) => v / scale);
				const nm = tf.num.map((v) => v / scale);
				const refNum = z.num.slice(z.num.length - nm.length);
				expect(den.length).toBe(z.den.length);
				den.forEach((v, i) => expect(v).toBeCloseTo(z.den[i], 12));
				nm.forEach((v, i) => expect(v).toBeCloseTo(refNum[i], 12));
				// scipy's leading numerator entries beyond the engine's degree are zeros (strictly proper).
				z.num
					.slice(0, z.num.length - nm.length)
					.forEach((v: number) => expect(Math.abs(v)).toBeLessThan(1e-12));
			}
		});
	}
});

describe(`Jury's test (exact) against ${`sympy ${V.sympy}`} roots`, () => {
	for (const s of ref.schur) {
		it(`${s.id}: ${s.schur ? 'Schur stable' : 'not Schur stable'} (largest |root| ${Number(s.maxModulus).toPrecision(6)})`, () => {
			const p = dpolyFromNumbers(s.den.slice().reverse());
			expect(isSchurExact(p.c).schur).toBe(s.schur);
		});
	}
	it('the circle check on a plant with a pole outside the unit circle, case k1 = 0, is a named precondition failure', () => {
		const r = runCheck({ kind: 'tf', num: [1], den: [1, -2.5, 1], sampleTime: 0.1 } as Model, {
			type: 'circle',
			sector: [0, 0.1]
		});
		expect(r.verdict).toBe('fail');
		expect(r.notApplicable?.precondition).toMatch(/Schur/);
	});
});

describe(`discrete circle criterion: largest sector against ${SYMPY}`, () => {
	for (const c of ref.circle) {
		const lim = num(c.limit);
		it(`${c.id}: k1 = ${c.k1}, limit ${lim.toPrecision(10)} at theta = ${c.theta.toPrecision(6)} rad`, () => {
			const model = { kind: 'tf', num: c.num, den: c.den, sampleTime: 0.01 } as Model;
			const r = runCheck(model, { type: 'max-sector', lower: c.k1 });
			expect(r.verdict).toBe('pass');
			const t = num(r.threshold);
			const up = num(r.numbers.upperBoundProved);
			// The proved bracket holds the exact limit and is tight.
			expect(t).toBeLessThanOrEqual(lim);
			expect(up).toBeGreaterThanOrEqual(lim);
			expect((up - t) / lim).toBeLessThan(1e-6);
			// Just inside passes, just outside fails, each decided exactly.
			const inside = c.k1 + (lim - c.k1) * (1 - 1e-4);
			const outside = c.k1 + (lim - c.k1) * (1 + 1e-4);
			expect(runCheck(model, { type: 'circle', sector: [c.k1, inside] }).verdict).toBe('pass');
			expect(runCheck(model, { type: 'circle', sector: [c.k1, outside] }).verdict).toBe('fail');
			// Critical frequency theta / T.
			expect(r.criticalFrequency as number).toBeCloseTo(c.theta / 0.01, 2);
		});
	}

	it('a lightly damped peak between the points of a 500-point grid: the grid would pass, the engine fails it (exact)', () => {
		const c = ref.circle.find((x: { id: string }) => x.id === 'light-damping-grid');
		const lim = num(c.limit);
		const grid = num(c.grid500Limit);
		// The 500-point grid on [0, pi] overestimates the limit more than threefold (reference file, mpmath).
		expect(grid / lim).toBeGreaterThan(3);
		const k2 = (lim + grid) / 2;
		const model = { kind: 'tf', num: c.num, den: c.den, sampleTime: 0.001 } as Model;
		// Our own 500-point evaluation agrees with the reference's: every grid point passes.
		let gridMin = Infinity;
		for (let i = 0; i < 500; i++)
			gridMin = Math.min(gridMin, 1 + k2 * gAt(c.num, c.den, (Math.PI * i) / 499).re);
		expect(gridMin).toBeGreaterThan(0);
		const r = runCheck(model, { type: 'circle', sector: [0, k2] });
		expect(r.verdict).toBe('fail');
		expect(r.numbers.witnessAngle as number).toBeCloseTo(c.theta, 3);
	});

	it('k2 = infinity is refused for discrete loops with the reason', () => {
		const r = runCheck({ kind: 'tf', num: [0.5], den: [1, -0.5], sampleTime: 0.1 } as Model, {
			type: 'circle',
			sector: [0, Infinity]
		});
		expect(r.verdict).toBe('inconclusive');
		expect(r.notApplicable?.precondition).toMatch(/finite upper/);
	});
});

describe(`Tsypkin criterion: largest sector against ${SYMPY} (sup over q by golden section)`, () => {
	for (const t of ref.tsypkin) {
		const lim = num(t.limit);
		it(`${t.id}: limit ${lim.toPrecision(10)} (q = ${t.q.toPrecision(6)})`, () => {
			const model = { kind: 'tf', num: t.num, den: t.den, sampleTime: 0.1 } as Model;
			const inside = runCheck(model, { type: 'tsypkin', sector: [0, lim * 0.999] });
			expect(inside.verdict).toBe('pass');
			const th = num(inside.threshold);
			expect(th).toBeLessThanOrEqual(lim * (1 + 1e-9));
			expect(th).toBeGreaterThan(lim * (1 - 1e-4));
			// Above the limit no multiplier works: never a pass.
			expect(runCheck(model, { type: 'tsypkin', sector: [0, lim * 1.01] }).verdict).not.toBe('pass');
			// The Tsypkin limit is never below the circle criterion's for [0, k] (q = 0 is the circle condition).
			const circle = runCheck(model, { type: 'max-sector', lower: 0 });
			expect(th).toBeGreaterThanOrEqual(num(circle.threshold) * (1 - 1e-9));
		});
	}
});

// Random Schur-stable plants of order 1..6 from poles and zeros inside the unit disk.
const plantArb = fc
	.record({
		poles: fc.array(
			fc.tuple(
				fc.double({ min: 0.05, max: 0.97, noNaN: true }),
				fc.double({ min: 0, max: 3.1, noNaN: true })
			),
			{ minLength: 1, maxLength: 3 }
		),
		zero: fc.double({ min: -0.9, max: 0.9, noNaN: true }),
		gain: fc.double({ min: 0.05, max: 2, noNaN: true })
	})
	.map(({ poles, zero, gain }) => {
		let den = [1];
		for (const [r, th] of poles) {
			const f = th < 0.05 ? [1, -r] : [1, -2 * r * Math.cos(th), r * r];
			const out = new Array(den.length + f.length - 1).fill(0);
			for (let i = 0; i < den.length; i++) for (let j = 0; j < f.length; j++) out[i + j] += den[i] * f[j];
			den = out;
		}
		return { num: [gain, -gain * zero], den };
	});

function denseMinReG(numD: number[], denD: number[], points = 20000): number {
	let m = Infinity;
	for (let i = 0; i <= points; i++) m = Math.min(m, gAt(numD, denD, (Math.PI * i) / points).re);
	return m;
}

describe('properties (fast-check)', () => {
	it('a proved discrete circle pass is never contradicted by a dense evaluation (20,001 angles)', () => {
		fc.assert(
			fc.property(plantArb, fc.double({ min: 0.01, max: 20, noNaN: true }), ({ num: n, den: d }, k2) => {
				const r = runCheck({ kind: 'tf', num: n, den: d, sampleTime: 1 } as Model, {
					type: 'circle',
					sector: [0, k2]
				});
				if (r.verdict === 'pass') expect(1 + k2 * denseMinReG(n, d)).toBeGreaterThan(-1e-9);
			}),
			{ numRuns: 40 }
		);
	});

	it('the largest provable sector brackets the true limit (dense evaluation refined by golden section)', () => {
		fc.assert(
			fc.property(plantArb, ({ num: n, den: d }) => {
				const r = runCheck({ kind: 'tf', num: n, den: d, sampleTime: 1 } as Model, {
					type: 'max-sector',
					lower: 0
				});
				if (r.verdict !== 'pass' || r.threshold === 'Infinity') return;
				// Reference minimum: dense grid, then golden section around the best grid point (doubles).
				const N = 20000;
				let bi = 0;
				let bv = Infinity;
				for (let i = 0; i <= N; i++) {
					const v = gAt(n, d, (Math.PI * i) / N).re;
					if (v < bv) [bv, bi] = [v, i];
				}
				let a = (Math.PI * Math.max(0, bi - 1)) / N;
				let b = (Math.PI * Math.min(N, bi + 1)) / N;
				for (let k = 0; k < 100; k++) {
					const m1 = a + (b - a) / 3;
					const m2 = b - (b - a) / 3;
					if (gAt(n, d, m1).re < gAt(n, d, m2).re) b = m2;
					else a = m1;
				}
				const minRe = Math.min(bv, gAt(n, d, (a + b) / 2).re);
				const kTrue = -1 / minRe;
				expect(num(r.threshold)).toBeLessThanOrEqual(kTrue * (1 + 1e-9));
				expect(num(r.numbers.upperBoundProved)).toBeGreaterThanOrEqual(kTrue * (1 - 1e-9));
			}),
			{ numRuns: 30 }
		);
	});

	it('a proved Tsypkin pass is never contradicted by a dense evaluation of its inequality', () => {
		fc.assert(
			fc.property(plantArb, fc.double({ min: 0.01, max: 20, noNaN: true }), ({ num: n, den: d }, k) => {
				const r = runCheck({ kind: 'tf', num: n, den: d, sampleTime: 1 } as Model, {
					type: 'tsypkin',
					sector: [0, k]
				});
				if (r.verdict !== 'pass') return;
				const q = r.q as number;
				let m = Infinity;
				for (let i = 0; i <= 20000; i++) {
					const th = (Math.PI * i) / 20000;
					const g = gAt(n, d, th);
					// (1 + q (1 - e^{-j theta})) G
					const fr = 1 + q * (1 - Math.cos(th));
					const fi = q * Math.sin(th);
					m = Math.min(m, fr * g.re - fi * g.im + 1 / k);
				}
				expect(m).toBeGreaterThan(-1e-9);
			}),
			{ numRuns: 30 }
		);
	});
});

describe('plots of a discrete model (illustration only)', () => {
	it('the Nyquist curve is G(e^{j w T}) up to w = pi / T: G = 0.5 / (z - 0.5) ends at G(-1) = -1/3 (by hand)', () => {
		const m = { kind: 'tf', num: [0.5], den: [1, -0.5], sampleTime: 0.1 } as Model;
		const c = nyquistCurve(m, { maxPoints: 500 });
		const last = c[c.length - 1];
		expect(last.w).toBeCloseTo(Math.PI / 0.1, 10);
		expect(last.re).toBeCloseTo(-1 / 3, 12);
		// At theta = pi/2, G(j) = 0.5 / (j - 0.5) = -0.2 - 0.4 j (by hand).
		const mid = frequencyResponse(m, Math.PI / 2 / 0.1);
		expect(mid.re).toBeCloseTo(-0.2, 12);
		expect(mid.im).toBeCloseTo(-0.4, 12);
	});
});
