// Regression tests for issue 11, defects 1, 2, 3, 4 and 6, and the words of the results. Each expected
// value is derived in the comment beside it (own derivation: exact algebra on the stated plant, checkable by
// hand) or names its source; none compares the engine with itself.
import { describe, expect, it } from 'vitest';
import {
	analyzeCase,
	runCheck,
	runCheckOnPoints,
	sectorGeometry,
	type Check,
	type CheckResult,
	type Model
} from '../../../src/lib/stability/index';
import { preparePlant } from '../../../src/lib/stability/model';
import { popovAfter } from '../../../src/lib/stability/preflight';

const num = (v: unknown) => (v === 'Infinity' ? Infinity : (v as number));
const circle = (k1: number, k2: number | string | null): Check =>
	({ type: 'circle', sector: [k1, k2] }) as unknown as Check;

describe('defect 1: well-posedness before any sector verdict', () => {
	// G = -s/(s+1) = -1 + 1/(s+1): direct feedthrough G(inf) = -1, so 1 + k G(inf) = 1 - k vanishes at k = 1
	// and the loop u = -k y, y = G u has no unique solution there. The same plant in state space:
	// A = -1, B = 1, C = 1, D = -1 gives C (s - A)^-1 B + D = 1/(s+1) - 1 = -s/(s+1).
	const forms: [string, Model][] = [
		['tf', { kind: 'tf', num: [-1, 0], den: [1, 1] }],
		['ss', { kind: 'ss', A: [[-1]], B: [[1]], C: [[1]], D: [[-1]] }],
		['zpk', { kind: 'zpk', zeros: [[0, 0]], poles: [[-1, 0]], gain: -1 }]
	];

	it.each(forms)('%s: sectors containing k = 1 are refused as ill-posed, for every criterion', (_f, G) => {
		for (const sector of [
			[0, 1],
			[-1, 1],
			[0.5, 3],
			[0, 'Infinity']
		] as [number, number | string][]) {
			const r = runCheck(G, circle(sector[0], sector[1]));
			expect(r.verdict, JSON.stringify(sector)).toBe('fail');
			expect(r.reason).toMatch(/not well posed at the gain k = 1\b/);
			expect(r.explanation).toMatch(/^Not proved for the sector/);
			expect(r.numbers.illPosedGain).toBe(1);
			expect(r.numbers.directFeedthrough).toBe(-1);
		}
		// Popov on [0, 2] contains k = 1 too: the well-posedness failure comes first.
		const p = runCheck(G, { type: 'popov', sector: [0, 2] });
		expect(p.verdict).toBe('fail');
		expect(p.reason).toMatch(/not well posed/);
	});

	it.each(forms)('%s: a sector short of k = 1 is still decided by the criterion', (_f, G) => {
		// Re G(jw) = -w^2/(1 + w^2) lies in (-1, 0], so Re G > -1/k2 = -2 for k2 = 0.5 (k1 = 0 case),
		// G is Hurwitz, and 1 - k > 0 on [0, 0.5]: the circle criterion proves [0, 0.5].
		expect(runCheck(G, circle(0, 0.5)).verdict).toBe('pass');
	});

	it.each(forms)('%s: the largest sector stops at the ill-posed gain k = 1', (_f, G) => {
		// For k1 = 0 and k2 < 1, 1 + k2 Re G >= 1 - k2 > 0, so every k2 < 1 is proved and k2 = 1 is not
		// well posed: the supremum is 1, not attained.
		const r = runCheck(G, { type: 'max-sector', lower: 0 });
		expect(r.verdict).toBe('pass');
		expect(num(r.threshold)).toBeLessThan(1);
		expect(num(r.threshold)).toBeGreaterThan(1 - 1e-9);
		expect(r.numbers.thresholdFailAbove).toBe(1);
		expect(r.numbers.illPosedGain).toBe(1);
		expect(r.explanation).toMatch(/not well posed/);
		// With the lower bound at the ill-posed gain itself, no sector exists.
		const at = runCheck(G, { type: 'max-sector', lower: 1 });
		expect(at.verdict).toBe('fail');
		expect(at.reason).toMatch(/not well posed/);
	});

	it('a negative ill-posed gain: G = (2s + 1)/(s + 1) has G(inf) = 2, so k = -1/2 is excluded', () => {
		const G: Model = { kind: 'tf', num: [2, 1], den: [1, 1] };
		const r = runCheck(G, circle(-1, 1));
		expect(r.verdict).toBe('fail');
		expect(r.reason).toMatch(/not well posed at the gain k = -0\.5\b/);
		// [-0.4, 1] excludes it: Re G(jw) = (1 + 2w^2)/(1 + w^2) lies in [1, 2), |G| < 2, so with k1 < 0 < k2
		// the curve must lie inside the disk on [-1/k2, -1/k1] = [-1, 2.5]; |G - 0.75| <= 1.25 holds
		// (G(jw) lies on the circle |G - 1.5| = 0.5), with 1 + kG(inf) = 1 + 2k > 0 on [-0.4, 1].
		expect(runCheck(G, circle(-0.4, 1)).verdict).toBe('pass');
	});
});

