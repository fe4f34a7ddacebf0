import { describe, expect, it } from 'vitest';
import { computeRun } from '../../../src/lib/server/analyses/compute';

// Reference values derived by hand (see tests/integration/models/helpers.ts):
//   G1 = 1/(s+1):    Re G1(jw) = 1/(1+w^2) > 0, so the circle criterion with k1 = 0 certifies every k2
//                    (Khalil, Nonlinear Systems, 3rd ed., Theorem 7.1), and Popov with q >= 0 too:
//                    Re[(1 + jwq) G1(jw)] = (1 + q w^2)/(1 + w^2) > 0.
//   G3 = 1/(s+1)^3:  min Re G3(jw) = -1/4 at w = 1 rad/s, so the largest certified k2 for k1 = 0 is 4.
const G1 = { kind: 'tf' as const, num: [1], den: [1, 1] };
const G3 = { kind: 'tf' as const, num: [1], den: [1, 3, 3, 1] };
const one = (model: typeof G1) => ({ operatingPoints: [{ label: 'nominal', model }] });

describe('computeRun', () => {
	it('certifies [0, 3] for 1/(s+1)^3 and reports the bound 4 at 1 rad/s', () => {
		const r = computeRun({
			check: { type: 'circle', sector: [0, 3] },
			requiredMargin: null,
			operatingPoints: null,
			content: one(G3)
		});
		expect(r.verdict).toBe('pass');
		expect(r.result.certifiedUpper).toBeCloseTo(4, 6);
		expect(r.result.requiredUpper).toBe(3);
		expect(r.worstPoint).toBe('nominal');
		expect(r.outputHash).toMatch(/^[0-9a-f]{64}$/);
	});

	it('a required margin widens k2: 3 x 1.2 = 3.6 < 4 passes, 3 x 1.4 = 4.2 > 4 fails', () => {
		const ok = computeRun({
			check: { type: 'circle', sector: [0, 3] },
			requiredMargin: 0.2,
			operatingPoints: null,
			content: one(G3)
		});
		expect(ok.verdict).toBe('pass');
		expect(ok.result.requiredUpper).toBeCloseTo(3.6, 12);
		const short = computeRun({
			check: { type: 'circle', sector: [0, 3] },
			requiredMargin: 0.4,
			operatingPoints: null,
			content: one(G3)
		});
		expect(short.verdict).toBe('fail');
		expect(short.result.requiredUpper).toBeCloseTo(4.2, 12);
		expect(short.result.certifiedUpper).toBeCloseTo(4, 6);
	});

	it('aggregates operating points: the worst one decides and is named', () => {
		const content = {
			operatingPoints: [
				{ label: 'hover', model: G1 },
				{ label: 'cruise', model: G3 }
			]
		};
		const r = computeRun({
			check: { type: 'circle', sector: [0, 5] },
			requiredMargin: null,
			operatingPoints: null,
			content
		});
		expect(r.verdict).toBe('fail');
		expect(r.worstPoint).toBe('cruise');
		expect(r.result.certifiedUpper).toBeCloseTo(4, 6);
		expect(r.curves.points.map((p) => p.label)).toEqual(['cruise', 'hover']);
		// Only the covered points are analysed.
		const hoverOnly = computeRun({
			check: { type: 'circle', sector: [0, 5] },
			requiredMargin: null,
			operatingPoints: ['hover'],
			content
		});
		expect(hoverOnly.verdict).toBe('pass');
		expect(hoverOnly.result.certifiedUpper).toBe('Infinity');
	});

	it('Popov on 1/(s+1) passes and carries the Popov curve, whose points are (Re G, w Im G)', () => {
		const r = computeRun({
			check: { type: 'popov', sector: [0, 5] },
			requiredMargin: null,
			operatingPoints: null,
			content: one(G1)
		});
		expect(r.verdict).toBe('pass');
		const xy = r.curves.points[0].popov!.xy;
		const ny = r.curves.points[0].nyquist;
		expect(xy.length).toBeGreaterThan(20);
		// For G1: Re G = 1/(1+w^2), w Im G = -w^2/(1+w^2), so x - y = 1 at every frequency.
		for (const [x, y] of xy) expect(x - y).toBeCloseTo(1, 5);
		for (const [w, re, im] of ny) {
			expect(re).toBeCloseTo(1 / (1 + w * w), 5);
			expect(im).toBeCloseTo(-w / (1 + w * w), 5);
		}
	});

	it('refuses a specification that names an operating point the version lacks, and a bad check', () => {
		expect(() =>
			computeRun({
				check: { type: 'circle', sector: [0, 3] },
				requiredMargin: null,
				operatingPoints: ['cold'],
				content: one(G1)
			})
		).toThrow(/cold/);
		expect(() =>
			computeRun({
				check: { type: 'popov', sector: [1, 3] },
				requiredMargin: null,
				operatingPoints: null,
				content: one(G1)
			})
		).toThrow(/k1 must be 0/);
	});

	// Issue 11, defect 4 on the recorded-run path: a stored specification with an infinite bound (in any of
	// the engine's spellings) is decided, not refused. G1 = 1/(s+1) has Re G1 > 0, so [0, infinity] holds.
	it.each([['Infinity'], [null], ['inf']])('decides [0, %s] for 1/(s+1)', (k2) => {
		const r = computeRun({
			check: { type: 'circle', sector: [0, k2] },
			requiredMargin: null,
			operatingPoints: null,
			content: one(G1)
		});
		expect(r.verdict).toBe('pass');
		expect(r.result.requiredUpper).toBe('Infinity');
	});

	// Issue 11, defect 8 on the recorded-run path: unknown fields in the check or a stored model are named.
	it('refuses unknown fields in the check and in an operating point model, naming them', () => {
		expect(() =>
			computeRun({
				check: { type: 'circle', sector: [0, 3], delay: 0.1 },
				requiredMargin: null,
				operatingPoints: null,
				content: one(G1)
			})
		).toThrow(/check\.delay: unknown field "delay"/);
		expect(() =>
			computeRun({
				check: { type: 'circle', sector: [0, 3] },
				requiredMargin: null,
				operatingPoints: null,
				content: one({ ...G1, sampletime: 0.01 } as unknown as typeof G1)
			})
		).toThrow(/operatingPoints\[0\]\.model\.sampletime: unknown field "sampletime"/);
	});

	// Words: the proved bound is provedUpper; certifiedUpper stays as an alias for one engine version.
	it('reports provedUpper, with the old name certifiedUpper as an alias', () => {
		const r = computeRun({
			check: { type: 'circle', sector: [0, 3] },
			requiredMargin: null,
			operatingPoints: null,
			content: one(G3)
		});
		expect(r.result.provedUpper).toBeCloseTo(4, 6);
		expect(r.result.certifiedUpper).toBe(r.result.provedUpper);
	});
});
