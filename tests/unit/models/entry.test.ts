import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import {
	buildPoint,
	buildPoints,
	emptyEntry,
	entryFromModel,
	issueText,
	modelInputSchema,
	parseMatrix,
	parseRoots,
	parseStateSpace,
	parseTransferExpression,
	pointsFromCsv,
	tfExpression,
	type EntryPoint
} from '../../../src/lib/models/entry/index';
import { decimalToQ, q, toDouble } from '../../../src/lib/models/entry/rational';

// Reference coefficients: sympy 1.11 expand() of each typed expression's numerator and denominator,
// converted by Python's float() (correctly rounded); written by tests/unit/models/reference/expansions.py
// (run with Debian's /usr/bin/python3, python3-sympy). The script also checks with sympy that the written-
// out ratio equals the typed text.
const REF = JSON.parse(readFileSync(new URL('./reference/expansions.json', import.meta.url), 'utf8')) as {
	source: string;
	cases: { typed: string; num: number[]; den: number[] }[];
};

const entry = (over: Partial<EntryPoint>): EntryPoint => ({ ...emptyEntry('nominal'), ...over });

describe('transfer-function expressions against sympy expansions', () => {
	it.each(REF.cases)('$typed', ({ typed, num, den }) => {
		const r = parseTransferExpression(typed);
		expect(r).toEqual({ ok: true, num, den });
	});

	it('expands exactly, where floating point would not give the coefficients a person writes', () => {
		// Binary floating point: 1.1 * 3.5 * 9 = 34.650000000000006 (IEEE 754 doubles, evaluated here);
		// sympy's exact product is 693/20, whose nearest double prints as 34.65 (reference file, case 1).
		expect(1.1 * 3.5 * 9).not.toBe(34.65);
		const r = parseTransferExpression('66/((s+1.1)(s+3.5)(s+9))');
		expect(r.ok && r.den[3]).toBe(34.65);
	});

	it('takes implicit multiplication, s(...), typographic signs and negative whole powers', () => {
		expect(parseTransferExpression('2s(s+1)')).toEqual({ ok: true, num: [2, 2, 0], den: [1] });
		expect(parseTransferExpression('1 / (s + 1) × 4')).toEqual({ ok: true, num: [4], den: [1, 1] });
		expect(parseTransferExpression('(s\u22121)(s+1)^-2')).toEqual({ ok: true, num: [1, -1], den: [1, 2, 1] });
	});

	it('keeps a common factor that was written (the engine decides about hidden modes)', () => {
		// (s+1)/((s+1)(s+2)): expanded as written, nothing cancelled.
		expect(parseTransferExpression('(s+1)/((s+1)(s+2))')).toEqual({ ok: true, num: [1, 1], den: [1, 3, 2] });
	});
});

describe('refused expressions name the column and the reason', () => {
	const refused = (text: string) => {
		const r = parseTransferExpression(text);
		if (r.ok) throw new Error(`${text} was accepted`);
		return r.problem;
	};
	it('an unknown symbol', () => {
		const p = refused('(s+1)/(s+k)');
		expect(p.column).toBe(10);
		expect(p.message).toMatch(/unknown symbol "k"/);
		// The "e" of a numeral is not a symbol; the symbol after it is found at its own place.
		expect(refused('1e-3 s + w').column).toBe(10);
	});
	it('exp(s), sin(s) and a fractional power', () => {
		const e = refused('1/(s+1) * exp(-0.1s)');
		expect(e.column).toBe(11);
		expect(e.message).toMatch(/exp\(\.\.\.\) is not a polynomial term/);
		const sn = refused('s + sin(s)');
		expect(sn.column).toBe(5);
		expect(sn.message).toMatch(/sin\(\.\.\.\) is not a polynomial term/);
		const half = refused('1/(s^2 + s^0.5)');
		expect(half.column).toBe(11);
		expect(half.message).toMatch(/power 0.5 is not a whole number/);
	});
	it('division by a polynomial that is zero, and text that is not an expression', () => {
		const z = refused('(s+1)/(s - s)');
		expect(z.column).toBe(6);
		expect(z.message).toMatch(/division by zero/);
		expect(refused('(s+1')).toEqual({ column: 5, message: 'parenthesis ) expected' });
		expect(refused('s == 1').message).toMatch(/operator "==" is not allowed/);
		expect(refused('  ').message).toMatch(/enter a transfer function/);
	});
});

