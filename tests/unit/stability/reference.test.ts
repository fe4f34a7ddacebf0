// Known answers from published worked examples and from closed forms derived in the comments.
// Every expected value states where it comes from; "from memory" marks a recalled textbook figure, which
// is also cross-checked against an independent 64-digit evaluation (helpers.ts, mathjs BigNumber).
import { describe, expect, it } from 'vitest';
import { runCheck, type Model } from '../../../src/lib/stability/index';
import { gridMinReG } from './helpers';

const num = (v: unknown) => (v === 'Infinity' ? Infinity : (v as number));

describe('circle criterion, k1 = 0: largest sector from min Re G(jw)', () => {
	it('G = 1/((s+a)(s+b)): min Re G = f(x*), x* = ab + (a+b) sqrt(ab) (own derivation)', () => {
		// Re G(jw) = (ab - x)/((a^2 + x)(b^2 + x)), x = w^2. Setting the derivative to zero:
		// x^2 - 2ab x - a^2 b^2 - ab(a^2 + b^2) = 0, so x* = ab + sqrt(ab (a + b)^2) = ab + (a + b) sqrt(ab).
		for (const [a, b] of [
			[1, 2],
			[0.5, 30],
			[3, 3]
		]) {
			const xs = a * b + (a + b) * Math.sqrt(a * b);
			const minRe = (a * b - xs) / ((a * a + xs) * (b * b + xs));
			const model: Model = { kind: 'tf', num: [1], den: [1, a + b, a * b] };
			const r = runCheck(model, { type: 'max-sector', lower: 0 });
			expect(r.verdict).toBe('pass');
			const k2 = -1 / minRe;
			expect(num(r.threshold)).toBeLessThanOrEqual(k2);
			expect(num(r.threshold)).toBeGreaterThan(k2 * (1 - 1e-6));
			// A minimiser is fixed by function values only to about sqrt(machine epsilon).
			expect(r.criticalFrequency).toBeCloseTo(Math.sqrt(xs), 6);
			// The exact test brackets the supremum: fails just above it.
			expect(num(r.numbers.thresholdFailAbove)).toBeGreaterThan(k2);
			// Linear gain range: s^2 + (a+b)s + ab + k is Hurwitz iff k > -ab (Routh, second order).
			expect(r.linearGainIntervals).toEqual([[-a * b, 'Infinity']]);
		}
	});

	it('G = 1/(s+1)^3: min Re G = -1/4 at w = 1, so k2 = 4; linear gains (-1, 8) (own derivation)', () => {
		// Re G(jw) = (1 - 3x)/(1 + x)^3; derivative numerator 6x - 6 vanishes at x = 1, giving -2/8.
		// (s+1)^3 + k = s^3 + 3s^2 + 3s + 1 + k: Routh needs 1 + k > 0 and 9 > 1 + k.
		const model: Model = { kind: 'tf', num: [1], den: [1, 3, 3, 1] };
		const r = runCheck(model, { type: 'max-sector', lower: 0 });
		expect(num(r.threshold)).toBeCloseTo(4, 7);
		expect(r.criticalFrequency).toBeCloseTo(1, 6);
		const iv = r.linearGainIntervals!;
		expect(iv).toHaveLength(1);
		expect(iv[0][0]).toBeCloseTo(-1, 10);
		expect(iv[0][1]).toBeCloseTo(8, 10);
		expect(runCheck(model, { type: 'circle', sector: [0, 3.99] }).verdict).toBe('pass');
		expect(runCheck(model, { type: 'circle', sector: [0, 4.01] }).verdict).toBe('fail');
	});

	it('Khalil, Nonlinear Systems, 3rd ed., section 7.1 example G = 4/((s+1)(s/2+1)(s/3+1)): k2* = 1.1644555622 (exact, sympy)', () => {
		// Exact value, not a recalled one: Re G(jw) = -144 (x - 1)/((x + 1)(x + 4)(x + 9)), x = w^2; its
		// stationary points are the roots of 2x^3 + 11x^2 - 28x - 85, the positive one x* = 3.165211232716209
		// (w* = 1.779104053369619 rad/s) gives min Re G = -0.8587704266674096, so k2* = -1/min Re G =
		// 1.164455562216614. Computed with sympy 1.11.1 (Debian python3-sympy: CRootOf of the cubic, evaluated
		// to 30 digits) for this test.
		const exact = 1.164455562216614;
		const wStar = 1.779104053369619;
		const model: Model = {
			kind: 'zpk',
			zeros: [],
			poles: [
				[-1, 0],
				[-2, 0],
				[-3, 0]
			],
			gain: 24
		};
		const r = runCheck(model, { type: 'max-sector', lower: 0 });
		// The proved bound is a safe lower end within 1e-9 relative of the exact limit; the exact test fails
		// just above it, so the bracket holds the limit.
		expect(num(r.threshold)).toBeLessThanOrEqual(exact);
		expect(num(r.threshold)).toBeGreaterThan(exact * (1 - 1e-9));
		expect(num(r.numbers.thresholdFailAbove)).toBeGreaterThanOrEqual(exact);
		expect(Math.abs((r.criticalFrequency as number) - wStar)).toBeLessThan(1e-6 * wStar);
		expect(runCheck(model, { type: 'circle', sector: [0, 1.1644555] }).verdict).toBe('pass');
		expect(runCheck(model, { type: 'circle', sector: [0, 1.1644556] }).verdict).toBe('fail');
		// Independent cross-check: a 64-digit grid evaluation (helpers.ts, mathjs BigNumber) bounds the true
		// minimum from above.
		const grid = gridMinReG([24], [1, 6, 11, 6], 0.01, 100, 4000);
		expect(-1 / exact).toBeLessThanOrEqual(grid.value + 1e-12);
		// 1 + kG stable iff s^3 + 6s^2 + 11s + 6 + 24k Hurwitz: -0.25 < k < 2.5 (Routh: 66 > 6 + 24k).
		expect(r.linearGainIntervals![0][0]).toBeCloseTo(-0.25, 10);
		expect(r.linearGainIntervals![0][1]).toBeCloseTo(2.5, 10);
		// Case k1 < 0 < k2: |G(jw)| <= G(0) = 4 touches the circle of radius 4 at w = 0, so the closed disk
		// condition of [-0.25, 0.25] is not met strictly, while a slightly smaller sector is proved.
		expect(runCheck(model, { type: 'circle', sector: [-0.25, 0.25] }).verdict).toBe('fail');
		expect(runCheck(model, { type: 'circle', sector: [-0.24, 0.24] }).verdict).toBe('pass');
	});
});