describe('defect 2: one rule for hidden modes, in every check', () => {
	// G = (s - 1)/((s - 1)(s + 2)): the factor s - 1 cancels in the transfer function 1/(s + 2), but the
	// model as entered has the mode s = 1, which no feedback reaches. The same mode in state space:
	// uncontrollable: A = diag(-2, 1), B = [1; 0], C = [1, 1]; unobservable: B = [1; 1], C = [1, 0]; both
	// have det(sI - A) = (s + 2)(s - 1) and C adj(sI - A) B = s - 1 (own derivation).
	const hidden: [string, Model, RegExp][] = [
		['tf', { kind: 'tf', num: [1, -1], den: [1, 1, -2] }, /pole cancelled by a zero/],
		[
			'zpk',
			{
				kind: 'zpk',
				zeros: [[1, 0]],
				poles: [
					[1, 0],
					[-2, 0]
				],
				gain: 1
			},
			/zero entered on a pole/
		],
		[
			'ss uncontrollable',
			{
				kind: 'ss',
				A: [
					[-2, 0],
					[0, 1]
				],
				B: [[1], [0]],
				C: [[1, 1]],
				D: [[0]]
			},
			/uncontrollable or unobservable/
		],
		[
			'ss unobservable',
			{
				kind: 'ss',
				A: [
					[-2, 0],
					[0, 1]
				],
				B: [[1], [1]],
				C: [[1, 0]],
				D: [[0]]
			},
			/uncontrollable or unobservable/
		]
	];
	const checks: Check[] = [
		{ type: 'positive-real' },
		circle(0, 1),
		circle(-0.5, 0.5),
		circle(1, 2),
		circle(3, 'Infinity'),
		{ type: 'popov', sector: [0, 1] },
		{ type: 'max-sector', lower: 0 },
		{ type: 'max-sector', lower: 3 },
		{ type: 'margins' }
	];

	it.each(hidden)('%s: every check fails and names the hidden mode at s = 1', (_f, G, words) => {
		for (const c of checks) {
			const r = runCheck(G, c);
			expect(r.verdict, JSON.stringify(c)).toBe('fail');
			expect(r.reason, JSON.stringify(c)).toMatch(/hidden mode at s = 1\b/);
			expect(r.reason).toMatch(words);
			expect(r.reason).toMatch(/unstable for every gain/);
			expect(r.numbers.hiddenModeCount).toBe(1);
			if (c.type === 'positive-real') expect(r.class).toBe('neither');
			if (c.type === 'max-sector' || c.type === 'margins') {
				expect(r.threshold ?? null).toBeNull();
				// No constant gain moves the mode either: the linear gain range is empty.
				expect(r.linearGainIntervals).toEqual([]);
			}
		}
	});

	it('a hidden mode on the imaginary axis: (s^2 + 1)/((s^2 + 1)(s + 1)) is not PR as entered', () => {
		// The cancelled 1/(s + 1) would be SPR; the model as entered has undamped modes at s = +-j.
		const G: Model = { kind: 'tf', num: [1, 0, 1], den: [1, 1, 1, 1] };
		const r = runCheck(G, { type: 'positive-real' });
		expect(r.class).toBe('neither');
		expect(r.reason).toMatch(/hidden mode at s = 0 ± 1j/);
		expect(runCheck(G, circle(0, 1)).reason).toMatch(/hidden mode/);
	});

	it('a hidden mode in the open left half-plane decays and is allowed, in tf and ss alike', () => {
		// (s + 1)/((s + 1)(s + 2)) and A = diag(-2, -1), B = [1; 0], C = [1, 1] both reduce to 1/(s + 2):
		// Re G(jw) = 2/(4 + w^2) > 0, relative degree 1, w^2 Re G -> 2 > 0, so G is SPR (Khalil, 3rd ed.,
		// Lemma 6.1) and every sector [0, k2] is proved (k1 = 0 case: Re G > 0 > -1/k2).
		const forms: Model[] = [
			{ kind: 'tf', num: [1, 1], den: [1, 3, 2] },
			{
				kind: 'ss',
				A: [
					[-2, 0],
					[0, -1]
				],
				B: [[1], [0]],
				C: [[1, 1]],
				D: [[0]]
			}
		];
		for (const G of forms) {
			// Popov's theorem asks for a minimal realisation (Khalil, 3rd ed., Theorem 7.3): not claimed here.
			const p = runCheck(G, { type: 'popov', sector: [0, 5] });
			expect(p.verdict).toBe('inconclusive');
			expect(p.reason).toMatch(/minimal realisation.*hidden mode at s = -1\b/);
			expect(runCheck(G, { type: 'positive-real' }).class).toBe('SPR');
			expect(runCheck(G, circle(0, 100)).verdict).toBe('pass');
			expect(runCheck(G, { type: 'max-sector', lower: 0 }).threshold).toBe('Infinity');
		}
	});
});