describe('zeros and poles as rows', () => {
	it('reads reals, conjugate pairs written with ± and pairs written as two entries', () => {
		expect(parseRoots('-1\n-0.2 ± 3.1j\n-3, -4', 'pole')).toEqual({
			ok: true,
			value: [
				[-1, 0],
				[-0.2, 3.1],
				[-0.2, -3.1],
				[-3, 0],
				[-4, 0]
			]
		});
		expect(parseRoots('-1 + 2j; -1 - 2j\n±5i\n-2 +- j', 'zero')).toEqual({
			ok: true,
			value: [
				[-1, 2],
				[-1, -2],
				[0, 5],
				[0, -5],
				[-2, 1],
				[-2, -1]
			]
		});
	});
	it('refuses a lone complex root, naming its row and column', () => {
		const r = parseRoots('-1\n-3, -0.2 + 3.1j', 'pole');
		expect(r).toMatchObject({ ok: false, problem: { row: 2, column: 5 } });
		expect(!r.ok && r.problem.message).toMatch(/no conjugate -0.2 - 3.1j/);
		const bad = parseRoots('-1\n-2x', 'zero');
		expect(bad).toMatchObject({ ok: false, problem: { row: 2, column: 1 } });
	});
	it('gives the same model as the zpk typed as JSON', () => {
		const b = buildPoint(entry({ form: 'zpk', zeros: '', poles: '-1 ± 2j', gain: '5' }), 0);
		expect(b.ok && b.model).toEqual({
			kind: 'zpk',
			zeros: [],
			poles: [
				[-1, 2],
				[-1, -2]
			],
			gain: 5
		});
	});
});

describe('state-space matrices as pasted', () => {
	const A = [
		[0, 1],
		[-4, -0.4]
	];
	it.each([
		['rows on lines', '0 1\n-4 -0.4'],
		['semicolons', '0, 1; -4, -0.4'],
		['bracketed', '[0 1; -4 -0.4]'],
		['nested brackets', '[[0, 1], [-4, -0.4]]'],
		['a numerics console print', 'array([[ 0. ,  1. ],\n       [-4. , -0.4]])'],
		['tabs and a trailing semicolon', '0\t1;\n-4\t-0.4;']
	])('%s', (_what, text) => {
		expect(parseMatrix(text)).toEqual({ ok: true, value: A });
	});
	it('refuses wrong shapes naming the matrix, row and column', () => {
		const ss = (A: string, B: string, C: string, D = '') => parseStateSpace({ A, B, C, D });
		expect(ss('0 1\n-4 -0.4 7', '0; 1', '4 0')).toMatchObject({
			ok: false,
			matrix: 'A',
			problem: { row: 2, column: 3 }
		});
		expect(ss('0 1\n-4', '0; 1', '4 0')).toMatchObject({
			ok: false,
			matrix: 'A',
			problem: { row: 2, column: 2 }
		});
		expect(ss('0 1; -4 -0.4', '0 1', '4 0')).toMatchObject({
			ok: false,
			matrix: 'B',
			problem: { row: 1, column: 2 }
		});
		expect(ss('0 1; -4 -0.4', '0; 1; 2', '4 0')).toMatchObject({
			ok: false,
			matrix: 'B',
			problem: { row: 3 }
		});
		expect(ss('0 1; -4 -0.4', '0; 1', '4 0 1')).toMatchObject({
			ok: false,
			matrix: 'C',
			problem: { row: 1, column: 3 }
		});
		expect(ss('0 1; -4 -0.4', '0; 1', '4 0', '0 0')).toMatchObject({
			ok: false,
			matrix: 'D',
			problem: { row: 1, column: 2 }
		});
		expect(ss('0 1; -4 x', '0; 1', '4 0')).toMatchObject({
			ok: false,
			matrix: 'A',
			problem: { row: 2, column: 2 }
		});
		const b = buildPoint(entry({ label: 'cold', form: 'ss', A: '0 1; -4 -0.4', B: '0 1', C: '4 0' }), 2);
		expect(!b.ok && issueText(b.issue)).toMatch(
			/^Operating point 3 \(cold\), matrix B, row 1, column 2: B is a column/
		);
	});
	it('gives the same model as the ss typed as JSON (D empty is 0)', () => {
		const b = buildPoint(entry({ form: 'ss', A: '[0 1; -4 -0.4]', B: '[0; 1]', C: '[4 0]' }), 0);
		expect(b.ok && b.model).toEqual({ kind: 'ss', A, B: [[0], [1]], C: [[4, 0]], D: [[0]] });
	});
});

