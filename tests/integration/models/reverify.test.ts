import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
	addMember,
	closeTestDb,
	createModel,
	createModelVersion,
	createRequirement,
	createRun,
	createSpec,
	createTeam,
	createUser,
	testDb
} from '../../factories';
import { decodeDevalue, signedIn, type Client } from '../../helpers/http';
import { allMail, expectMailTo, mailTo } from '../../helpers/mail';
import { enqueueForModelVersion } from '../../../src/lib/server/analyses/queue';
import { analysisStates } from '../../../src/lib/server/verification/service';
import { closeDb } from '../../../src/lib/server/db';
import { runJobPolicy, stopBoss } from '../../../src/lib/server/jobs/boss';
import { processRun } from '../../../src/lib/server/analyses/run';
import { config } from '../../../src/lib/server/config';
import { ENGINE_VERSION } from '../../../src/lib/stability/index';
import { queueForEngineVersion } from '../../../src/lib/server/analyses/engine-version';
import { verifyChain } from '../../../src/lib/server/audit';
import {
	CUBE,
	LAG,
	killGroup,
	pauseHarnessWorker,
	points,
	resumeHarnessWorker,
	settled,
	spawnWorker,
	waitFor
} from './helpers';

// Publishing a model version re-verifies every requirement that uses it, through the job queue and the
// worker, with the verdicts' reference values derived by hand in ./helpers.ts.

let team: Awaited<ReturnType<typeof createTeam>>;
let analyst: Client;

beforeAll(async () => {
	team = await createTeam();
	analyst = await signedIn(team.users.analyst.email, team.users.analyst.password);
});
afterAll(async () => {
	resumeHarnessWorker();
	await stopBoss();
	await closeDb();
	await closeTestDb();
});

async function newModel(name: string): Promise<number> {
	const res = await analyst.json(`/api/v1/projects/${team.project.key}/models`, 'POST', {
		name,
		description: 'test loop'
	});
	const body = await res.json();
	expect(res.status, JSON.stringify(body)).toBe(201);
	return body.id;
}

async function publish(modelId: number, operatingPoints: unknown, note = 'test') {
	const res = await analyst.json(`/api/v1/projects/${team.project.key}/models/${modelId}/versions`, 'POST', {
		note,
		operatingPoints
	});
	return { status: res.status, body: await res.json() };
}

async function requirementOn(
	modelId: number,
	sector: [number, number],
	ownerId: number | null = team.users.engineer.id
) {
	const r = await createRequirement(team.project.id, { ownerId });
	await createSpec(r.id, { modelId, check: { type: 'circle', sector } });
	return r.id;
}

const runsOf = (ids: number[]) => testDb()('analysis_runs').whereIn('requirement_id', ids).orderBy('id');
const jobsFor = async (runIds: number[]) =>
	(
		await testDb().raw(
			`select count(*)::int as n from pgboss.job where name = 'analysis-run' and (data->>'runId')::bigint = any(?::bigint[])`,
			[runIds]
		)
	).rows[0].n as number;

