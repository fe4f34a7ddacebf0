// Property tests on plants built from known factors: tf, zpk and ss forms, similarity transforms, frequency
// scaling and coefficient scaling; orders up to 30 with coefficients spanning far beyond 1e-6 .. 1e6. No
// property compares the engine only with itself: every form and every transformed model is checked
// against an independent reference, refLimitFromFactors (helpers.ts: min Re G(jw) with G evaluated from its
// factors, never from the engine's polynomials), with the identities of each transformation (a similarity
// transform or a common factor leaves G unchanged; s -> s/c moves the minimiser to c w and keeps the value);
// values at the engine's critical frequency are checked by 64-digit evaluation (mathjs BigNumber). Exact
// answers for many more plants come from sympy in tests/reference/engine-vs-exact.test.ts.
// Tolerances: the limit k2* = -1/min Re G within 1e-9 relative (issue 11's target; the reference minimum is
// good to about 1e-15, a minimum being flat), the critical frequency within 1e-6 relative (the reference
// minimiser is good to about sqrt(machine epsilon), 1e-8).
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { poles, runCheck, toTransferFunction, type Model } from '../../../src/lib/stability/index';
import { companionRoots, controllableForm, gJwBig, refLimitFromFactors, zpkJw } from './helpers';

// CI runs one fixed seed, so a submission's result can be reproduced; elsewhere each run draws its own seed
// and explores new cases (a failure prints its seed; keep what it finds as a case below).
if (process.env.CI) fc.configureGlobal({ seed: 20261202 });

type Root = { re: number; im: number };

/** Stable poles from known factors: real poles and lightly-to-well damped pairs, magnitudes 10^lo..10^hi. */
const polesArb = (maxPairs: number, maxReal: number, lo = -1, hi = 1) =>
	fc
		.tuple(
			fc.array(fc.double({ min: lo, max: hi, noNaN: true }), { minLength: 0, maxLength: maxReal }),
			fc.array(
				fc.tuple(
					fc.double({ min: lo, max: hi, noNaN: true }),
					fc.double({ min: 0.02, max: 0.9, noNaN: true })
				),
				{ minLength: 1, maxLength: maxPairs }
			)
		)
		.map(([reals, pairs]) => {
			const out: Root[] = reals.map((e) => ({ re: -(10 ** e), im: 0 }));
			for (const [e, z] of pairs) {
				const wn = 10 ** e;
				out.push(
					{ re: -z * wn, im: wn * Math.sqrt(1 - z * z) },
					{ re: -z * wn, im: -wn * Math.sqrt(1 - z * z) }
				);
			}
			return out;
		});

const zpk = (ps: Root[], zs: Root[], gain: number): Model => ({
	kind: 'zpk',
	poles: ps.map((p) => [p.re, p.im] as [number, number]),
	zeros: zs.map((z) => [z.re, z.im] as [number, number]),
	gain
});

const num = (v: unknown) => (v === 'Infinity' ? Infinity : Number(v));

/**
 * The engine's largest sector for k1 = 0 agrees with the reference limit: never above it (to `slack`, 1e-12
 * for a plant that is exactly the factors; a rounded form, such as a similarity transform in doubles, is a
 * slightly different plant and gets its rounding as slack), within `rel` below it.
 */
function expectLimit(
	r: ReturnType<typeof runCheck>,
	ref: { limit: number; w: number },
	rel = 1e-9,
	slack = 1e-12
) {
	expect(r.verdict).toBe('pass');
	const t = num(r.threshold);
	if (ref.limit === Infinity) {
		expect(t).toBe(Infinity);
		return;
	}
	expect(t).toBeLessThanOrEqual(ref.limit * (1 + slack));
	expect(t).toBeGreaterThanOrEqual(ref.limit * (1 - rel));
	const hi = num(r.numbers.thresholdFailAbove);
	expect(hi).toBeGreaterThanOrEqual(ref.limit * (1 - slack));
	expect(hi).toBeLessThanOrEqual(ref.limit * (1 + rel));
	if (Number.isFinite(ref.w)) expect(Math.abs(r.criticalFrequency! / ref.w - 1)).toBeLessThan(1e-6);
}

