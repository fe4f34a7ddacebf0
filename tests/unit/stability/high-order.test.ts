// Issue 11, defects 5, 7 and 9: the minimum of the frequency condition from its exact stationary points,
// decisive verdicts on high-order modal models, and the time budget.
//
// Every expected value comes from outside the engine: tests/unit/stability/reference/modal_models.py
// (python3-mpmath 1.2.1 at 40 digits, summing the state-space blocks C_i (jw I - A_i)^-1 B_i, and
// python3-sympy 1.11.1 exact real roots for the fourth-order plant), stored in modal-models.json with the
// models themselves; popov_limits.py (mpmath) for the Popov limits in popov-limits.json.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { analyzeCase, runCheck, type Model } from '../../../src/lib/stability/index';
import { runCircle } from '../../../src/lib/stability/checks/circle-check';
import { firstPositiveRoot } from '../../../src/lib/stability/isolate';
import { preparePlant } from '../../../src/lib/stability/model';
import { parseModel } from '../../../src/lib/stability/schema';

const dir = 'tests/unit/stability/reference/';
const ref = JSON.parse(readFileSync(dir + 'modal-models.json', 'utf8'));
const popovRef = JSON.parse(readFileSync(dir + 'popov-limits.json', 'utf8'));
const num = (v: unknown) => (v === 'Infinity' ? Infinity : Number(v));
const rel = (a: number, b: number) => Math.abs(a / b - 1);

describe('defect 5: the minimum of Re Z from the exact stationary points', () => {
	const model: Model = { kind: 'tf', num: [1], den: [1, 0.6, 5.08, 1.2, 4] };
	// sympy 1.11.1, exact real roots of the numerator of d/dx Re G (modal_models.py defect5_exact).
	const exact = ref.defect5;
	it('circle [0, 1.6]: -0.48724 at 1.08973 rad/s, to 1e-9 relative', () => {
		const r = runCheck(model, { type: 'circle', sector: [0, 1.6] });
		expect(r.verdict).toBe('fail');
		expect(rel(num(r.margin), Number(exact.minReZ_0_1_6))).toBeLessThan(1e-9);
		expect(rel(r.criticalFrequency!, Number(exact.criticalFrequency))).toBeLessThan(1e-9);
		// k1 = 0: the Nyquist distance min Re G + 1/k2 is the same minimum at the same frequency.
		expect(rel(num(r.numbers.nyquistDistance), Number(exact.minReG) + 1 / 1.6)).toBeLessThan(1e-9);
		expect(r.numbers.nyquistDistanceFrequency).toBe(r.criticalFrequency);
	});
	it('max-sector on the same plant: the same critical frequency, limit -1/min Re G to 1e-9', () => {
		const r = runCheck(model, { type: 'max-sector', lower: 0 });
		const c = runCheck(model, { type: 'circle', sector: [0, 1.6] });
		expect(r.criticalFrequency).toBe(c.criticalFrequency);
		const limit = -1 / Number(exact.minReG);
		expect(num(r.threshold)).toBeLessThanOrEqual(limit);
		expect(num(r.numbers.thresholdFailAbove)).toBeGreaterThanOrEqual(limit);
		expect(rel(num(r.numbers.thresholdFailAbove), num(r.threshold))).toBeLessThan(1e-9);
	});
});

