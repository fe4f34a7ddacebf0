import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeTestDb, createTeam, testDb } from '../../factories';
import { decodeDevalue, signedIn, type Client } from '../../helpers/http';
import { closeDb } from '../../../src/lib/server/db';
import { stopBoss } from '../../../src/lib/server/jobs/boss';

// Model entry as a person writes it, through the API and the publish form: an expression is stored as the
// equal tf (same content, same hash), and a bad expression, a lone complex pole or a wrong matrix shape is
// refused naming the field, with nothing stored.

let team: Awaited<ReturnType<typeof createTeam>>;
let analyst: Client;

beforeAll(async () => {
	team = await createTeam();
	analyst = await signedIn(team.users.analyst.email, team.users.analyst.password);
});
afterAll(async () => {
	await stopBoss();
	await closeDb();
	await closeTestDb();
});

async function newModel(name: string): Promise<number> {
	const res = await analyst.json(`/api/v1/projects/${team.project.key}/models`, 'POST', { name });
	expect(res.status).toBe(201);
	return (await res.json()).id;
}

async function publish(modelId: number, model: unknown, label = 'hover, 20 C') {
	const res = await analyst.json(`/api/v1/projects/${team.project.key}/models/${modelId}/versions`, 'POST', {
		note: 'test',
		operatingPoints: [{ label, model }]
	});
	return { status: res.status, body: await res.json() };
}

const versionsOf = async (modelId: number) => testDb()('model_versions').where({ model_id: modelId });

async function formPost(
	modelId: number,
	fields: Record<string, string>,
	file?: { name: string; text: string }
) {
	const form = new FormData();
	form.set('note', '');
	for (const [k, v] of Object.entries(fields)) form.set(k, v);
	if (file) form.set('file', new Blob([file.text], { type: 'text/csv' }), file.name);
	const res = await analyst.request(`/p/${team.project.key}/models/${modelId}/publish?/publish`, {
		method: 'POST',
		headers: { accept: 'application/json', 'x-sveltekit-action': 'true' },
		body: form
	});
	const out = await res.json();
	return {
		type: out.type as string,
		status: out.status as number,
		location: out.location as string,
		errors: (out.data ? decodeDevalue(out.data).errors : {}) as Record<string, string>
	};
}

// The tf from expanding 66/((s+1.1)(s+3.5)(s+9)) with sympy 1.11 (tests/unit/models/reference/
// expansions.py, case 1): den = s^3 + 68/5 s^2 + 181/4 s + 693/20, each the nearest double.
const EXPANDED = { kind: 'tf', num: [66], den: [1, 13.6, 45.25, 34.65] };

describe('the expression kind in the API', () => {
	it('stores an expression as the equal tf, with the same hash as that tf sent as JSON', async () => {
		const typed = await newModel('expression loop');
		const asJson = await newModel('tf loop');
		const a = await publish(typed, { kind: 'expression', expression: '66/((s+1.1)(s+3.5)(s+9))' });
		expect(a.status).toBe(201);
		expect(a.body.operatingPoints).toEqual([{ label: 'hover, 20 C', model: EXPANDED }]);
		const b = await publish(asJson, EXPANDED);
		expect(b.status).toBe(201);
		expect(b.body.contentHash).toBe(a.body.contentHash);
		const [stored] = await versionsOf(typed);
		expect(stored.content).toEqual({ operatingPoints: [{ label: 'hover, 20 C', model: EXPANDED }] });
		// The same model again, as JSON, on the first model: identical content, nothing new.
		const again = await publish(typed, EXPANDED);
		expect(again.status).toBe(200);
		expect(again.body).toMatchObject({ created: false, id: a.body.id, contentHash: a.body.contentHash });
	});

	it('refuses bad expressions with 400 naming the field and the column, storing nothing', async () => {
		const modelId = await newModel('refused expressions');
		const field = 'operatingPoints.0.model.expression';
		const cases: [string, RegExp][] = [
			['(s+1)/(s+k)', /^column 10: unknown symbol "k"/],
			['exp(-0.1s)/(s+1)', /^column 1: exp\(\.\.\.\) is not a polynomial term/],
			['1/(s + sin(s))', /^column 8: sin\(\.\.\.\) is not a polynomial term/],
			['1/(s^0.5 + 1)', /^column 5: the power 0.5 is not a whole number/],
			['(s+1)/(s-s)', /^column 6: division by zero/],
			['(s^2+1)/(s+1)', /improper model/]
		];
		for (const [expression, message] of cases) {
			const r = await publish(modelId, { kind: 'expression', expression });
			expect(r.status, expression).toBe(400);
			expect(r.body.error.fields[field], expression).toMatch(message);
		}
		const extra = await publish(modelId, { kind: 'expression', expression: '1/(s+1)', delay: 0.1 });
		expect(extra.status).toBe(400);
		expect(extra.body.error.fields['operatingPoints.0.model']).toMatch(/unknown field "delay"/);
		const notText = await publish(modelId, { kind: 'expression', expression: 4 });
		expect(notText.status).toBe(400);
		expect(notText.body.error.fields[field]).toMatch(/must be text/);
		expect(await versionsOf(modelId)).toHaveLength(0);
	});
});