/** The tf form is the same function as the factors: 64-digit evaluation of its coefficients vs the factors. */
function expectSameFunction(tf: { num: number[]; den: number[] }, ps: Root[], zs: Root[], gain: number) {
	const mags = ps.map((p) => Math.hypot(p.re, p.im));
	for (const w of [
		Math.min(...mags) / 3,
		Math.sqrt(Math.min(...mags) * Math.max(...mags)),
		Math.max(...mags) * 3
	]) {
		const a = gJwBig(tf.num, tf.den, w);
		const b = zpkJw(ps, zs, gain, w);
		expect(Math.hypot(a.re - b.re, a.im - b.im)).toBeLessThan(1e-10 * Math.hypot(b.re, b.im));
	}
}

describe('same answers through every input form', () => {
	it('zpk, tf and controllable-form ss each give the reference largest sector and critical frequency', () => {
		fc.assert(
			fc.property(polesArb(2, 2), fc.double({ min: 0.1, max: 10, noNaN: true }), (ps, gain) => {
				const dc = ps.reduce((m, p) => m * Math.hypot(p.re, p.im), 1);
				const mz = zpk(ps, [], gain * dc);
				const tf = toTransferFunction(mz);
				const mt: Model = { kind: 'tf', num: tf.num, den: tf.den };
				const ms = controllableForm(tf.num, tf.den);
				expectSameFunction(tf, ps, [], gain * dc);
				const ref = refLimitFromFactors(ps, [], gain * dc);
				for (const m of [mz, mt, ms]) expectLimit(runCheck(m, { type: 'max-sector', lower: 0 }), ref);
				// Poles: engine (from the exact polynomial) vs ml-matrix companion eigenvalues.
				const eng = poles(mt)
					.map((p) => p.re)
					.sort((a, b) => a - b);
				const mlPoles = companionRoots(tf.den)
					.map((p) => p.re)
					.sort((a, b) => a - b);
				eng.forEach((v, i) => expect(v).toBeCloseTo(mlPoles[i], 5));
			}),
			{ numRuns: 40 }
		);
	});

	it('similarity transforms of the state-space form (G unchanged): limit and verdicts match the reference', () => {
		fc.assert(
			fc.property(
				polesArb(2, 2),
				fc.array(fc.integer({ min: -4, max: 4 }), { minLength: 16, maxLength: 16 }),
				(ps, tEntries) => {
					const dc = ps.reduce((m, p) => m * Math.hypot(p.re, p.im), 1);
					const tf = toTransferFunction(zpk(ps, [], dc));
					expectSameFunction(tf, ps, [], dc);
					const ref = refLimitFromFactors(ps, [], dc);
					const ss = controllableForm(tf.num, tf.den);
					const n = ss.A.length;
					// T = I + E, E strictly upper triangular with entries k/4: unimodular, T^-1 = I - E + E^2 - ...
					const T = Array.from({ length: n }, (_, i) =>
						Array.from({ length: n }, (_, j) => (i === j ? 1 : j > i ? tEntries[(i * 4 + j) % 16] / 4 : 0))
					);
					const Ti = invUpperUnit(T);
					const A2 = mm(mm(T, ss.A), Ti);
					const B2 = mm(T, ss.B);
					const C2 = mm(ss.C, Ti);
					const m2: Model = { kind: 'ss', A: A2, B: B2, C: C2, D: ss.D };
					// The transform is done in doubles, so G moves by rounding only (about 1e-15 relative in the
					// entries, up to about 1e-12 in the limit for lightly damped modes): 1e-9 of slack.
					for (const m of [ss, m2]) {
						expectLimit(runCheck(m, { type: 'max-sector', lower: 0 }), ref, 1e-7, 1e-9);
						expect(runCheck(m, { type: 'circle', sector: [0, ref.limit * 0.9] }).verdict).toBe('pass');
						expect(runCheck(m, { type: 'circle', sector: [0, ref.limit * 1.1] }).verdict).toBe('fail');
					}
				}
			),
			{ numRuns: 30 }
		);
	});
});