describe('circle criterion, 0 < k1 < k2 with an open-loop unstable plant', () => {
	it('G = 1/(s-1): certified exactly when k1 > 1 (own derivation)', () => {
		// Q = s - 1 + k1 is Hurwitz iff k1 > 1 (the encirclement condition), and
		// Re Z(jw) = ((k2 - 1)(k1 - 1) + w^2)/((k1 - 1)^2 + w^2) > 0 whenever k2 > k1 > 1.
		const model: Model = { kind: 'tf', num: [1], den: [1, -1] };
		expect(runCheck(model, { type: 'circle', sector: [1.5, 40] }).verdict).toBe('pass');
		expect(runCheck(model, { type: 'circle', sector: [1.5, 'Infinity' as unknown as number] }).verdict).toBe(
			'pass'
		);
		const low = runCheck(model, { type: 'circle', sector: [0.9, 40] });
		expect(low.verdict).toBe('fail');
		expect(low.reason).toMatch(/encircle/);
		expect(runCheck(model, { type: 'max-sector', lower: 2 }).threshold).toBe('Infinity');
	});

	it('G = 24/((s-1)(s+2)(s+3)): sectors stay inside the linear range (0.25, 5/12) (own derivation)', () => {
		// (s-1)(s+2)(s+3) + 24k = s^3 + 4s^2 + s - 6 + 24k: Routh needs 24k - 6 > 0 and 4 > 24k - 6.
		const model: Model = {
			kind: 'zpk',
			zeros: [],
			poles: [
				[1, 0],
				[-2, 0],
				[-3, 0]
			],
			gain: 24
		};
		const r = runCheck(model, { type: 'max-sector', lower: 0.3 });
		expect(r.verdict).toBe('pass');
		expect(r.linearGainIntervals![0][0]).toBeCloseTo(0.25, 10);
		expect(r.linearGainIntervals![0][1]).toBeCloseTo(10 / 24, 10);
		expect(num(r.threshold)).toBeGreaterThan(0.3);
		expect(num(r.threshold)).toBeLessThan(10 / 24);
		expect(runCheck(model, { type: 'circle', sector: [0.2, 0.3] }).verdict).toBe('fail');
	});
});