describe('publishing a model version', () => {
	it('queues one run and one job per dependent requirement in the same transaction; a rollback leaves neither', async () => {
		const modelId = await newModel('rollback loop');
		const a = await requirementOn(modelId, [0, 3]);
		const b = await requirementOn(modelId, [0, 5]);
		const { status, body } = await publish(modelId, points(CUBE));
		expect(status).toBe(201);
		expect(body.runsQueued).toBe(2);
		// Committed together: the runs and their jobs exist as soon as the answer arrives.
		const runs = await runsOf([a, b]);
		expect(runs.map((r) => r.model_version_id)).toEqual([body.id, body.id]);
		expect(await jobsFor(runs.map((r) => Number(r.id)))).toBe(2);

		// The same queuing inside a transaction that is rolled back: no version, no run, no job.
		const before = (await runsOf([a, b])).length;
		let seenInside = { runs: 0, jobs: 0 };
		await expect(
			testDb().transaction(async (trx) => {
				const [v] = await trx('model_versions')
					.insert({
						model_id: modelId,
						version: 2,
						note: 'rolled back',
						content: JSON.stringify({ operatingPoints: points(LAG) }),
						content_hash: 'f'.repeat(64)
					})
					.returning('id');
				await trx('models').where({ id: modelId }).update({ latest_version: 2 });
				const queued = await enqueueForModelVersion(trx, Number(v.id), { kind: 'model-publish' });
				const ids = (await trx('analysis_runs').where({ model_version_id: v.id }).pluck('id')).map(Number);
				const jobs = (
					await trx.raw(
						`select count(*)::int as n from pgboss.job where name = 'analysis-run' and (data->>'runId')::bigint = any(?::bigint[])`,
						[ids]
					)
				).rows[0].n;
				seenInside = { runs: queued, jobs };
				throw new Error('roll back');
			})
		).rejects.toThrow('roll back');
		expect(seenInside).toEqual({ runs: 2, jobs: 2 });
		expect((await runsOf([a, b])).length).toBe(before);
		expect((await testDb()('models').where({ id: modelId }).first()).latest_version).toBe(1);
		expect(await testDb()('model_versions').where({ model_id: modelId, version: 2 }).first()).toBeUndefined();
	});

	it('the worker completes the runs; verdicts, proved numbers and curves are stored', async () => {
		const modelId = await newModel('cube loop');
		const pass = await requirementOn(modelId, [0, 3]);
		const fail = await requirementOn(modelId, [0, 5]);
		const { body } = await publish(modelId, points(CUBE));
		await settled([pass, fail]);
		const states = await analysisStates(testDb(), [pass, fail]);
		expect(states.get(pass)?.state).toBe('verified');
		expect(states.get(fail)?.state).toBe('not-proved');
		const [rp, rf] = await runsOf([pass, fail]);
		for (const r of [rp, rf]) {
			expect(r.status).toBe('done');
			expect(r.model_version_id).toBe(body.id);
			expect(r.model_hash).toBe(body.contentHash);
			expect(r.worst_point).toBe('nominal');
			expect(r.attempts).toBe(1);
			expect(r.output_hash).toMatch(/^[0-9a-f]{64}$/);
			expect(r.duration_ms).toBeGreaterThanOrEqual(0);
			expect(r.trigger).toBe('model-publish');
			expect(r.trigger_ref).toBe(`model-version:${body.id}`);
			// Largest proved k2 for k1 = 0 is -1 / min Re G = 4, reached at w = 1 rad/s (helpers.ts).
			expect(r.result.certifiedUpper).toBeCloseTo(4, 6);
			expect(r.curves.points[0].nyquist.length).toBeGreaterThan(50);
			expect(r.curves.sector.kind).toBe('half-plane');
		}
		// Each job was completed in the transaction that stored its run's result.
		const jobStates = (
			await testDb().raw(
				`select state from pgboss.job where name = 'analysis-run' and (data->>'runId')::bigint = any(?::bigint[])`,
				[[rp.id, rf.id]]
			)
		).rows.map((x: { state: string }) => x.state);
		expect(jobStates).toEqual(['completed', 'completed']);
		expect(rp.verdict).toBe('pass');
		expect(rf.verdict).toBe('fail');
		expect(rf.result.criticalFrequency).toBeCloseTo(1, 3);
		// Each verdict is in the audit trail, filed under its requirement, with the inputs that gave it.
		for (const [reqId, run, verdict] of [
			[pass, rp, 'pass'],
			[fail, rf, 'fail']
		] as const) {
			const ev = await testDb()('audit_events')
				.where({ action: 'analysis.verdict', subject_type: 'requirement', subject_id: String(reqId) })
				.orderBy('seq', 'desc')
				.first();
			expect(ev.actor_label).toMatch(/^worker /);
			expect(ev.project_id).toBe(team.project.id);
			expect(ev.after).toMatchObject({
				run: run.id,
				status: 'done',
				verdict,
				worstPoint: 'nominal',
				outputHash: run.output_hash,
				modelVersionId: body.id,
				modelHash: body.contentHash,
				engineVersion: run.engine_version
			});
		}
		// The curve passes through G(j) = 1/(1+j)^3 = (-1 - j)/4.
		const near1 = (rf.curves.points[0].nyquist as [number, number, number][]).reduce((a, b) =>
			Math.abs(b[0] - 1) < Math.abs(a[0] - 1) ? b : a
		);
		expect(near1[1]).toBeCloseTo(-0.25, 2);
		expect(near1[2]).toBeCloseTo(-0.25, 2);

		// The API reads them back.
		const res = await analyst.get(`/api/v1/requirements/${fail}/analyses`, { accept: 'application/json' });
		expect(res.status).toBe(200);
		const a = await res.json();
		expect(a.state.state).toBe('not-proved');
		expect(a.latest.verdict).toBe('fail');
		expect(a.latest.model.hash).toBe(body.contentHash);
		expect(a.latest.curves.points[0].label).toBe('nominal');
		const one = await analyst.get(`/api/v1/analyses/${rf.id}`, { accept: 'application/json' });
		expect((await one.json()).result.certifiedUpper).toBeCloseTo(4, 6);
	});

	it('a second identical publish creates nothing and runs nothing twice', async () => {
		const modelId = await newModel('idempotent loop');
		const r = await requirementOn(modelId, [0, 3]);
		const first = await publish(modelId, points(LAG), 'first');
		expect(first.status).toBe(201);
		await settled([r]);
		// Same content with keys in another order and another note: the canonical hash is the same.
		const second = await publish(
			modelId,
			[{ model: { den: [1, 1], num: [1], kind: 'tf' }, label: 'nominal' }],
			'again'
		);
		expect(second.status).toBe(200);
		expect(second.body.created).toBe(false);
		expect(second.body.runsQueued).toBe(0);
		expect(second.body.id).toBe(first.body.id);
		expect(second.body.contentHash).toBe(first.body.contentHash);
		// Re-queuing the same inputs directly is refused by the run's unique key too.
		const again = await testDb().transaction((trx) =>
			enqueueForModelVersion(trx, first.body.id, { kind: 'model-publish' })
		);
		expect(again).toBe(0);
		expect((await runsOf([r])).length).toBe(1);
		expect((await testDb()('model_versions').where({ model_id: modelId })).length).toBe(1);
	});

	it('bad JSON and bad models answer 400 naming the fields, and change nothing', async () => {
		const modelId = await newModel('guarded loop');
		const r = await requirementOn(modelId, [0, 3]);
		const snapshot = async () => ({
			versions: (await testDb()('model_versions').where({ model_id: modelId })).length,
			runs: (await runsOf([r])).length,
			latest: (await testDb()('models').where({ id: modelId }).first()).latest_version
		});
		const before = await snapshot();
		const raw = await analyst.request(`/api/v1/projects/${team.project.key}/models/${modelId}/versions`, {
			method: 'POST',
			headers: { 'content-type': 'application/json' },
			body: '{"note": "x", "operatingPoints": ['
		});
		expect(raw.status).toBe(400);
		expect((await raw.json()).error.fields.body).toBeTruthy();

		const leadingZero = await publish(modelId, points({ kind: 'tf', num: [1], den: [0, 1, 1] }));
		expect(leadingZero.status).toBe(400);
		expect(leadingZero.body.error.fields['operatingPoints.0.model.den.0']).toMatch(
			/leading denominator coefficient is zero/
		);

		const improper = await publish(modelId, points({ kind: 'tf', num: [1, 0, 0], den: [1, 1] }));
		expect(improper.status).toBe(400);
		expect(improper.body.error.fields['operatingPoints.0.model.num']).toMatch(/improper/);

		const lonelyPole = await publish(modelId, points({ kind: 'zpk', zeros: [], poles: [[-1, 2]], gain: 1 }));
		expect(lonelyPole.status).toBe(400);
		expect(lonelyPole.body.error.fields['operatingPoints.0.model.poles.0']).toMatch(/conjugate/);

		const twice = await publish(modelId, [...points(LAG, 'hover'), ...points(CUBE, 'hover')]);
		expect(twice.status).toBe(400);
		expect(twice.body.error.fields['operatingPoints.1.label']).toMatch(/used twice/);

		// Unknown fields are refused with the field named (issue 11, defect 8), in the model, the operating
		// point and the version body; nothing is silently dropped.
		const delayed = await publish(modelId, points({ kind: 'tf', num: [1], den: [1, 1], dealy: 1 }));
		expect(delayed.status).toBe(400);
		expect(delayed.body.error.fields['operatingPoints.0.model']).toMatch(/unknown field "dealy"/);
		// Engine 2.1 (issue 17, item 6): time fields are known, and a bad value is refused by name.
		const negativeDelay = await publish(modelId, points({ kind: 'tf', num: [1], den: [1, 1], delay: -1 }));
		expect(negativeDelay.status).toBe(400);
		expect(negativeDelay.body.error.fields['operatingPoints.0.model.delay']).toMatch(/not be negative/);
		const zeroSample = await publish(
			modelId,
			points({ kind: 'tf', num: [1], den: [1, -0.5], sampleTime: 0 })
		);
		expect(zeroSample.status).toBe(400);
		expect(zeroSample.body.error.fields['operatingPoints.0.model.sampleTime']).toMatch(/above 0/);
		const weighted = await publish(modelId, [{ label: 'hover', model: LAG, weight: 2 }]);
		expect(weighted.status).toBe(400);
		expect(weighted.body.error.fields['operatingPoints.0']).toMatch(/unknown field "weight"/);
		const extraBody = await analyst.json(
			`/api/v1/projects/${team.project.key}/models/${modelId}/versions`,
			'POST',
			{ note: 'x', operatingPoints: points(LAG), sampleTime: 0.01 }
		);
		expect(extraBody.status).toBe(400);
		expect((await extraBody.json()).error.fields._).toMatch(/unknown field "sampleTime"/);

		const none = await publish(modelId, []);
		expect(none.status).toBe(400);
		expect(none.body.error.fields.operatingPoints).toMatch(/at least one/);

		// The form: unparsable operating points come back as a field error.
		const form = await analyst.action(`/p/${team.project.key}/models/${modelId}/publish?/publish`, {
			note: 'x',
			operatingPoints: '[{"label": '
		});
		expect(form.type).toBe('failure');
		expect(form.status).toBe(400);
		expect(String((form.data?.errors as Record<string, string>).operatingPoints)).toMatch(/not valid JSON/);

		expect(await snapshot()).toEqual(before);
	});

	it('publishes from an uploaded loopwarden-model/1 file through the form, and refuses a file in another format', async () => {
		const modelId = await newModel('uploaded loop');
		const post = async (file: unknown) => {
			const form = new FormData();
			form.set('note', '');
			form.set('operatingPoints', '');
			form.set('file', new Blob([JSON.stringify(file)], { type: 'application/json' }), 'model.json');
			const res = await analyst.request(`/p/${team.project.key}/models/${modelId}/publish?/publish`, {
				method: 'POST',
				headers: { accept: 'application/json', 'x-sveltekit-action': 'true' },
				body: form
			});
			return res.json();
		};
		const ok = await post({
			format: 'loopwarden-model/1',
			note: 'from the rig fit',
			operatingPoints: points(CUBE, 'rig fit')
		});
		expect(ok.type).toBe('redirect');
		expect(ok.location).toBe(`/p/${team.project.key}/models/${modelId}/v/1`);
		const v = await testDb()('model_versions').where({ model_id: modelId, version: 1 }).first();
		expect(v.note).toBe('from the rig fit');
		expect(v.content.operatingPoints[0]).toEqual({ label: 'rig fit', model: CUBE });
		const wrong = await post({ format: 'other/2', operatingPoints: points(LAG) });
		expect(wrong.type).toBe('failure');
		expect(wrong.status).toBe(400);
		const errors = decodeDevalue(wrong.data).errors as Record<string, string>;
		expect(errors.file).toMatch(/format must be "loopwarden-model\/1"/);
		expect((await testDb()('model_versions').where({ model_id: modelId })).length).toBe(1);
	});

	it('an engine refusal is recorded as an error run, never lost', async () => {
		const modelId = await newModel('refused loop');
		const req = await createRequirement(team.project.id, { ownerId: team.users.engineer.id });
		await createSpec(req.id, { modelId, check: { type: 'circle', sector: [0, 3] } });
		// Specs are immutable: a second one, made current, covers an operating point the version lacks.
		const [s] = await testDb()('stability_specs')
			.insert({
				requirement_id: req.id,
				version: 2,
				check: JSON.stringify({ type: 'circle', sector: [0, 3] }),
				operating_points: ['cruise'],
				model_id: modelId,
				content_hash: 'e'.repeat(64)
			})
			.returning('id');
		await testDb()('requirements').where({ id: req.id }).update({ current_spec_id: s.id });
		await publish(modelId, points(LAG, 'hover'));
		await settled([req.id]);
		const [run] = await runsOf([req.id]);
		expect(run.status).toBe('error');
		expect(run.error).toMatch(/cruise/);
		expect((await analysisStates(testDb(), [req.id])).get(req.id)?.state).toBe('error');
		const ev = await testDb()('audit_events')
			.where({ action: 'analysis.error', subject_id: String(req.id) })
			.first();
		expect(ev.after).toMatchObject({ run: run.id, status: 'error', verdict: null });
		expect(ev.after.error).toMatch(/cruise/);
	});
});