function mm(a: number[][], b: number[][]): number[][] {
	return a.map((row) => b[0].map((_, j) => row.reduce((s, v, k) => s + v * b[k][j], 0)));
}
function invUpperUnit(T: number[][]): number[][] {
	const n = T.length;
	const X: number[][] = Array.from({ length: n }, (_, i) =>
		Array.from({ length: n }, (_, j) => (i === j ? 1 : 0))
	);
	for (let j = 0; j < n; j++)
		for (let i = j - 1; i >= 0; i--) {
			let s = 0;
			for (let k = i + 1; k <= j; k++) s += T[i][k] * X[k][j];
			X[i][j] = -s;
		}
	return X;
}

describe('scaling invariance', () => {
	it('frequency scaling s -> s/c: the reference limit is kept and its frequency moves to c w', () => {
		fc.assert(
			fc.property(polesArb(3, 2), fc.constantFrom(1e-3, 0.1, 7, 1e3), (ps, c) => {
				const dc = ps.reduce((m, p) => m * Math.hypot(p.re, p.im), 1);
				const ref = refLimitFromFactors(ps, [], dc);
				expectLimit(runCheck(zpk(ps, [], dc), { type: 'max-sector', lower: 0 }), ref);
				// G_c(s) = G(s/c): the same minimum at c w (the scaled poles are rounded: 1e-7 on the limit).
				const scaled = ps.map((p) => ({ re: p.re * c, im: p.im * c }));
				const b = runCheck(zpk(scaled, [], dc * c ** ps.length), { type: 'max-sector', lower: 0 });
				expectLimit(b, { limit: ref.limit, w: ref.w * c }, 1e-7);
			}),
			{ numRuns: 40 }
		);
	});

	it('numerator and denominator times the same constant (G unchanged): the reference limit', () => {
		fc.assert(
			fc.property(polesArb(2, 2), fc.double({ min: -6, max: 6, noNaN: true }), (ps, e) => {
				const dc = ps.reduce((m, p) => m * Math.hypot(p.re, p.im), 1);
				const tf = toTransferFunction(zpk(ps, [], dc));
				expectSameFunction(tf, ps, [], dc);
				const ref = refLimitFromFactors(ps, [], dc);
				const c = 10 ** e;
				expectLimit(
					runCheck({ kind: 'tf', num: tf.num, den: tf.den }, { type: 'max-sector', lower: 0 }),
					ref
				);
				expectLimit(
					runCheck(
						{ kind: 'tf', num: tf.num.map((v) => v * c), den: tf.den.map((v) => v * c) },
						{ type: 'max-sector', lower: 0 }
					),
					ref,
					1e-7
				);
			}),
			{ numRuns: 40 }
		);
	});
});

