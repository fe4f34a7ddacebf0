import { spawn, type ChildProcess } from 'node:child_process';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { verifyChain } from '../../src/lib/server/audit';
import { closeTestDb, createRequirement, createSpec, createTeam, testDb } from '../factories';
import { Client, signedIn } from '../helpers/http';
import { allMail, mailTo } from '../helpers/mail';
import { CUBE, LAG, killGroup, points, spawnWorker, waitFor } from './models/helpers';

// More than one machine, in small: two app processes on different ports and three workers (the
// harness's and two of our own) against one PostgreSQL and one object store. Model versions are
// published through both app processes while one worker is killed with SIGKILL and one app process is
// restarted; every run must finish exactly once (one finishing audit event per run), none may be lost,
// every verdict-change mail is sent once per person and change, the audit chain still verifies (the
// batches of several workers interleave in it), and a session works on either app. Our two workers take
// only the runs queue (LW_WORKER_QUEUES=runs), as analysis workers in a deployment do.
// LW_MULTI_RUNS sets how many runs in all (npm run bench -- multi runs 2,000; here 60).
const RUNS = Number(process.env.LW_MULTI_RUNS ?? 60);
const PER_VERSION = Math.ceil(RUNS / 3);

const portB = Number(process.env.PORT) + 5;
const baseB = `http://127.0.0.1:${portB}`;

function startApp(): ChildProcess {
	return spawn('node', [process.env.BUILD_DIR!], {
		env: { ...process.env, PORT: String(portB), ORIGIN: baseB },
		detached: true,
		stdio: 'ignore'
	});
}

async function appUp(): Promise<void> {
	await waitFor(
		'the second app process to answer',
		async () => (await fetch(`${baseB}/signin`).catch(() => null))?.status === 200,
		30_000
	);
}

const exited = (c: ChildProcess) =>
	waitFor('a process to exit', async () => c.exitCode !== null || c.signalCode !== null, 20_000);

let team: Awaited<ReturnType<typeof createTeam>>;
let onA: Client;
let onB: Client;
let appB: ChildProcess | undefined;
const workers: ChildProcess[] = [];

beforeAll(async () => {
	team = await createTeam();
	onA = await signedIn(team.users.analyst.email, team.users.analyst.password);
	appB = startApp();
	workers.push(spawnWorker({ LW_WORKER_QUEUES: 'runs' }), spawnWorker({ LW_WORKER_QUEUES: 'runs' }));
	await appUp();
	// The session signed in on app A, presented to app B.
	onB = new Client(baseB);
	onB.cookies = new Map(onA.cookies);
}, 60_000);

afterAll(async () => {
	for (const w of workers) killGroup(w, 'SIGTERM');
	if (appB) killGroup(appB, 'SIGTERM');
	await closeTestDb();
});

async function publish(client: Client, modelId: number, model: unknown, note: string): Promise<number> {
	const res = await client.json(`/api/v1/projects/${team.project.key}/models/${modelId}/versions`, 'POST', {
		note,
		operatingPoints: points(model)
	});
	expect(res.status, `publish through ${client.base}`).toBe(201);
	return Number((await res.json()).id);
}