describe('engine versions', () => {
	it('a version not seen before is recorded once, with an audit event; seeing it again does nothing', async () => {
		// Another version string than the running engine's: nothing is queued (the running engine's own
		// first start queues every requirement, which would disturb the other tests sharing this database).
		const version = `0.0.0-test-${Date.now()}`;
		expect(await queueForEngineVersion(version)).toEqual({ newVersion: true, queued: 0 });
		expect(await queueForEngineVersion(version)).toEqual({ newVersion: false, queued: 0 });
		const events = await testDb()('audit_events').where({
			action: 'engine.new-version',
			subject_id: version
		});
		expect(events).toHaveLength(1);
		expect(events[0].after).toEqual({ engineVersion: version, runsQueued: 0 });
		expect(await verifyChain(testDb())).toMatchObject({ ok: true });
	});
});

describe('queue health', () => {
	it('the health endpoint reports the job queue', async () => {
		const res = await analyst.get('/api/v1/health', { accept: 'application/json' });
		expect((await res.json()).checks.queue).toBe('ok');
	});
});

describe('verdict-change mail', () => {
	it('a failing transition mails each person concerned exactly once per publish', async () => {
		// People of their own, so mail caused by the other tests cannot blur the counts.
		const ownerA = await createUser({ name: 'First Owner' });
		const ownerB = await createUser({ name: 'Second Owner' });
		const modeller = await createUser({ name: 'Model Owner' });
		await addMember(ownerA.id, team.project.id, 'engineer');
		await addMember(ownerB.id, team.project.id, 'engineer');
		await addMember(modeller.id, team.project.id, 'analyst');
		const modelId = await newModel('mailed loop');
		await testDb()('models').where({ id: modelId }).update({ owner_id: modeller.id });
		const r1 = await requirementOn(modelId, [0, 5], ownerA.id);
		const r2 = await requirementOn(modelId, [0, 6], ownerB.id);
		const r3 = await requirementOn(modelId, [0, 7], ownerA.id);
		// Verdict-change mail; the findings a failing verdict opens (and a passing one closes) send their
		// own mail to the model's owner, counted apart (findings/service.ts).
		const isFinding = (m: { subject: string }) => /Finding F-\d+:/.test(m.subject);
		const count = async (email: string) => mailTo(email, await allMail()).filter((m) => !isFinding(m)).length;
		const findingMails = async (email: string, what: RegExp) =>
			mailTo(email, await allMail()).filter((m) => isFinding(m) && what.test(m.subject)).length;
		const base = {
			a: await count(ownerA.email),
			b: await count(ownerB.email),
			m: await count(modeller.email)
		};

		// v1 = 1/(s+1): every sector [0, k] passes (helpers.ts); a first pass mails nobody.
		await publish(modelId, points(LAG), 'v1');
		await settled([r1, r2, r3]);
		expect([...(await analysisStates(testDb(), [r1, r2, r3])).values()].map((s) => s.state)).toEqual([
			'verified',
			'verified',
			'verified'
		]);

		// v2 = 1/(s+1)^3: k2 = 5, 6, 7 all exceed the proved 4, so all three turn to failing.
		const v2 = await publish(modelId, points(CUBE), 'v2 adds two lags');
		await settled([r1, r2, r3]);
		expect([...(await analysisStates(testDb(), [r1, r2, r3])).values()].map((s) => s.state)).toEqual([
			'not-proved',
			'not-proved',
			'not-proved'
		]);
		const mA = await expectMailTo(ownerA.email, { after: base.a });
		const mB = await expectMailTo(ownerB.email, { after: base.b });
		const mM = await expectMailTo(modeller.email, { subject: /verdicts changed/ });
		// Let any duplicate arrive before counting.
		await new Promise((r) => setTimeout(r, 2500));
		expect(await count(ownerA.email)).toBe(base.a + 1);
		expect(await count(ownerB.email)).toBe(base.b + 1);
		expect(await count(modeller.email)).toBe(base.m + 1);
		expect(await findingMails(modeller.email, /opened and assigned to you/)).toBe(3);
		const ids = await testDb()('requirements').whereIn('id', [r1, r2, r3]).orderBy('id').pluck('identifier');
		// Owner A owns r1 and r3: one mail naming both; the model's owner gets all three in one mail.
		expect(mA.text).toContain(ids[0]);
		expect(mA.text).toContain(ids[2]);
		expect(mA.text).not.toContain(ids[1]);
		expect(mB.text).toContain(ids[1]);
		for (const id of ids) expect(mM.text).toContain(id);
		expect(mA.text).toMatch(/verified by analysis -> not proved/);
		expect(mA.text).toMatch(new RegExp(`/p/${team.project.key}/requirements/${r1}`));
		expect(mM.subject).toMatch(/3 verdicts changed/);
		expect(
			(
				await testDb()('analysis_notices')
					.where({ trigger_ref: `model-version:${v2.body.id}` })
					.first()
			).mails
		).toBe(3);

		// Back to 1/(s+1): the fail -> pass transition mails again, once each.
		await publish(modelId, points(LAG), 'v3 back to the single lag');
		await settled([r1, r2, r3]);
		const back = await expectMailTo(ownerB.email, { after: base.b + 1 });
		expect(back.text).toMatch(/not proved -> verified by analysis/);
		await new Promise((r) => setTimeout(r, 2500));
		expect(await count(ownerA.email)).toBe(base.a + 2);
		expect(await count(ownerB.email)).toBe(base.b + 2);
		expect(await count(modeller.email)).toBe(base.m + 2);
		expect(await findingMails(modeller.email, /closed by itself/)).toBe(3);
	}, 60_000);
});