describe('defect 7: modal models of order 24 and 40 (references: mpmath, modal-models.json)', () => {
	const cases: { name: string; pass: number[]; fail: number[] }[] = [
		// light damping (0.005-0.009), 20 modes over two decades: 37 % below the limit passes
		{ name: 'modal40', pass: [0.63, 0.5], fail: [1.01, 1.6] },
		// a mode of damping 0.02 repeated four times (real Jordan form) and 8 more modes
		{ name: 'repeated24', pass: [0.5, 0.63], fail: [1.01, 4.4] },
		// 20 modes within 2 % of each other, damping 0.002, limit about 5.6e-10
		{ name: 'cluster40', pass: [0.5, 0.63], fail: [1.01, 1e-4 / 5.599984124730417e-10] }
	];
	for (const c of cases) {
		const entry = ref.models[c.name];
		const limit = Number(entry.limit);
		const model = entry.model as Model;
		it(`${c.name}: circle verdicts on both sides of the limit ${limit.toPrecision(6)}`, () => {
			for (const f of c.pass) {
				const r = runCheck(model, { type: 'circle', sector: [0, limit * f] });
				expect(r.verdict, `${f} x limit`).toBe('pass');
				expect(rel(r.criticalFrequency!, Number(entry.criticalFrequency))).toBeLessThan(1e-9);
			}
			for (const f of c.fail) {
				const r = runCheck(model, { type: 'circle', sector: [0, limit * f] });
				expect(r.verdict, `${f} x limit`).toBe('fail');
				expect(r.numbers.witnessFrequency).not.toBeNull();
			}
		});
		it(`${c.name}: max-sector brackets the limit to 1e-9 relative, at the reference frequency`, () => {
			const r = runCheck(model, { type: 'max-sector', lower: 0 });
			expect(r.verdict).toBe('pass');
			const t = num(r.threshold);
			const hi = num(r.numbers.thresholdFailAbove);
			expect(t).toBeLessThanOrEqual(limit * (1 + 1e-15));
			expect(hi).toBeGreaterThanOrEqual(limit * (1 - 1e-15));
			expect(rel(hi, t)).toBeLessThan(1e-9);
			expect(rel(r.criticalFrequency!, Number(entry.criticalFrequency))).toBeLessThan(1e-9);
		});
		it(`${c.name}: Popov passes where the circle criterion does and finds a finite limit (mpmath)`, () => {
			const p = runCheck(model, { type: 'popov', sector: [0, limit * 0.63] });
			expect(p.verdict).toBe('pass');
			const t = num(p.threshold);
			const pr = popovRef.models[c.name];
			const pl = Number(pr.popovLimit);
			expect(Number.isFinite(t)).toBe(true);
			// Proved with the multiplier q the engine reports: never above mpmath's -1/g(q) at that q, and
			// within 1e-6 of it; at least the circle limit (q = 0) and mpmath's own search over q (which is
			// run on samples and so lands slightly below the best q).
			expect(p.q).toBeCloseTo(Number(pr.atQ.q), 12);
			expect(t).toBeLessThanOrEqual(Number(pr.atQ.value) * (1 + 1e-9));
			expect(t).toBeGreaterThanOrEqual(Number(pr.atQ.value) * (1 - 1e-6));
			expect(t).toBeGreaterThanOrEqual(pl * (1 - 1e-3));
			expect(t).toBeGreaterThanOrEqual(limit * (1 - 1e-9));
			expect(runCheck(model, { type: 'popov', sector: [0, pl * 1.05] }).verdict).toBe('fail');
		});
	}
	it('the 4-fold damping-0.02 mode of property.test.ts: max-sector to 1e-9 (mpmath from the factors)', () => {
		const ps: [number, number][] = [
			...(Array.from({ length: 4 }, () => [
				[-0.02, 0.999799979995999],
				[-0.02, -0.999799979995999]
			]).flat() as [number, number][]),
			[-0.11078105537246409, 5.5048503444431915],
			[-0.11078105537246409, -5.5048503444431915]
		];
		const dc = ps.reduce((m, p) => m * Math.hypot(p[0], p[1]), 1);
		const r = runCheck({ kind: 'zpk', zeros: [], poles: ps, gain: dc }, { type: 'max-sector', lower: 0 });
		const limit = Number(ref.fourfold.limit);
		expect(num(r.threshold)).toBeLessThanOrEqual(limit * (1 + 1e-12));
		expect(num(r.numbers.thresholdFailAbove)).toBeGreaterThanOrEqual(limit * (1 - 1e-12));
		expect(rel(num(r.numbers.thresholdFailAbove), num(r.threshold))).toBeLessThan(1e-9);
		expect(rel(r.criticalFrequency!, Number(ref.fourfold.criticalFrequency))).toBeLessThan(1e-9);
	});
});