describe('defect 3: an unbounded largest sector is reported as unbounded', () => {
	it('G = 0: every finite k2 is proved (Z = 1), the sector [0, infinity] itself is not (Z = G = 0)', () => {
		const r = runCheck({ kind: 'tf', num: [0], den: [1, 1] }, { type: 'max-sector', lower: 0 });
		expect(r.verdict).toBe('pass');
		expect(r.threshold).toBe('Infinity');
		expect(r.numbers.unbounded).toBe('yes');
		expect(r.numbers.infiniteSectorProved).toBe('no');
		expect(r.explanation).toMatch(/^Unbounded/);
	});

	it('G = (s + 3)/(s^2 + 2s - 1), one pole in the right half-plane, k1 = 1: unbounded', () => {
		// Q = D + N = s^2 + 3s + 2 = (s + 1)(s + 2) is Hurwitz, and B = Re[N(jw) Q(-jw)] = 6 > 0 (expand
		// (jw + 3)(2 - 3jw - w^2)), so Re Z = 1 + (k2 - 1) B/|Q|^2 > 0 for every finite k2 > 1. For k2 =
		// infinity Z = N/Q has w^2 Re Z = 6 w^2/|Q|^2 -> 0: not SPR (Khalil, 3rd ed., Lemma 6.1), so the
		// infinite sector itself is not proved.
		const G: Model = { kind: 'tf', num: [1, 3], den: [1, 2, -1] };
		const r = runCheck(G, { type: 'max-sector', lower: 1 });
		expect(r.verdict).toBe('pass');
		expect(r.threshold).toBe('Infinity');
		expect(r.numbers.infiniteSectorProved).toBe('no');
		expect(runCheck(G, circle(1, 1e9)).verdict).toBe('pass');
		expect(runCheck(G, circle(1, 'Infinity')).verdict).toBe('fail');
	});

	it('G = 1/(s - 1), k1 = 2: unbounded, and [2, infinity] itself is proved', () => {
		// Q = s + 1, Z = G/(1 + 2G) = 1/(s + 1) is SPR; B = Re[1 (1 - jw)] = 1 > 0.
		const r = runCheck({ kind: 'tf', num: [1], den: [1, -1] }, { type: 'max-sector', lower: 2 });
		expect(r.threshold).toBe('Infinity');
		expect(r.numbers.infiniteSectorProved).toBe('yes');
	});
});