describe('a worker killed mid-run', () => {
	it('leaves the run to be retried and completed by another worker', async () => {
		const modelId = await newModel('crash loop');
		const r = await requirementOn(modelId, [0, 3]);
		pauseHarnessWorker();
		// This worker claims the run, then waits (fault-injection aid) so it can be killed mid-run.
		// Both take runs only: a data package another test file queued meanwhile stays with the harness's
		// worker instead of dying with this one (and waiting out its 15-minute expiry).
		const doomed = spawnWorker({ LW_WORKER_HOLD_MS: '120000', LW_WORKER_QUEUES: 'runs' });
		let rescuer: ReturnType<typeof spawnWorker> | undefined;
		try {
			await publish(modelId, points(CUBE));
			const claimed = await waitFor('the first worker to claim the run', async () => {
				const [run] = await runsOf([r]);
				return run?.status === 'running' ? run : null;
			});
			expect(claimed.attempts).toBe(1);
			killGroup(doomed, 'SIGKILL');
			await waitFor(
				'the killed worker to exit',
				async () => doomed.exitCode !== null || doomed.signalCode !== null
			);
			rescuer = spawnWorker({ LW_WORKER_QUEUES: 'runs' });
			// The job expires (LW_RUN_EXPIRE_SECONDS, 20 s), pg-boss retries it, the second worker completes it.
			const done = await waitFor(
				'the retried run to finish',
				async () => {
					const [run] = await runsOf([r]);
					return run?.status === 'done' || run?.status === 'error' ? run : null;
				},
				60_000
			);
			expect(done.status).toBe('done');
			expect(done.attempts).toBe(2);
			expect(done.verdict).toBe('pass');
			expect(done.result.certifiedUpper).toBeCloseTo(4, 6);
			expect((await runsOf([r])).length).toBe(1);
		} finally {
			killGroup(doomed, 'SIGKILL');
			if (rescuer) killGroup(rescuer, 'SIGTERM');
			resumeHarnessWorker();
		}
	}, 90_000);
});

