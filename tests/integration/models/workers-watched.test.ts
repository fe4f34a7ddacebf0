import { spawn, type ChildProcess } from 'node:child_process';
import { afterAll, describe, expect, it } from 'vitest';
import { ENGINE_VERSION } from '../../../src/lib/stability/index';
import {
	closeTestDb,
	createModel,
	createModelVersion,
	createRequirement,
	createRun,
	createSpec,
	createTeam,
	lagModel,
	testDb
} from '../../factories';
import { Client } from '../../helpers/http';
import { killGroup, pauseHarnessWorker, resumeHarnessWorker, waitFor } from './helpers';

// Workers are watched (issue 18, item 6): the start script's supervisor (scripts/keep-running.sh) starts a
// worker again when it is killed, and GET /api/v1/health reports the workers' last heartbeat and the age of
// the oldest queued run, answering 503 naming the analysis workers when runs wait past the stale threshold
// with no live worker. The test app runs with LW_WORKER_HEARTBEAT_SECONDS=1 (scripts/test.sh), so a worker
// silent for 3 s is not alive; the stale threshold there is 3600 s, so the waiting run is made 2 hours old.

let supervisor: (ChildProcess & { log: () => string }) | null = null;
afterAll(async () => {
	if (supervisor) killGroup(supervisor, 'SIGKILL');
	resumeHarnessWorker();
	await closeTestDb();
});

function startSupervised(): ChildProcess & { log: () => string } {
	let out = '';
	const child = spawn(
		'bash',
		['scripts/keep-running.sh', 'worker', 'node', '--import', 'tsx', 'scripts/worker.ts'],
		{
			cwd: process.cwd(),
			// Runs only: a data package queued by another test file is never lost with a killed worker.
			env: { ...process.env, LW_RESTART_MIN_SECONDS: '1', LW_WORKER_QUEUES: 'runs' },
			detached: true,
			stdio: ['ignore', 'pipe', 'pipe']
		}
	);
	child.stdout?.on('data', (d) => (out += d));
	child.stderr?.on('data', (d) => (out += d));
	return Object.assign(child, { log: () => out });
}

const startedPids = (log: string) =>
	[...log.matchAll(/\[keep-running\] worker started \(pid (\d+)\)/g)].map((m) => Number(m[1]));
const beating = async (pid: number) =>
	testDb()('worker_heartbeats')
		.where({ pid })
		.whereNull('stopped_at')
		.whereRaw(`beat_at > now() - interval '3 seconds'`)
		.first();
const healthOf = async () => {
	const res = await new Client().get('/api/v1/health');
	return { status: res.status, body: await res.json() };
};

describe('watched analysis workers', () => {
	it('a killed worker is started again, and health names the workers when runs wait with none alive', async () => {
		supervisor = startSupervised();
		const first = await waitFor(
			'the supervised worker to start',
			async () => startedPids(supervisor!.log())[0],
			20_000
		);
		await waitFor(`a heartbeat of worker ${first}`, () => beating(first), 20_000);

		// Killed by hand: the supervisor starts a new worker after its backoff, which beats in turn.
		process.kill(first, 'SIGKILL');
		const second = await waitFor(
			'the worker to be started again',
			async () => startedPids(supervisor!.log()).find((p) => p !== first),
			20_000
		);
		expect(supervisor.log()).toMatch(/worker exited with code \d+ after \d+ s; starting it again in 1 s/);
		await waitFor(`a heartbeat of worker ${second}`, () => beating(second), 20_000);

		const ok = await healthOf();
		expect(ok.status, JSON.stringify(ok.body)).toBe(200);
		expect(ok.body.details.workers.live).toBeGreaterThanOrEqual(1);
		expect(Date.now() - Date.parse(ok.body.details.workers.lastHeartbeat)).toBeLessThan(10_000);

		// A run waiting for two hours (no job: no worker will take it) while workers are alive: the queue is
		// named, with the live workers.
		const team = await createTeam();
		const model = await createModel(team.project.id, { ownerId: team.users.analyst.id });
		await createModelVersion(model.id, lagModel(1, 1));
		const req = await createRequirement(team.project.id, { ownerId: team.users.engineer.id });
		await createSpec(req.id, { modelId: model.id, check: { type: 'circle', sector: [0, 5] } });
		const run = await createRun(req.id, { engineVersion: ENGINE_VERSION, status: 'queued' });
		const runId = run.id;
		await testDb()('analysis_runs')
			.where({ id: runId })
			.update({ queued_at: testDb().raw(`now() - interval '2 hours'`) });
		try {
			const busy = await healthOf();
			expect(busy.status).toBe(503);
			expect(busy.body.failing).toEqual(['queue']);
			expect(busy.body.checks.queue).toMatch(
				/^stalled: \d+ analysis runs? waiting, the oldest for \d+ s, although \d+ analysis workers? (is|are) alive$/
			);
			expect(busy.body.details.workers.oldestQueuedSeconds).toBeGreaterThanOrEqual(7200);

			// Every worker gone: ours stopped, the harness's frozen (it stops beating).
			killGroup(supervisor, 'SIGTERM');
			await waitFor('the supervisor to end', async () => supervisor!.exitCode !== null, 15_000);
			pauseHarnessWorker();
			const down = await waitFor(
				'health to name the workers',
				async () => {
					const h = await healthOf();
					return h.status === 503 && h.body.failing.includes('workers') ? h : null;
				},
				20_000
			);
			expect(down.body.failing).toEqual(['workers']);
			expect(down.body.checks.workers).toMatch(
				/^no live analysis worker: \d+ analysis runs? waiting, the oldest for \d+ s; last heartbeat \d{4}-\d\d-\d\dT/
			);
			expect(down.body.details.workers.live).toBe(0);
			expect(down.body.details.workers.workers.length).toBeGreaterThanOrEqual(2);
			// The gracefully stopped worker is recorded as stopped, not merely silent.
			expect(
				await testDb()('worker_heartbeats').where({ pid: second }).whereNotNull('stopped_at').first()
			).toBeTruthy();
		} finally {
			resumeHarnessWorker();
			await testDb()('analysis_runs').where({ id: runId }).delete();
		}
		// Health is ok as soon as no run waits; the resumed worker counts as live at its next heartbeat.
		const back = await waitFor('health to be ok again with a live worker', async () => {
			const h = await healthOf();
			return h.status === 200 && h.body.details.workers.live >= 1 ? h : null;
		});
		expect(back.body.details.workers.live).toBeGreaterThanOrEqual(1);
	}, 120_000);
});
