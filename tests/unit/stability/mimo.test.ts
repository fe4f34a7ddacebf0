// Multivariable circle criterion (issue 17, item 3). Expected limits from reference/mimo-reference.json,
// written by reference/mimo_reference.py with Debian's python3-sympy (G = C (sI - A)^-1 B symbolically, the
// Hermitian part of Z(jw) = [I + K2 G][I + K1 G]^-1, its leading principal minors as exact rational
// functions of w, real-root isolation; Routh array for the closed loop with K1) and python3-mpmath (the
// 500-point-grid estimate). The limit t* of the sector [K1, K1 + t K0] is bracketed there by exact bisection.
import { readFileSync } from 'node:fs';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { runCheck, type Model } from '../../../src/lib/stability/index';
import { gridMinors } from '../../../scripts/bench/mimo';

if (process.env.CI) fc.configureGlobal({ seed: 20261202 });

const ref = JSON.parse(readFileSync(new URL('./reference/mimo-reference.json', import.meta.url), 'utf8'));
const LIBS = `sympy ${ref.versions.sympy}, exact minors of the Hermitian part`;

interface RefCase {
	id: string;
	A: number[][];
	B: number[][];
	C: number[][];
	K1: number[][];
	K0: number[][];
	hurwitzK1: boolean;
	limitLo: string | null;
	limitHi: string | null;
	grid500Limit?: string;
}

const sectorAt = (c: RefCase, t: number) => ({
	K1: c.K1,
	K2: c.K1.map((r, i) => r.map((v, j) => v + t * c.K0[i][j]))
});
const modelOf = (c: RefCase) =>
	({ kind: 'ss', A: c.A, B: c.B, C: c.C, D: c.C.map(() => c.B[0].map(() => 0)) }) as Model;

describe(`multivariable circle criterion against ${LIBS}`, () => {
	for (const c of ref.cases as RefCase[]) {
		const label =
			c.limitLo === null ? 'holds up to t = 64' : `limit t* = ${Number(c.limitLo).toPrecision(12)}`;
		it(`${c.id} (p = ${c.B[0].length}): ${label}`, () => {
			const m = modelOf(c);
			if (c.limitLo === null) {
				expect(runCheck(m, { type: 'circle', sector: sectorAt(c, 64) }).verdict).toBe('pass');
				return;
			}
			const lo = Number(c.limitLo);
			const hi = Number(c.limitHi);
			expect(runCheck(m, { type: 'circle', sector: sectorAt(c, lo * (1 - 1e-6)) }).verdict).toBe('pass');
			const out = runCheck(m, { type: 'circle', sector: sectorAt(c, hi * (1 + 1e-6)) });
			expect(out.verdict).toBe('fail');
			expect(out.numbers.failedMinor).not.toBeNull();
		});
	}

	it('an unstable plant: K1 = 0 is refused as a precondition, K1 = I (which stabilises it) is decided', () => {
		const c = (ref.cases as RefCase[]).find((x) => x.id === 'unstable-stabilised-by-K1')!;
		expect(c.hurwitzK1).toBe(true);
		const zero = c.K1.map((r) => r.map(() => 0));
		const r = runCheck(modelOf(c), { type: 'circle', sector: { K1: zero, K2: c.K0 } });
		expect(r.verdict).toBe('fail');
		expect(r.notApplicable?.precondition).toMatch(/Hurwitz/);
	});

	it('a lightly damped channel between the points of a 500-point grid: the grid overestimates t*, the engine does not', () => {
		const c = (ref.cases as RefCase[]).find((x) => x.id === 'light-damping-grid')!;
		const lo = Number(c.limitLo);
		const grid = Number(c.grid500Limit);
		expect(grid / lo).toBeGreaterThan(2);
		const t = (lo + grid) / 2;
		// The 500-point grid of our own evaluation passes this t too.
		const ws = Array.from({ length: 500 }, (_, i) => 10 ** (-2 + (4 * i) / 499));
		expect(gridMinors(c.A, c.B, c.C, t, ws)).toBeGreaterThan(0);
		expect(runCheck(modelOf(c), { type: 'circle', sector: sectorAt(c, t) }).verdict).toBe('fail');
	});
});

// Random stable 2x2 plants with four states: two second-order modes, coupled through B and C.
const plantArb = fc
	.record({
		w1: fc.double({ min: 0.3, max: 5, noNaN: true }),
		w2: fc.double({ min: 0.3, max: 5, noNaN: true }),
		z1: fc.double({ min: 0.01, max: 0.9, noNaN: true }),
		z2: fc.double({ min: 0.01, max: 0.9, noNaN: true }),
		b: fc.array(fc.double({ min: -1, max: 1, noNaN: true }), { minLength: 8, maxLength: 8 }),
		c: fc.array(fc.double({ min: -1, max: 1, noNaN: true }), { minLength: 8, maxLength: 8 })
	})
	.map(({ w1, w2, z1, z2, b, c }) => ({
		A: [
			[0, 1, 0, 0],
			[-w1 * w1, -2 * z1 * w1, 0, 0],
			[0, 0, 0, 1],
			[0, 0, -w2 * w2, -2 * z2 * w2]
		],
		B: [b.slice(0, 2), b.slice(2, 4), b.slice(4, 6), b.slice(6, 8)],
		C: [c.slice(0, 4), c.slice(4, 8)]
	}));

describe('properties (fast-check)', () => {
	it('a proved multivariable pass is never contradicted by a dense evaluation of the minors (20,000 frequencies)', () => {
		const ws = Array.from({ length: 20000 }, (_, i) => 10 ** (-3 + (5 * i) / 19999));
		let passes = 0;
		fc.assert(
			fc.property(plantArb, fc.double({ min: 0.01, max: 5, noNaN: true }), (pl, t) => {
				const m = {
					kind: 'ss',
					...pl,
					D: [
						[0, 0],
						[0, 0]
					]
				} as Model;
				const r = runCheck(m, {
					type: 'circle',
					sector: {
						K1: [
							[0, 0],
							[0, 0]
						],
						K2: [
							[t, 0],
							[0, t]
						]
					}
				});
				if (r.verdict !== 'pass') return;
				passes++;
				expect(gridMinors(pl.A, pl.B, pl.C, t, ws)).toBeGreaterThan(-1e-9);
			}),
			{ numRuns: 15 }
		);
		expect(passes).toBeGreaterThan(0);
	}, 120_000);
});