describe('the publish form, point by point and from CSV', () => {
	it('publishes typed points and refuses a wrong matrix shape and a lone complex pole in place', async () => {
		const modelId = await newModel('form loop');
		const wrong = await formPost(modelId, {
			mode: 'points',
			count: '2',
			'p0.label': 'cruise',
			'p0.form': 'zpk',
			'p0.zeros': '',
			'p0.poles': '-1\n-0.2 + 3.1j',
			'p0.gain': '5',
			'p1.label': 'cold',
			'p1.form': 'ss',
			'p1.A': '0 1; -4 -0.4',
			'p1.B': '0 1',
			'p1.C': '4 0',
			'p1.D': ''
		});
		expect(wrong).toMatchObject({ type: 'failure', status: 400 });
		expect(wrong.errors['p0.poles']).toMatch(/^Row 2, column 1: "-0.2 \+ 3.1j" has no conjugate/);
		expect(wrong.errors['p1.B']).toMatch(/^Row 1, column 2: B is a column of 2 entries/);
		expect(wrong.errors._).toMatch(/Nothing was published: 2 problems/);
		expect(await versionsOf(modelId)).toHaveLength(0);

		const ok = await formPost(modelId, {
			mode: 'points',
			count: '2',
			'p0.label': 'cruise',
			'p0.form': 'zpk',
			'p0.poles': '-1\n-0.2 ± 3.1j',
			'p0.gain': '5',
			'p1.label': 'hover',
			'p1.form': 'expression',
			'p1.expression': '66/((s+1.1)(s+3.5)(s+9))'
		});
		expect(ok).toMatchObject({ type: 'redirect', location: `/p/${team.project.key}/models/${modelId}/v/1` });
		const [v] = await versionsOf(modelId);
		expect(v.content.operatingPoints).toEqual([
			{
				label: 'cruise',
				model: {
					kind: 'zpk',
					zeros: [],
					poles: [
						[-1, 0],
						[-0.2, 3.1],
						[-0.2, -3.1]
					],
					gain: 5
				}
			},
			{ label: 'hover', model: EXPANDED }
		]);
	});

	it('publishes a CSV file in our layout and names the line of a bad row', async () => {
		const modelId = await newModel('csv loop');
		const header = 'label,expression,zeros,poles,gain,A,B,C,D';
		const bad = await formPost(
			modelId,
			{ mode: 'points', count: '0' },
			{ name: 'points.csv', text: `${header}\nhover,1/(s+1),,,,,,,\ncold,,,,,0 1; -4 -0.4,0; 1; 2,4 0,\n` }
		);
		expect(bad).toMatchObject({ type: 'failure', status: 400 });
		expect(bad.errors.file).toMatch(
			/^Line 3: Operating point 2 \(cold\), matrix B, row 3: B has 3 rows but A has 2 states/
		);
		expect(await versionsOf(modelId)).toHaveLength(0);
		const good = await formPost(
			modelId,
			{ mode: 'points', count: '0' },
			{ name: 'points.csv', text: `${header}\n"hover, 20 C",66/((s+1.1)(s+3.5)(s+9)),,,,,,,\n` }
		);
		expect(good.type).toBe('redirect');
		const [v] = await versionsOf(modelId);
		expect(v.content.operatingPoints).toEqual([{ label: 'hover, 20 C', model: EXPANDED }]);
	});
});
