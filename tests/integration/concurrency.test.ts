import { createHash } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeTestDb, createTeam, testDb } from '../factories';
import { signedIn, type Client } from '../helpers/http';

// Two people at once: stale edits are refused with what changed, a publish racing a specification
// edit loses neither (the final inputs get their run), and simultaneous uploads are both kept.

afterAll(closeTestDb);

let team: Awaited<ReturnType<typeof createTeam>>;
let engineer: Client;
let engineer2: Client;
let analyst: Client;
beforeAll(async () => {
	team = await createTeam();
	engineer = await signedIn(team.users.engineer.email, team.users.engineer.password);
	engineer2 = await signedIn(team.users.engineer.email, team.users.engineer.password);
	analyst = await signedIn(team.users.analyst.email, team.users.analyst.password);
});

async function newRequirement(statement: string) {
	const res = await engineer.json(`/api/v1/projects/${team.project.key}/requirements`, 'POST', {
		title: 'Race test',
		statement,
		level: 'loop',
		assuranceLevel: 'B',
		methods: ['analysis']
	});
	expect(res.status, await res.clone().text()).toBe(201);
	return (await res.json()).requirement as { id: number; revision?: number };
}

// G(s) = k / (s + 1): Re G(jw) = k / (1 + w^2) > 0, so the circle criterion holds for every sector
// [0, k2] (own derivation); two different gains make two different versions.
const firstOrder = (k: number) => ({
	note: `gain ${k}`,
	operatingPoints: [{ label: 'nominal', model: { kind: 'tf', num: [k], den: [1, 1] } }]
});

describe('concurrent edits', () => {
	it('two engineers edit the same revision: one wins, the other gets 409 with what changed', async () => {
		const r = await newRequirement(
			'The loop shall remain absolutely stable for every gain in the sector [0, 2].'
		);
		const [a, b] = await Promise.all([
			engineer.json(`/api/v1/requirements/${r.id}`, 'PATCH', { revision: 1, title: 'Edited by A' }),
			engineer2.json(`/api/v1/requirements/${r.id}`, 'PATCH', { revision: 1, title: 'Edited by B' })
		]);
		const statuses = [a.status, b.status].sort();
		expect(statuses).toEqual([200, 409]);
		const loser = a.status === 409 ? a : b;
		const body = await loser.json();
		expect(body.error.currentRevision).toBe(2);
		expect(JSON.stringify(body.error.changed)).toMatch(/Edited by/);
		const revisions = await testDb()('requirement_revisions')
			.where({ requirement_id: r.id })
			.orderBy('revision');
		expect(revisions.map((x) => x.revision)).toEqual([1, 2]);
	});

	it('a publish racing a specification edit: both are recorded and the final inputs are analysed', async () => {
		const m = await analyst.json(`/api/v1/projects/${team.project.key}/models`, 'POST', {
			name: `race ${Date.now()}`
		});
		expect(m.status).toBe(201);
		const modelId = (await m.json()).id;
		const v1 = await analyst.json(
			`/api/v1/projects/${team.project.key}/models/${modelId}/versions`,
			'POST',
			firstOrder(1)
		);
		expect(v1.status).toBe(201);
		for (let round = 0; round < 3; round++) {
			const r = await newRequirement(
				'The loop shall remain absolutely stable for every gain in the sector [0, 2].'
			);
			const spec = (k2: number) => ({ check: { type: 'circle', sector: [0, k2] }, modelId });
			expect((await engineer.json(`/api/v1/requirements/${r.id}/specification`, 'PUT', spec(2))).status).toBe(
				201
			);
			const [pub, edit] = await Promise.all([
				analyst.json(
					`/api/v1/projects/${team.project.key}/models/${modelId}/versions`,
					'POST',
					firstOrder(2 + round)
				),
				engineer.json(`/api/v1/requirements/${r.id}/specification`, 'PUT', spec(3))
			]);
			expect(pub.status, await pub.clone().text()).toBe(201);
			expect(edit.status, await edit.clone().text()).toBe(201);
			const req = await testDb()('requirements').where({ id: r.id }).first();
			const latest = await testDb()('model_versions')
				.where({ model_id: modelId })
				.orderBy('version', 'desc')
				.first();
			// The combination now in force (new specification x newest version) has its own run.
			const deadline = Date.now() + 20_000;
			let run;
			while (Date.now() < deadline) {
				run = await testDb()('analysis_runs')
					.where({ requirement_id: r.id, spec_id: req.current_spec_id, model_version_id: latest.id })
					.first();
				if (run?.status === 'done') break;
				await new Promise((res) => setTimeout(res, 200));
			}
			expect(run, `round ${round}: no run for the final specification x version`).toBeTruthy();
			expect(run.status).toBe('done');
			expect(run.verdict).toBe('pass');
		}
	}, 90_000);

	it('two simultaneous uploads of the same file are both kept, each with its own row', async () => {
		const r = await newRequirement(
			'The loop shall remain absolutely stable for every gain in the sector [0, 2].'
		);
		const content = Buffer.from(
			'frequency_hz,magnitude_db,phase_deg\n0.1,0.0,-5.7\n1,-3.0,-45\n10,-20.0,-84.3\n'
		);
		const sha = createHash('sha256').update(content).digest('hex');
		const upload = () => {
			const form = new FormData();
			form.set('title', 'Rig sweep');
			form.set('kind', 'test-report');
			form.set('requirementIds', String(r.id));
			form.set('file', new Blob([content], { type: 'text/csv' }), 'sweep.csv');
			return engineer.request(`/api/v1/projects/${team.project.key}/evidence`, {
				method: 'POST',
				body: form,
				headers: { accept: 'application/json' }
			});
		};
		const [a, b] = await Promise.all([upload(), upload()]);
		expect(a.status, await a.clone().text()).toBe(201);
		expect(b.status).toBe(201);
		const [ja, jb] = [await a.json(), await b.json()];
		expect(ja.id).not.toBe(jb.id);
		expect(ja.sha256).toBe(sha);
		expect(jb.sha256).toBe(sha);
	});
});