describe('positive realness (Khalil, 3rd ed., Definition 6.4 and Lemma 6.1)', () => {
	const cls = (num: number[], den: number[]) => runCheck({ kind: 'tf', num, den }, { type: 'positive-real' });
	it('1/(s+1) is SPR (Khalil section 6.1 example, from memory; Re G = 1/(1+w^2), w^2 Re G -> 1)', () => {
		expect(cls([1], [1, 1]).class).toBe('SPR');
	});
	it('1/s is PR, not SPR (pole on the axis with residue 1)', () => {
		const r = cls([1], [1, 0]);
		expect(r.class).toBe('PR');
		expect(r.verdict).toBe('pass');
	});
	it('s/(s^2+1) is PR (lossless; residues 1/2 at +-j, own derivation)', () => {
		expect(cls([1, 0], [1, 0, 1]).class).toBe('PR');
	});
	it('(s^2+1)/(s(s^2+4)) = (1/4)/s + (3/4)s/(s^2+4) is PR; (s^2+4)/(s(s^2+1)) = 4/s - 3s/(s^2+1) is not', () => {
		// Partial fractions (own derivation): the second has a negative residue at the poles +-j.
		expect(cls([1, 0, 1], [1, 0, 4, 0]).class).toBe('PR');
		const r = cls([1, 0, 4], [1, 0, 1, 0]);
		expect(r.class).toBe('neither');
		expect(r.reason).toMatch(/residue/);
	});
	it('(s+1)/(s^2+s+1): Re G = 1/|D|^2 > 0 but w^2 Re G -> 0, so PR and not SPR by Lemma 6.1 (own derivation)', () => {
		// N(jw) D(-jw) = (1 + jw)(1 - w^2 - jw) has real part 1, so Re G(jw) = 1/((1-w^2)^2 + w^2).
		const r = cls([1, 1], [1, 1, 1]);
		expect(r.class).toBe('PR');
		expect(r.reason).toMatch(/1\/w\^2/);
	});
	it('(s+3)/(s^2+7s+10) is SPR (Re G = (30 + 4w^2)/|D|^2, own derivation)', () => {
		// (3 + jw)(10 - w^2 - 7jw) has real part 30 - 3w^2 + 7w^2 = 30 + 4w^2; w^2 Re G -> 4 > 0.
		expect(cls([1, 3], [1, 7, 10]).class).toBe('SPR');
	});
	it('relative degree two is never PR: 1/(s^2+s+1)', () => {
		const r = cls([1], [1, 1, 1]);
		expect(r.class).toBe('neither');
		expect(r.reason).toMatch(/relative degree/);
	});
	it('1/(s-1) is not PR (pole in the right half-plane)', () => {
		expect(cls([1], [1, -1]).class).toBe('neither');
	});
});