describe('one point, many points, files', () => {
	it('names the point, the field and the column of an expression problem', () => {
		const b = buildPoint(entry({ label: 'hover', expression: 'exp(-s)/(s+1)' }), 1);
		expect(!b.ok && issueText(b.issue)).toMatch(
			/^Operating point 2 \(hover\), transfer function, column 1: exp\(\.\.\.\) is not a polynomial term/
		);
		const improper = buildPoint(entry({ expression: '(s^2+1)/(s+1)' }), 0);
		expect(!improper.ok && improper.issue).toMatchObject({
			field: 'expression',
			message: expect.stringMatching(/improper/)
		});
	});
	it('shows the polynomials read back', () => {
		const b = buildPoint(entry({ expression: '66/((s+1.1)(s+3.5)(s+9))' }), 0);
		expect(b.ok && b.readback).toEqual({
			form: 'expression',
			numerator: '66',
			denominator: 's^3 + 13.6 s^2 + 45.25 s + 34.65'
		});
	});
	it('refuses a label used twice', () => {
		const r = buildPoints([entry({ expression: '1/(s+1)' }), entry({ expression: '2/(s+1)' })]);
		expect(r.points).toBeNull();
		expect(r.issues).toMatchObject([{ point: 1, field: 'label' }]);
	});
	it('reads our CSV layout, quoted cells included', () => {
		const csv = [
			'label,expression,zeros,poles,gain,A,B,C,D',
			'"hover, 20 C",66/((s+1.1)(s+3.5)(s+9)),,,,,,,',
			'cruise,,,-1 ± 2j,5,,,,',
			'cold,,,,,0 1; -4 -0.4,0; 1,4 0,0'
		].join('\r\n');
		const r = pointsFromCsv(csv);
		if (!r.ok) throw new Error(r.problem.message);
		expect(r.lines).toEqual([2, 3, 4]);
		const built = buildPoints(r.points);
		expect(built.issues).toEqual([]);
		expect(built.points).toEqual([
			{ label: 'hover, 20 C', model: { kind: 'tf', num: [66], den: [1, 13.6, 45.25, 34.65] } },
			{
				label: 'cruise',
				model: {
					kind: 'zpk',
					zeros: [],
					poles: [
						[-1, 2],
						[-1, -2]
					],
					gain: 5
				}
			},
			{
				label: 'cold',
				model: {
					kind: 'ss',
					A: [
						[0, 1],
						[-4, -0.4]
					],
					B: [[0], [1]],
					C: [[4, 0]],
					D: [[0]]
				}
			}
		]);
	});
	it('refuses an unknown CSV column and a row with two forms, naming the row', () => {
		expect(pointsFromCsv('label,num\na,1')).toMatchObject({ ok: false, problem: { row: 1, column: 'num' } });
		expect(pointsFromCsv('label,expression,poles,gain\na,1/(s+1),-1,2')).toMatchObject({
			ok: false,
			problem: { row: 2, message: expect.stringMatching(/2 forms/) }
		});
		expect(pointsFromCsv('label,expression\n"a,1/(s+1)')).toMatchObject({ ok: false, problem: { row: 2 } });
	});
});

describe('the expression kind in JSON', () => {
	it('becomes the equal tf', () => {
		expect(modelInputSchema.parse({ kind: 'expression', expression: '66/((s+1.1)(s+3.5)(s+9))' })).toEqual({
			kind: 'tf',
			num: [66],
			den: [1, 13.6, 45.25, 34.65]
		});
	});
	it('reports problems at "expression" and refuses unknown fields', () => {
		const r = modelInputSchema.safeParse({ kind: 'expression', expression: 's/(s+tau)' });
		expect(r.success).toBe(false);
		expect(r.error?.issues[0]).toMatchObject({
			path: ['expression'],
			message: expect.stringMatching(/^column 6: unknown symbol "tau"/)
		});
		const extra = modelInputSchema.safeParse({ kind: 'expression', expression: '1/(s+1)', delay: 1 });
		expect(extra.error?.issues[0].message).toMatch(/unknown field "delay"/);
		// The engine's kinds go through the engine's schema unchanged.
		expect(modelInputSchema.safeParse({ kind: 'tf', num: [1], den: [0, 1] }).error?.issues[0].path).toEqual([
			'den',
			0
		]);
	});
	it('a stored tf shown as an expression reads back to the same doubles', () => {
		const nasty = [0.1 + 0.2, 1e-7, -3.3333333333333335, 123456.789, 2 ** -40, 7];
		const text = tfExpression([nasty[0], nasty[1]], [1, ...nasty.slice(2)]);
		expect(parseTransferExpression(text)).toEqual({
			ok: true,
			num: [nasty[0], nasty[1]],
			den: [1, ...nasty.slice(2)]
		});
		const e = entryFromModel('x', {
			kind: 'zpk',
			zeros: [[-1, 0]],
			poles: [
				[-0.2, 3.1],
				[-0.2, -3.1],
				[-5, 0]
			],
			gain: 2
		});
		const b = buildPoint(e, 0);
		expect(b.ok && b.model).toEqual({
			kind: 'zpk',
			zeros: [[-1, 0]],
			poles: [
				[-0.2, 3.1],
				[-0.2, -3.1],
				[-5, 0]
			],
			gain: 2
		});
	});
});

describe('exact rationals to doubles', () => {
	// Python 3.11 float(fractions.Fraction(n, d)), which is correctly rounded (evaluated with /usr/bin/python3).
	it.each([
		[1n, 3n, 0.3333333333333333],
		[2n, 3n, 0.6666666666666666],
		[10n ** 30n + 1n, 7n, 1.4285714285714285e29],
		[1n, 10n ** 25n, 1e-25],
		[123456789012345678901234567890n, 987654321n, 1.249999988734375e20],
		[9007199254740993n, 1n, 9007199254740992]
	])('%s / %s', (n, d, want) => {
		expect(toDouble(q(n, d))).toBe(want);
	});
	it('reads decimal numerals exactly', () => {
		expect(decimalToQ('1.1')).toEqual({ n: 11n, d: 10n });
		expect(decimalToQ('-3.5e-2')).toEqual({ n: -7n, d: 200n });
		expect(decimalToQ('2.')).toEqual({ n: 2n, d: 1n });
		expect(decimalToQ('e5')).toBeNull();
	});
});