describe('defect 4: the documented spellings of an infinite bound, on every path', () => {
	// G = 1/(s + 1): Re G(jw) = 1/(1 + w^2) > 0, so G/(1 + 0 G) = G is SPR and [0, infinity] is proved
	// (Khalil, 3rd ed., section 7.1, k1 = 0 with k2 = infinity).
	const G: Model = { kind: 'tf', num: [1], den: [1, 1] };
	const spellings: unknown[] = ['Infinity', 'inf', null];

	it('a case (the CLI path) accepts "Infinity", "inf" and null, validated once', () => {
		const out = analyzeCase({
			model: G,
			checks: spellings.map((k2) => ({ type: 'circle', sector: [0, k2] }))
		});
		expect(out.results.map((r) => r.verdict)).toEqual(['pass', 'pass', 'pass']);
		expect(out.results.every((r) => r.numbers.k2 === 'Infinity')).toBe(true);
		const points = analyzeCase({
			operatingPoints: [{ label: 'a', model: G }],
			checks: [{ type: 'circle', sector: [0, null] }]
		});
		expect(points.results[0].verdict).toBe('pass');
	});

	it('runCheck and runCheckOnPoints accept the spellings and the number Infinity', () => {
		for (const k2 of [...spellings, Infinity]) {
			expect(runCheck(G, circle(0, k2 as number)).verdict).toBe('pass');
			expect(runCheckOnPoints([{ label: 'a', model: G }], circle(0, k2 as number)).verdict).toBe('pass');
		}
	});
});

describe('defect 6: geometry for sectors with k2 <= 0', () => {
	it('[-3, -1.5]: outside the disk on [1/3, 2/3] (the mirrored disk), with a positive distance', () => {
		// 1 + (k1 + k2) Re G + k1 k2 |G|^2 > 0 with k1 k2 = 4.5 > 0 is |G - 0.5| > 1/6: outside the disk with
		// diameter [-1/k1, -1/k2] = [1/3, 2/3]. G = -1/(s + 1) traces the circle |G + 1/2| = 1/2 from -1 to 0,
		// so the nearest approach to the disk is at G -> 0: distance 0.5 - 1/6 = 1/3; Q = s + 1 + 3 is
		// Hurwitz (no right-half-plane poles, no encirclement needed).
		const G: Model = { kind: 'tf', num: [-1], den: [1, 1] };
		const r = runCheck(G, circle(-3, -1.5));
		expect(r.verdict).toBe('pass');
		expect(r.explanation).toMatch(/outside of the disk centred at 0\.5 with radius 0\.166667/);
		expect(r.explanation).not.toMatch(/inside/);
		expect(r.numbers.nyquistDistance as number).toBeCloseTo(1 / 3, 6);
		expect(r.numbers.sectorCase).toBe('k1 < k2 < 0');
		const g = sectorGeometry(-3, -1.5);
		expect(g).toMatchObject({ kind: 'disk', curveMust: 'stay-outside' });
		if (g.kind === 'disk') {
			expect(g.centre).toBeCloseTo(0.5, 15);
			expect(g.radius).toBeCloseTo(1 / 6, 15);
			expect(g.diameter[0]).toBeCloseTo(1 / 3, 15);
			expect(g.diameter[1]).toBeCloseTo(2 / 3, 15);
		}
	});

	it('[-0.5, 0]: the half-plane Re G < 2 (a zero upper bound), distance 1 for G = 1/(s + 1)', () => {
		// k2 = 0: 1 + k1 Re G > 0 with k1 = -0.5 is Re G < 2. Re G(jw) = 1/(1 + w^2) <= 1 (at w = 0).
		const r = runCheck({ kind: 'tf', num: [1], den: [1, 1] }, circle(-0.5, 0));
		expect(r.verdict).toBe('pass');
		expect(r.explanation).toMatch(/half-plane Re G < 2\b/);
		expect(r.explanation).not.toMatch(/Infinity/);
		expect(r.numbers.nyquistDistance as number).toBeCloseTo(1, 6);
		expect(sectorGeometry(-0.5, 0)).toEqual({ kind: 'half-plane', boundary: 2, curveMust: 'stay-left' });
	});
});