describe('Popov criterion (Khalil, 3rd ed., Theorem 7.3)', () => {
	it('G = 1/(s+1)^3: q = 1 gives Re[(1+jw)G] = Re 1/(1+jw)^2 >= -1/8, so Popov reaches the Hurwitz limit 8 (own derivation)', () => {
		// (1 - x)/(1 + x)^2 has its minimum -1/8 at x = 3; and no k above 8 can be certified because the linear
		// gain 8 is already unstable (Nyquist crosses the real axis at -1/8 at w = sqrt 3).
		const model: Model = { kind: 'tf', num: [1], den: [1, 3, 3, 1] };
		const r = runCheck(model, { type: 'popov', sector: [0, 7.9] });
		expect(r.verdict).toBe('pass');
		expect(num(r.threshold)).toBeCloseTo(8, 6);
		expect(num(r.threshold)).toBeLessThanOrEqual(8);
		const f = runCheck(model, { type: 'popov', sector: [0, 8.5] });
		expect(f.verdict).toBe('fail');
		expect(f.reason).toMatch(/exact/);
		// The circle criterion only reaches 4 here: Popov is less conservative for time-invariant phi.
		expect(runCheck(model, { type: 'circle', sector: [0, 7.9] }).verdict).toBe('fail');
	});
	it('G = 1/((s+1)(s+2)): Re[(1+jwq)G] = (2 + (3q-1)x)/|D|^2 >= 0 for q >= 1/3, so every k (own derivation)', () => {
		const r = runCheck({ kind: 'tf', num: [1], den: [1, 3, 2] }, { type: 'popov', sector: [0, 1000] });
		expect(r.verdict).toBe('pass');
		expect(r.threshold).toBe('Infinity');
		expect(r.q!).toBeGreaterThanOrEqual(1 / 3);
	});
	it('direct feedthrough is outside the theorem: inconclusive with a reason', () => {
		const r = runCheck({ kind: 'tf', num: [1, 2], den: [1, 3] }, { type: 'popov', sector: [0, 1] });
		expect(r.verdict).toBe('inconclusive');
		expect(r.reason).toMatch(/strictly proper/);
	});
});

describe('classical margins', () => {
	it('G = 4/(s+1)^3: GM = 2 (6.02 dB) at sqrt 3 rad/s, PM = 180 - 3 atan(w_c) with (1+w_c^2)^3 = 16 (own derivation)', () => {
		// Phase -180 deg where 3 atan w = 180 deg, w = sqrt 3, |G| = 4/8; |G| = 1 where 1 + w^2 = 16^(1/3).
		const r = runCheck({ kind: 'tf', num: [4], den: [1, 3, 3, 1] }, { type: 'margins' });
		expect(r.verdict).toBe('pass');
		expect(r.numbers.gainMarginFactor).toBeCloseTo(2, 10);
		expect(r.numbers.gainMarginDb).toBeCloseTo(20 * Math.log10(2), 9);
		expect(r.numbers.phaseCrossoverFrequency).toBeCloseTo(Math.sqrt(3), 9);
		const wc = Math.sqrt(16 ** (1 / 3) - 1);
		expect(r.numbers.gainCrossoverFrequency).toBeCloseTo(wc, 9);
		expect(r.numbers.phaseMarginDeg).toBeCloseTo(180 - (3 * Math.atan(wc) * 180) / Math.PI, 8);
	});
	it('unit-feedback unstable loop: fail', () => {
		const r = runCheck({ kind: 'tf', num: [10], den: [1, 3, 3, 1] }, { type: 'margins' });
		expect(r.verdict).toBe('fail');
		expect(r.numbers.closedLoopStable).toBe('no');
	});
	it('thresholds from a requirement template (6 dB / 45 deg, DOMAIN section 5) are applied', () => {
		const r = runCheck(
			{ kind: 'tf', num: [4], den: [1, 3, 3, 1] },
			{ type: 'margins', minGainMarginDb: 6, minPhaseMarginDeg: 45 }
		);
		expect(r.verdict).toBe('fail');
	});
});