describe('high order and wide coefficient spans', () => {
	it('orders up to 30 with poles over six decades: the reference limit, and a 64-digit evaluation at the critical frequency', () => {
		fc.assert(
			fc.property(polesArb(12, 6, -3, 3), (ps) => {
				const dc = ps.reduce((m, p) => m * Math.hypot(p.re, p.im), 1);
				const model = zpk(ps, [], dc);
				const tf = toTransferFunction(model);
				const span =
					Math.max(...tf.den.map(Math.abs).filter((v) => v > 0)) /
					Math.min(...tf.den.map(Math.abs).filter((v) => v > 0));
				expect(span).toBeGreaterThan(1); // the spans reach far beyond 1e12 for the larger cases
				// Issue 11: the engine must decide such models (repeated lightly damped factors included, which
				// fast-check shrinks towards), with the limit to 1e-9.
				const r = runCheck(model, { type: 'max-sector', lower: 0 });
				const ref = refLimitFromFactors(ps, [], dc);
				expectLimit(r, ref);
				const t = num(r.threshold);
				if (t === Infinity) return;
				// At the engine's critical frequency Re G is the minimum -1/k2*, evaluated from the factors the model
				// was given (zpkJw, independent of the engine). Not from the expanded tf: rounding its coefficients
				// to doubles moves a 7-fold lightly damped mode enough to change Re G there by about 5e-6.
				const g = zpkJw(ps, [], dc, r.criticalFrequency!);
				expect(g.re * t).toBeCloseTo(-1, 6);
			}),
			{ numRuns: 10 }
		);
	}, 300_000);

	it('an order-30 product of known factors: the reference limit, and circle verdicts on both sides of it', () => {
		const ps: Root[] = [];
		for (let i = 0; i < 15; i++) {
			const wn = 10 ** (-3 + (6 * i) / 14);
			const z = i % 3 === 0 ? 0.01 : 0.3;
			ps.push(
				{ re: -z * wn, im: wn * Math.sqrt(1 - z * z) },
				{ re: -z * wn, im: -wn * Math.sqrt(1 - z * z) }
			);
		}
		const dc = ps.reduce((m, p) => m * Math.hypot(p.re, p.im), 1);
		const model = zpk(ps, [], dc);
		const tf = toTransferFunction(model);
		expect(tf.den).toHaveLength(31);
		const ref = refLimitFromFactors(ps, [], dc);
		expectLimit(runCheck(model, { type: 'max-sector', lower: 0 }), ref);
		expect(runCheck(model, { type: 'circle', sector: [0, ref.limit * 0.999] }).verdict).toBe('pass');
		expect(runCheck(model, { type: 'circle', sector: [0, ref.limit * 1.001] }).verdict).toBe('fail');
		expect(
			runCheck({ kind: 'tf', num: tf.num, den: tf.den }, { type: 'circle', sector: [0, ref.limit * 0.99] })
				.verdict
		).toBe('pass');
	});
});

describe('a case fast-check found', () => {
	it('a nearly double lightly damped mode: the limit agrees with the reference from the factors (seed 38406113)', () => {
		// Re G from the factors is -362.18469352 at 0.98038196 rad/s (checked by direct evaluation of the
		// factors; the engine's own witness frequency is not used to build the reference).
		const ps = [
			{ re: -1, im: 0 },
			{ re: -0.02000000000000003, im: 0.999799979995999 },
			{ re: -0.02000000000000003, im: -0.999799979995999 },
			{ re: -0.02, im: 0.999799979995999 },
			{ re: -0.02, im: -0.999799979995999 },
			{ re: -0.2503504129589584, im: 0.9681552926732772 },
			{ re: -0.2503504129589584, im: -0.9681552926732772 }
		];
		const dc = ps.reduce((m, p) => m * Math.hypot(p.re, p.im), 1);
		const ref = refLimitFromFactors(ps, [], dc);
		expect(ref.minReG).toBeCloseTo(-362.18469352, 6);
		expectLimit(runCheck(zpk(ps, [], dc), { type: 'max-sector', lower: 0 }), ref);
	});

	it('a 4-fold lightly damped mode: the bracket holds the reference limit within 1e-9 (issue 11)', () => {
		// Poles found by the property above (seed 10474552): -0.02 ± 0.9998j four times, -0.1108 ± 5.505j;
		// unit DC gain. The limit is computed independently from the factors (refLimitFromFactors), and exactly
		// by sympy in tests/reference (plant issue-four-fold-mode).
		const ps: [number, number][] = [
			...(Array.from({ length: 4 }, () => [
				[-0.02, 0.999799979995999],
				[-0.02, -0.999799979995999]
			]).flat() as [number, number][]),
			[-0.11078105537246409, 5.5048503444431915],
			[-0.11078105537246409, -5.5048503444431915]
		];
		const dc = ps.reduce((m, p) => m * Math.hypot(p[0], p[1]), 1);
		const model = { kind: 'zpk' as const, zeros: [], poles: ps, gain: dc };
		const ref = refLimitFromFactors(
			ps.map(([re, im]) => ({ re, im })),
			[],
			dc
		);
		expectLimit(runCheck(model, { type: 'max-sector', lower: 0 }), ref);
	});
});