describe("a run's attempts", () => {
	// analysis_runs is the one record of a run's status and attempts; the queue only hands jobs out.
	async function openRun(attempts: number) {
		const model = await createModel(team.project.id, { name: `attempts ${attempts} ${Date.now()}` });
		await createModelVersion(model.id, { operatingPoints: points(CUBE) });
		const r = await requirementOn(model.id, [0, 3]);
		// Inserted without a job, so the harness worker leaves it alone; as if claimed `attempts` times.
		const run = await createRun(r, { engineVersion: ENGINE_VERSION, status: 'running' });
		await testDb()('analysis_runs').where({ id: run.id }).update({ attempts });
		return { runId: run.id, requirementId: r };
	}

	it('are counted on the run: the hand-out after the last attempt records an error, never a lost run', async () => {
		const max = config.runs.maxAttempts;
		expect(max).toBe(5); // LW_RUN_RETRY_LIMIT is unset in npm test: 4 retries after the first attempt
		const { runId, requirementId } = await openRun(max);
		expect(await processRun(runId, 'attempts test')).toBe('error');
		const row = await testDb()('analysis_runs').where({ id: runId }).first();
		expect(row.status).toBe('error');
		expect(row.attempts).toBe(max);
		expect(row.error).toBe(`No result after ${max} attempts: the worker stopped during each one.`);
		const event = await testDb()('audit_events')
			.where({ subject_type: 'requirement', subject_id: String(requirementId), action: 'analysis.error' })
			.first();
		expect(event?.after).toMatchObject({ run: runId, status: 'error' });
		// Handed out once more (a late duplicate job): the finished run is left alone.
		expect(await processRun(runId, 'attempts test')).toBe('skipped');
	});

	it('a run with an attempt left is claimed once more and finished', async () => {
		const max = config.runs.maxAttempts;
		const { runId } = await openRun(max - 1);
		expect(await processRun(runId, 'attempts test')).toBe('done');
		const row = await testDb()('analysis_runs').where({ id: runId }).first();
		expect(row.attempts).toBe(max);
		// 1/(s+1)^3 with k1 = 0 proves k2 < 4 (see ./helpers.ts), so [0, 3] passes.
		expect(row.verdict).toBe('pass');
		expect(row.result.certifiedUpper).toBeCloseTo(4, 6);
	});

	it("the queue's retry limit is only a backstop, far above the run's attempts", () => {
		// Hand-outs that end before a claim (the database went away mid-batch) use up queue retries but no
		// attempt; the queue must not give up on a job while its run is still open.
		expect(runJobPolicy().retryLimit).toBeGreaterThanOrEqual(config.runs.maxAttempts * 10);
	});
});
