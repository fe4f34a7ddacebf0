// Bad input: every case gives a named ModelInputError from the module (with the field and the reason) and
// exit code 2 from the CLI with the message on stderr; a good case gives exit 0 and results in check order.
import { spawn } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import {
	ModelInputError,
	analyzeCase,
	parseCase,
	parseModel,
	runCheck
} from '../../../src/lib/stability/index';

const good = { kind: 'tf', num: [1], den: [1, 3, 2] };
const withModel = (model: unknown) => ({ model, checks: [{ type: 'circle', sector: [0, 1] }] });
const withCheck = (check: unknown) => ({ model: good, checks: [check] });
const MIMO = {
	kind: 'ss',
	A: [
		[-1, 0],
		[0, -2]
	],
	B: [
		[1, 0],
		[0, 1]
	],
	C: [
		[1, 0],
		[0, 1]
	],
	D: [
		[0, 0],
		[0, 0]
	]
};

// [name, case, expected path fragment, expected message fragment]
const bad: [string, unknown, string, RegExp][] = [
	['empty denominator', withModel({ kind: 'tf', num: [1], den: [] }), 'model.den', /empty/],
	['all-zero denominator', withModel({ kind: 'tf', num: [1], den: [0, 0] }), 'model.den', /all zeros/],
	[
		'leading zero in the denominator',
		withModel({ kind: 'tf', num: [1], den: [0, 1, 2] }),
		'model.den[0]',
		/leading/
	],
	[
		'leading zero in the numerator',
		withModel({ kind: 'tf', num: [0, 1], den: [1, 2] }),
		'model.num[0]',
		/leading/
	],
	['improper model', withModel({ kind: 'tf', num: [1, 2, 3], den: [1, 2] }), 'model.num', /improper/],
	[
		'non-number coefficient',
		withModel({ kind: 'tf', num: ['x'], den: [1, 2] }),
		'model.num[0]',
		/finite number/
	],
	[
		'NaN coefficient (module only; JSON cannot hold it)',
		withModel({ kind: 'tf', num: [NaN], den: [1, 2] }),
		'model.num[0]',
		/finite/
	],
	['unknown kind', withModel({ kind: 'frd', num: [1], den: [1] }), 'model.kind', /kind/],
	[
		'complex pole without partner',
		withModel({ kind: 'zpk', zeros: [], poles: [[-1, 2]], gain: 1 }),
		'model.poles[0]',
		/conjugate/
	],
	[
		'complex zero without partner',
		withModel({
			kind: 'zpk',
			zeros: [[-1, 1]],
			poles: [
				[-1, 0],
				[-2, 0]
			],
			gain: 1
		}),
		'model.zeros[0]',
		/conjugate/
	],
	[
		'improper zpk',
		withModel({
			kind: 'zpk',
			zeros: [
				[-1, 0],
				[-2, 0]
			],
			poles: [[-1, 0]],
			gain: 1
		}),
		'model.zeros',
		/improper/
	],
	[
		'non-square A',
		withModel({ kind: 'ss', A: [[1, 2], [3]], B: [[1], [0]], C: [[1, 0]], D: [[0]] }),
		'model.A[1]',
		/square/
	],
	[
		'B of the wrong size',
		withModel({ kind: 'ss', A: [[-1]], B: [[1], [2]], C: [[1]], D: [[0]] }),
		'model.B',
		/B must be/
	],
	[
		'C of the wrong size',
		withModel({ kind: 'ss', A: [[-1]], B: [[1]], C: [[1, 2]], D: [[0]] }),
		'model.C',
		/C must be/
	],
	[
		'D not 1x1',
		withModel({ kind: 'ss', A: [[-1]], B: [[1]], C: [[1]], D: [[0, 1]] }),
		'model.D',
		/D must be/
	],
	['sector with k1 >= k2', withCheck({ type: 'circle', sector: [2, 1] }), 'checks[0].sector', /k1 < k2/],
	['sector with equal bounds', withCheck({ type: 'circle', sector: [1, 1] }), 'checks[0].sector', /k1 < k2/],
	[
		'sector with a non-finite lower bound',
		withCheck({ type: 'circle', sector: ['Infinity', 2] }),
		'checks[0].sector[0]',
		/finite/
	],
	[
		'Popov with an infinite bound',
		withCheck({ type: 'popov', sector: [0, null] }),
		'checks[0].sector[1]',
		/finite/
	],
	['Popov with k1 != 0', withCheck({ type: 'popov', sector: [1, 2] }), 'checks[0].sector[0]', /k1 must be 0/],
	['unknown check', withCheck({ type: 'bode' }), 'checks[0].type', /check.type/],
	['no checks', { model: good, checks: [] }, 'checks', /empty/],
	['no model', { checks: [{ type: 'margins' }] }, 'model', /model or operatingPoints/],
	// Issue 11, defect 4: every message names the check by its place in the case.
	[
		'a bad upper bound in the second check',
		{
			model: good,
			checks: [
				{ type: 'circle', sector: [0, 1] },
				{ type: 'circle', sector: [0, 'infinite'] }
			]
		},
		'checks[1].sector[1]',
		/null \/ "Infinity"/
	],
	// Issue 11, defect 8: unknown fields are refused, never dropped.
	[
		// "delay" is a known field since engine 2.1 (a transport delay); a misspelling of it is still refused.
		'unknown model field "dealy"',
		withModel({ kind: 'tf', num: [1], den: [1, 1], dealy: 1 }),
		'model.dealy',
		/unknown field "dealy"/
	],
	[
		// Engine 2.1 (issue 17, items 5 and 6): sample time, delay, matrix sizes, domain of the check.
		'sample time zero',
		withModel({ kind: 'tf', num: [1], den: [1, -0.5], sampleTime: 0 }),
		'model.sampleTime',
		/sampleTime must be above 0/
	],
	[
		'sample time negative',
		withModel({ kind: 'zpk', zeros: [], poles: [[0.5, 0]], gain: 1, sampleTime: -0.1 }),
		'model.sampleTime',
		/sampleTime must be above 0/
	],
	[
		'sample time not a number',
		withModel({ kind: 'tf', num: [1], den: [1, -0.5], sampleTime: '0.1' }),
		'model.sampleTime',
		/sampleTime must be a number/
	],
	[
		'NaN sample time (TypeScript caller)',
		withModel({ kind: 'tf', num: [1], den: [1, -0.5], sampleTime: NaN }),
		'model.sampleTime',
		/sampleTime must be/
	],
	[
		'NaN-like: an infinite sample time (TypeScript caller; JSON has no Infinity)',
		withModel({ kind: 'tf', num: [1], den: [1, -0.5], sampleTime: Infinity }),
		'model.sampleTime',
		/sampleTime must be/
	],
	[
		'negative delay',
		withModel({ kind: 'tf', num: [1], den: [1, 1], delay: -0.01 }),
		'model.delay',
		/delay must not be negative/
	],
	[
		'delay on a discrete model',
		withModel({ kind: 'tf', num: [1], den: [1, -0.5], sampleTime: 0.1, delay: 0 }),
		'model.delay',
		/discrete model/
	],
	[
		'zero-order hold with a bad sample time',
		withModel({ kind: 'tf', num: [1], den: [1, 1], discretize: { method: 'zoh', sampleTime: 0 } }),
		'model.discretize.sampleTime',
		/above 0/
	],
	[
		'unknown discretisation method',
		withModel({ kind: 'tf', num: [1], den: [1, 1], discretize: { method: 'tustin', sampleTime: 0.1 } }),
		'model.discretize.method',
		/"zoh"/
	],
	[
		'discrete state space with a non-square A',
		withModel({ kind: 'ss', A: [[0.5, 0], [0]], B: [[1], [0]], C: [[1, 0]], D: [[0]], sampleTime: 0.1 }),
		'model.A[1]',
		/not square/
	],
	[
		'rows of B of unequal length',
		withModel({
			kind: 'ss',
			A: [
				[-1, 0],
				[0, -2]
			],
			B: [[1, 0], [1]],
			C: [[1, 0]],
			D: [[0]]
		}),
		'model.B',
		/B must be 2xp/
	],
	[
		'a discrete model given to a continuous check (Popov)',
		{
			model: { kind: 'tf', num: [0.5], den: [1, -0.5], sampleTime: 0.1 },
			checks: [{ type: 'popov', sector: [0, 1] }]
		},
		'checks[0].type',
		/continuous models, and this model is discrete/
	],
	[
		'a discrete model given to the margins check',
		{ model: { kind: 'tf', num: [0.5], den: [1, -0.5], sampleTime: 0.1 }, checks: [{ type: 'margins' }] },
		'checks[0].type',
		/discrete/
	],
	[
		'a continuous model given to the Tsypkin check',
		{ model: good, checks: [{ type: 'tsypkin', sector: [0, 1] }] },
		'checks[0].type',
		/for discrete models/
	],
	[
		'Tsypkin sector not starting at 0',
		{
			model: { kind: 'tf', num: [0.5], den: [1, -0.5], sampleTime: 0.1 },
			checks: [{ type: 'tsypkin', sector: [0.1, 1] }]
		},
		'checks[0].sector[0]',
		/k1 must be 0/
	],
	[
		// Multivariable (issue 17, items 3 and 6).
		'matrix sector with K2 - K1 not positive definite',
		{
			model: MIMO,
			checks: [
				{
					type: 'circle',
					sector: {
						K1: [
							[0, 0],
							[0, 0]
						],
						K2: [
							[1, 0],
							[0, -1]
						]
					}
				}
			]
		},
		'checks[0].sector.K2',
		/positive definite/
	],
	[
		'matrix sector not symmetric',
		{
			model: MIMO,
			checks: [
				{
					type: 'circle',
					sector: {
						K1: [
							[0, 0],
							[0, 0]
						],
						K2: [
							[1, 0.5],
							[0.4, 1]
						]
					}
				}
			]
		},
		'checks[0].sector.K2',
		/symmetric/
	],
	[
		'matrix sector of the wrong size for the plant',
		{
			model: MIMO,
			checks: [{ type: 'circle', sector: { K1: [[0]], K2: [[1]] } }]
		},
		'checks[0].sector.K1',
		/must be 2x2/
	],
	[
		'K2 not square',
		{
			model: MIMO,
			checks: [
				{
					type: 'circle',
					sector: {
						K1: [
							[0, 0],
							[0, 0]
						],
						K2: [[1, 0], [0]]
					}
				}
			]
		},
		'checks[0].sector.K2',
		/square/
	],
	[
		'a scalar sector on a multivariable plant',
		{ model: MIMO, checks: [{ type: 'circle', sector: [0, 1] }] },
		'checks[0].sector',
		/matrix sector/
	],
	[
		'C of the wrong size for a multivariable plant',
		withModel({ ...MIMO, C: [[1, 0]] }),
		'model.C',
		/C must be 2x2/
	],
	[
		'D of the wrong size for a multivariable plant',
		withModel({ ...MIMO, D: [[0]] }),
		'model.D',
		/D must be 2x2/
	],
	[
		'misspelt model field',
		withModel({ kind: 'tf', num: [1], den: [1, 1], sampletime: 0.01 }),
		'model.sampletime',
		/unknown field "sampletime"/
	],
	[
		'unknown zpk field',
		withModel({ kind: 'zpk', zeros: [], poles: [[-1, 0]], gain: 1, Ts: 0.1 }),
		'model.Ts',
		/unknown field "Ts"/
	],
	[
		'unknown ss field',
		withModel({ kind: 'ss', A: [[-1]], B: [[1]], C: [[1]], D: [[0]], E: [[1]] }),
		'model.E',
		/unknown field "E"/
	],
	[
		'unknown check field',
		withCheck({ type: 'circle', sector: [0, 1], timeVarying: false }),
		'checks[0].timeVarying',
		/unknown field "timeVarying"/
	],
	[
		'unknown max-sector field',
		withCheck({ type: 'max-sector', lower: 0, upper: 5 }),
		'checks[0].upper',
		/unknown field "upper"/
	],
	[
		'unknown case field',
		{ model: good, checks: [{ type: 'margins' }], settings: {} },
		'settings',
		/unknown field "settings"/
	],
	[
		'unknown operating point field',
		{ operatingPoints: [{ label: 'a', model: good, weight: 1 }], checks: [{ type: 'margins' }] },
		'operatingPoints[0].weight',
		/unknown field "weight"/
	],
	[
		'duplicate operating point labels',
		{
			operatingPoints: [
				{ label: 'a', model: good },
				{ label: 'a', model: good }
			],
			checks: [{ type: 'margins' }]
		},
		'operatingPoints[1].label',
		/duplicate/
	]
];