describe('defect 9: the time budget', () => {
	it('a check that cannot finish in its budget says so, and stops', () => {
		// A fresh copy of the clustered model, so nothing about it is cached yet.
		const model = parseModel(JSON.parse(JSON.stringify(ref.models.cluster40.model)));
		const plant = preparePlant(model);
		const t = performance.now();
		const r = runCircle(plant, 0, 3e-10, { budgetSeconds: 0.01 });
		const ms = performance.now() - t;
		expect(r.verdict).toBe('inconclusive');
		expect(r.reason).toBe('Inconclusive: time budget of 0.01 s exceeded.');
		// One exact Routh row or isolation node at most runs past the deadline.
		expect(ms).toBeLessThan(300);
		// With the default budget the same check is decided.
		expect(runCircle(plant, 0, 3e-10).verdict).toBe('pass');
	});
	it('a case file sets the budget (options.budgetSeconds), the path the CLI takes', () => {
		const model = JSON.parse(JSON.stringify(ref.models.cluster40.model));
		const out = analyzeCase({
			model,
			checks: [{ type: 'circle', sector: [0, 3e-10] }],
			options: { budgetSeconds: 0.01 }
		});
		expect(out.results[0].verdict).toBe('inconclusive');
		expect(out.results[0].reason).toBe('Inconclusive: time budget of 0.01 s exceeded.');
		// The budget covers the whole check (model conversion, preflight gcd, criterion), for every type.
		// (How soon it stops is measured by `npm run bench`, never by a timed test.)
		const pr = analyzeCase({
			model: JSON.parse(JSON.stringify(ref.models.cluster40.model)),
			checks: [{ type: 'positive-real' }],
			options: { budgetSeconds: 0.01 }
		});
		expect(pr.results[0].verdict).toBe('inconclusive');
		expect(pr.results[0].reason).toBe('Inconclusive: time budget of 0.01 s exceeded.');
		expect(() => analyzeCase({ model, checks: [{ type: 'positive-real' }], options: { budget: 1 } })).toThrow(
			/options\.budget/
		);
		expect(() =>
			analyzeCase({ model, checks: [{ type: 'positive-real' }], options: { budgetSeconds: 0 } })
		).toThrow(/budgetSeconds must be above 0/);
	});
});

describe('root isolation on (0, inf) (Descartes / Collins-Akritas)', () => {
	// Polynomials with known roots, by construction; ascending integer coefficients.
	const mul = (a: bigint[], b: bigint[]) => {
		const c = new Array(a.length + b.length - 1).fill(0n);
		a.forEach((x, i) => b.forEach((y, j) => (c[i + j] += x * y)));
		return c;
	};
	it('a complex pair 1e-15 off the axis: no positive root', () => {
		// 2^100 ((x - 1)^2 + 2^-100): roots 1 +- 2^-50 j, about 8.9e-16 off the axis
		const s = 2n ** 100n;
		expect(firstPositiveRoot([s + 1n, -2n * s, s]).kind).toBe('none');
	});
	it('a double root at 3 (touching zero): found through the square-free part', () => {
		const p = mul(mul([-3n, 1n], [-3n, 1n]), [5n, 1n]);
		const r = firstPositiveRoot(p);
		expect(r.kind).toBe('root');
		if (r.kind === 'root') {
			const lo = Number(r.lo.m) * 2 ** r.lo.e;
			const hi = Number(r.hi.m) * 2 ** r.hi.e;
			expect(lo).toBeLessThanOrEqual(3);
			expect(hi).toBeGreaterThanOrEqual(3);
		}
	});
	it('simple roots at 2 and 7: the first one, with an exact point where p < 0', () => {
		const p = mul(mul([-2n, 1n], [-7n, 1n]), [1n, 0n, 1n]);
		const r = firstPositiveRoot(p);
		expect(r.kind).toBe('root');
		if (r.kind === 'root') {
			expect(Number(r.lo.m) * 2 ** r.lo.e).toBeLessThan(2);
			expect(Number(r.hi.m) * 2 ** r.hi.e).toBeGreaterThan(2);
			expect(Number(r.hi.m) * 2 ** r.hi.e).toBeLessThan(7);
			expect(r.nonPositiveAt).toBeDefined();
		}
	});
});
