// The sign decisions: floating filter and exact fallback must agree with each other and with answers known
// by construction (polynomials built from chosen rational roots, in exact BigInt arithmetic), and the
// Hurwitz verdict must agree with an independent root finder (ml-matrix eigenvalues of the companion matrix).
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { certifiedHurwitz, certifiedPositiveOnHalfLine } from '../../../src/lib/stability/certify';
import {
	dpolyFromNumbers,
	dyadicOf,
	isHurwitzExact,
	mulInt,
	oddMultiplicityPositiveRoots,
	sturmPositiveRootCount
} from '../../../src/lib/stability/exact';
import { companionRoots } from './helpers';

/** Integer polynomial (ascending) with roots p/q (real) or a +- jb (pairs), scaled to integers. */
function intPoly(real: [number, number][], pairs: [number, number, number][]): bigint[] {
	let p: bigint[] = [1n];
	for (const [num, den] of real) p = mulInt(p, [BigInt(-num), BigInt(den)]); // den x - num
	for (const [a, b, den] of pairs) {
		// (den x - a)^2 + b^2 = den^2 x^2 - 2 a den x + a^2 + b^2
		p = mulInt(p, [BigInt(a * a + b * b), BigInt(-2 * a * den), BigInt(den * den)]);
	}
	return p;
}

const rootArb = fc.tuple(fc.integer({ min: -400, max: 400 }), fc.integer({ min: 1, max: 64 }));
const pairArb = fc.tuple(
	fc.integer({ min: -400, max: 400 }),
	fc.integer({ min: 1, max: 400 }),
	fc.integer({ min: 1, max: 64 })
);

describe('exact primitives', () => {
	it('dyadic decomposition is exact', () => {
		fc.assert(
			fc.property(fc.double({ noNaN: true, noDefaultInfinity: true }), (x) => {
				const d = dyadicOf(x);
				expect(Number(d.m) * 2 ** d.e).toBe(x === 0 ? 0 : x);
			})
		);
		expect(dpolyFromNumbers([0.1, 3, 0.5]).c.every((v) => typeof v === 'bigint')).toBe(true);
	});

	it('Routh array: textbook cases (Gantmacher vol. 2 ch. XV; Ogata, Modern Control Engineering, 5th ed., section 5-6, from memory)', () => {
		expect(isHurwitzExact([6n, 11n, 6n, 1n]).hurwitz).toBe(true); // (s+1)(s+2)(s+3)
		expect(isHurwitzExact([10n, 1n, 2n, 1n]).hurwitz).toBe(false); // s^3 + 2s^2 + s + 10: 2*1 < 10
		expect(isHurwitzExact([1n, 0n, 1n]).hurwitz).toBe(false); // s^2 + 1: roots on the axis
		expect(isHurwitzExact([2n, 1n, 1n, 1n]).hurwitz).toBe(false); // 1*1 < 2
	});

	it('Sturm counts the distinct positive roots of polynomials built from known roots', () => {
		fc.assert(
			fc.property(fc.array(rootArb, { maxLength: 8 }), fc.array(pairArb, { maxLength: 4 }), (real, pairs) => {
				const roots = real.filter(([n]) => n !== 0);
				const p = intPoly(roots, pairs);
				const distinctPositive = new Set(roots.filter(([n]) => n > 0).map(([n, d]) => n / d)).size;
				expect(sturmPositiveRootCount(p)).toBe(distinctPositive);
			}),
			{ numRuns: 200 }
		);
	});

	it('odd-multiplicity positive roots: squares do not change sign', () => {
		const p = intPoly(
			[
				[3, 1],
				[3, 1],
				[5, 2],
				[-1, 1]
			],
			[]
		);
		expect(oddMultiplicityPositiveRoots(p)).toBe(1);
		expect(
			oddMultiplicityPositiveRoots(
				intPoly(
					[
						[3, 1],
						[3, 1]
					],
					[]
				)
			)
		).toBe(0);
	});
});

describe('floating filter agrees with the exact decision', () => {
	let filterDecided = 0;
	it('positivity on [0, inf): known answer, filter == exact, including roots within 1e-6 of the half-line', () => {
		fc.assert(
			fc.property(
				fc.array(rootArb, { maxLength: 10 }),
				fc.array(pairArb, { maxLength: 6 }),
				fc.integer({ min: 1, max: 1000 }),
				(real, pairs, near) => {
					// Add a pair very close to the positive axis: x = near/16 +- j near/16 * 1e-6 (scaled to integers).
					const scaledPairs: [number, number, number][] = pairs.map(([a, b, d]) => [a, b, d]);
					// 256e12 ((x - a)^2 + b^2), a = near/16, b = 1e-6 a
					const N = BigInt(near);
					const T = 10n ** 12n;
					const p = mulInt(
						intPoly(
							real.filter(([n]) => n !== 0),
							scaledPairs
						),
						[N * N * T + N * N, -32n * N * T, 256n * T]
					);
					const hasPositiveReal = real.some(([n]) => n > 0);
					const E = { c: p, e: 0 };
					const lead = p[p.length - 1];
					const sign0 = p[0];
					const known = !hasPositiveReal && lead > 0n && sign0 > 0n;
					const a = certifiedPositiveOnHalfLine(E);
					const b = certifiedPositiveOnHalfLine(E, [], true);
					expect(b.positive).toBe(known);
					expect(a.positive).toBe(known);
					if (a.path === 'filter') filterDecided++;
				}
			),
			{ numRuns: 150 }
		);
		// The filter must actually decide most cases, or this test would not exercise it.
		expect(filterDecided).toBeGreaterThan(50);
	});

	it('Hurwitz: filter == exact == sign of the known roots, and ml-matrix eigenvalues agree away from the axis', () => {
		fc.assert(
			fc.property(
				fc.array(rootArb, { minLength: 1, maxLength: 8 }),
				fc.array(pairArb, { maxLength: 6 }),
				(real, pairs) => {
					const p = intPoly(real, pairs);
					const stable = real.every(([n]) => n < 0) && pairs.every(([a]) => a < 0);
					const P = { c: p, e: 0 };
					expect(certifiedHurwitz(P).hurwitz).toBe(stable);
					expect(certifiedHurwitz(P, true).hurwitz).toBe(stable);
					const desc = p.map(Number).reverse();
					const eig = companionRoots(desc);
					const maxRe = Math.max(...eig.map((r) => r.re));
					const minDist = Math.min(
						...real.map(([n, d]) => Math.abs(n / d)),
						...pairs.map(([a, , d]) => Math.abs(a / d))
					);
					if (minDist > 0.05 && desc.length < 12) expect(maxRe < 0).toBe(stable);
				}
			),
			{ numRuns: 200 }
		);
	});
});