describe('module: named input errors', () => {
	it.each(bad)('%s', (_name, input, path, msg) => {
		let err: unknown;
		try {
			parseCase(input);
		} catch (e) {
			err = e;
		}
		expect(err).toBeInstanceOf(ModelInputError);
		const issues = (err as ModelInputError).issues;
		expect(issues.some((i) => i.path === path && msg.test(i.message))).toBe(true);
		expect(() => analyzeCase(input)).toThrow(ModelInputError);
	});

	it('parseModel and runCheck reject bad models directly', () => {
		expect(() => parseModel({ kind: 'tf', num: [1], den: [0] })).toThrow(ModelInputError);
		expect(() => runCheck({ kind: 'tf', num: [1, 2, 3], den: [1] }, { type: 'positive-real' })).toThrow(
			/improper/
		);
	});
});

function runCli(file: string): Promise<{ code: number | null; stdout: string; stderr: string }> {
	return new Promise((resolve) => {
		const p = spawn(process.execPath, ['--import', 'tsx', 'scripts/analyze.ts', file], {
			cwd: process.cwd()
		});
		let stdout = '';
		let stderr = '';
		p.stdout.on('data', (d) => (stdout += d));
		p.stderr.on('data', (d) => (stderr += d));
		p.on('close', (code) => resolve({ code, stdout, stderr }));
	});
}