describe('words: results say proved, never certified (old field names kept as aliases)', () => {
	it('no result text or field name says certified, except the one-version aliases', () => {
		const G: Model = { kind: 'tf', num: [1], den: [1, 3, 3, 1] };
		const results: CheckResult[] = [
			circle(0, 3),
			circle(0, 5),
			{ type: 'popov', sector: [0, 5] },
			{ type: 'popov', sector: [0, 50] },
			{ type: 'positive-real' },
			{ type: 'max-sector', lower: 0 },
			{ type: 'margins' }
		].map((c) => runCheck(G, c as Check));
		for (const r of results) {
			const { thresholdCertifiedWithQ, ...rest } = r.numbers;
			expect(JSON.stringify({ ...r, numbers: rest })).not.toMatch(/certif/i);
			if (r.type === 'popov') expect(thresholdCertifiedWithQ).toEqual(r.numbers.thresholdProvedWithQ);
		}
	});
});

describe('Popov: -1/q must not be an eigenvalue of A (Khalil, 3rd ed., Theorem 7.3)', () => {
	it('a pass whose q puts -1/q on a pole is not claimed; other q are left alone', () => {
		// G = 1/((s + 1)(s + 2)): the eigenvalues are -1 and -2, so q = 1 and q = 0.5 are excluded.
		const plant = preparePlant({ kind: 'tf', num: [1], den: [1, 3, 2] });
		const pass: CheckResult = {
			type: 'popov',
			verdict: 'pass',
			q: 1,
			numbers: {},
			explanation: 'x'
		};
		expect(popovAfter(plant, pass).verdict).toBe('inconclusive');
		expect(popovAfter(plant, { ...pass, q: 0.5 }).reason).toMatch(/eigenvalue of A/);
		expect(popovAfter(plant, { ...pass, q: 0.75 }).verdict).toBe('pass');
		expect(popovAfter(plant, { ...pass, q: 0 }).verdict).toBe('pass');
	});

	it('the Popov search never reports such a q: 1/(s+1), 1/(s+1)^3 and 1/((s+1)(s+2))', () => {
		// Re[(1 + jwq) G] + 1/k > 0 holds for q = 1 (1/(s+1) and 1/(s+1)^3, Khalil's example values) and
		// q = 1/2 (1/((s+1)(s+2))), but those q put -1/q on a pole; a neighbouring q must be reported.
		for (const [den, poles] of [
			[[1, 1], [-1]],
			[[1, 3, 3, 1], [-1]],
			[
				[1, 3, 2],
				[-1, -2]
			]
		] as [number[], number[]][]) {
			const r = runCheck({ kind: 'tf', num: [1], den }, { type: 'popov', sector: [0, 7] });
			expect(r.verdict).toBe('pass');
			for (const p of poles) expect(-1 / (r.q as number)).not.toBe(p);
		}
	});
});