describe('two app processes and three workers on one database', () => {
	it('finish every run exactly once and send each mail once while a worker dies and an app restarts', async () => {
		const live = `/api/v1/projects/${team.project.key}/live`;
		expect((await onA.get(live)).status).toBe(200);
		expect((await onB.get(live)).status, 'a session of app A on app B').toBe(200);

		const made = await onB.json(`/api/v1/projects/${team.project.key}/models`, 'POST', {
			name: 'multi-process loop',
			description: 'scale-out test'
		});
		expect(made.status).toBe(201);
		const modelId = Number((await made.json()).id);
		const ids: number[] = [];
		for (let i = 0; i < PER_VERSION; i++) {
			const r = await createRequirement(team.project.id, { ownerId: team.users.engineer.id });
			// Sector [0, 3]: LAG passes it; CUBE passes [0, k] only for k < 4 (models/helpers.ts), so
			// with [0, 5] for half of them the second version moves those verdicts.
			await createSpec(r.id, { modelId, check: { type: 'circle', sector: [0, i % 2 ? 5 : 3] } });
			ids.push(r.id);
		}
		const moved = ids.filter((_, i) => i % 2).length;

		const versions: number[] = [];
		versions.push(await publish(onA, modelId, LAG, 'v1 through app A'));
		// Kill one worker once it has started on the runs (it may hold claimed runs: they expire and
		// another worker does them).
		await waitFor(
			'the first runs to finish',
			async () =>
				Number(
					(
						await testDb()('analysis_runs')
							.where({ model_version_id: versions[0], status: 'done' })
							.count('* as n')
					)[0].n
				) > 0
		);
		killGroup(workers[0], 'SIGKILL');
		versions.push(await publish(onB, modelId, CUBE, 'v2 through app B'));
		// Restart app B; the session still works on the new process, and publishing through it too.
		killGroup(appB!, 'SIGTERM');
		await exited(appB!);
		appB = startApp();
		await appUp();
		expect((await onB.get(live)).status, 'the session on the restarted app B').toBe(200);
		versions.push(await publish(onB, modelId, LAG, 'v3 through the restarted app B'));

		const runs = await waitFor(
			'every run to finish',
			async () => {
				const rows = await testDb()('analysis_runs')
					.whereIn('model_version_id', versions)
					.select('id', 'requirement_id', 'model_version_id', 'status', 'verdict');
				return rows.length === versions.length * ids.length &&
					rows.every((r) => r.status === 'done' || r.status === 'error')
					? rows
					: null;
			},
			150_000
		);
		// None lost: one finished run per requirement and version, each with a verdict.
		for (const v of versions) {
			const of = runs.filter((r) => Number(r.model_version_id) === v);
			expect(new Set(of.map((r) => Number(r.requirement_id)))).toEqual(new Set(ids));
			expect(of.every((r) => r.status === 'done')).toBe(true);
		}
		expect(
			runs.filter((r) => Number(r.model_version_id) === versions[1] && r.verdict === 'fail').length
		).toBe(moved);
		// Exactly once: one finishing audit event per run.
		const finishes = await testDb()('audit_events')
			.whereIn('action', ['analysis.verdict', 'analysis.error'])
			.whereRaw(`(after ->> 'run')::bigint = any(?)`, [runs.map((r) => Number(r.id))])
			.select(testDb().raw(`(after ->> 'run')::bigint as run`), testDb().raw('count(*)::int as n'))
			.groupByRaw(`after ->> 'run'`);
		expect(finishes.length).toBe(runs.length);
		expect(finishes.filter((f) => f.n !== 1)).toEqual([]);
		// Three workers wrote their batches into one chain: it still links up, event by event.
		expect(await verifyChain(testDb())).toMatchObject({ ok: true });

		// Each change's notice once: v1 (first verdicts, all passes) moves nothing; v2 and v3 each move
		// `moved` verdicts, one mail per person concerned (the requirements' owner, the model's owner).
		const notices = await testDb()('analysis_notices').whereIn(
			'trigger_ref',
			versions.map((v) => `model-version:${v}`)
		);
		expect(notices.length).toBe(3);
		const byRef = new Map(notices.map((n) => [n.trigger_ref, n]));
		expect(byRef.get(`model-version:${versions[0]}`).changes).toBe(0);
		for (const v of versions.slice(1)) expect(byRef.get(`model-version:${v}`).changes).toBe(moved);
		const subjects = [2, 3].map((n) => `${moved} verdicts changed after multi-process loop v${n}`);
		for (const who of [team.users.engineer, team.users.analyst]) {
			const mail = await waitFor(
				`mail to ${who.email}`,
				async () => {
					const got = mailTo(who.email, await allMail()).filter((m) =>
						subjects.some((s) => m.subject.includes(s))
					);
					return got.length >= 2 ? got : null;
				},
				30_000
			);
			// Once each: give a duplicate time to arrive, then count again.
			await new Promise((r) => setTimeout(r, 1500));
			const again = mailTo(who.email, await allMail());
			for (const s of subjects) expect(again.filter((m) => m.subject.includes(s)).length, s).toBe(1);
			expect(mail.length).toBe(2);
		}
	}, 240_000);
});