describe('CLI', () => {
	const dir = mkdtempSync(join(tmpdir(), 'lw-cli-'));
	it('exit 2 with the field named on stderr for every bad input, and for malformed JSON', async () => {
		const jsonable = bad.filter(([name]) => !name.startsWith('NaN'));
		const files = jsonable.map(([, input], i) => {
			const f = join(dir, `bad-${i}.json`);
			writeFileSync(f, JSON.stringify(input));
			return f;
		});
		const broken = join(dir, 'broken.json');
		writeFileSync(broken, '{ "model": ');
		const results = await Promise.all([...files, broken].map(runCli));
		results.forEach((r, i) => {
			expect(r.code, jsonable[i]?.[0] ?? 'malformed JSON').toBe(2);
			expect(r.stdout).toBe('');
			if (i < jsonable.length) expect(r.stderr).toContain(jsonable[i][2]);
			else expect(r.stderr).toMatch(/not valid JSON/);
		});
	}, 180_000);

	it('a valid case prints one result per check, in order, and exits 0', async () => {
		const f = join(dir, 'good.json');
		writeFileSync(
			f,
			JSON.stringify({
				model: good,
				checks: [
					{ type: 'circle', sector: [0, 10] },
					{ type: 'popov', sector: [0, 5] },
					{ type: 'positive-real' },
					{ type: 'max-sector', lower: 0 },
					{ type: 'margins' }
				]
			})
		);
		const r = await runCli(f);
		expect(r.code).toBe(0);
		const out = JSON.parse(r.stdout);
		expect(out.results.map((x: { type: string }) => x.type)).toEqual([
			'circle',
			'popov',
			'positive-real',
			'max-sector',
			'margins'
		]);
		expect(out.results[0].verdict).toBe('pass');
		expect(out.results[2].class).toBe('neither');
		// 1/((s+1)(s+2)): k2* = -1/min Re G with x* = 2 + 3 sqrt 2 (reference.test.ts derivation).
		const xs = 2 + 3 * Math.SQRT2;
		expect(out.results[3].threshold).toBeCloseTo(-((1 + xs) * (4 + xs)) / (2 - xs), 5);
	}, 60_000);

	it('an infinite upper bound in every documented spelling is analysed, not refused (issue 11, defect 4)', async () => {
		// G = 1/(s+1): Re G(jw) = 1/(1 + w^2) > 0, so [0, infinity] holds (Khalil, 3rd ed., section 7.1, k1 = 0).
		const f = join(dir, 'infinite.json');
		writeFileSync(
			f,
			JSON.stringify({
				model: { kind: 'tf', num: [1], den: [1, 1] },
				checks: [
					{ type: 'circle', sector: [0, 'Infinity'] },
					{ type: 'circle', sector: [0, null] },
					{ type: 'circle', sector: [0, 'inf'] }
				]
			})
		);
		const r = await runCli(f);
		expect(r.stderr).toBe('');
		expect(r.code).toBe(0);
		const out = JSON.parse(r.stdout);
		expect(out.results.map((x: { verdict: string }) => x.verdict)).toEqual(['pass', 'pass', 'pass']);
	}, 60_000);

	it('operating points: the aggregate names the worst point', async () => {
		const f = join(dir, 'points.json');
		writeFileSync(
			f,
			JSON.stringify({
				operatingPoints: [
					{ label: 'cruise', model: { kind: 'tf', num: [1], den: [1, 3, 2] } },
					{ label: 'take-off', model: { kind: 'tf', num: [4], den: [1, 3, 3, 1] } }
				],
				checks: [
					{ type: 'circle', sector: [0, 3] },
					{ type: 'max-sector', lower: 0 }
				]
			})
		);
		const r = await runCli(f);
		expect(r.code).toBe(0);
		const out = JSON.parse(r.stdout);
		// 4/(s+1)^3 has min Re G = -1 (4 x -1/4), so [0, 3] fails there; 1/((s+1)(s+2)) passes.
		expect(out.results[0].verdict).toBe('fail');
		expect(out.results[0].worstPoint).toBe('take-off');
		expect(out.results[0].perPoint.map((p: { verdict: string }) => p.verdict)).toEqual(['pass', 'fail']);
		expect(out.results[1].worstPoint).toBe('take-off');
		expect(out.results[1].threshold).toBeCloseTo(1, 5);
	}, 60_000);
});
