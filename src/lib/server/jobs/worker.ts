import pg from 'pg';
import { config } from '../config';
import { startMailLoop } from '../mail';
import { RUN_QUEUE, RUNS_CHANNEL, completeRunJobs, failRunJobs, getBoss, stopBoss } from './boss';
import { queueForEngineVersion } from '../analyses/engine-version';
import { processRuns } from '../analyses/run';

// The analysis worker's queue wiring: fetches run jobs from pg-boss and hands them to analyses/run.ts,
// which claims, computes and stores each run. Several workers (processes, machines) may run side by
// side; pg-boss hands each job to one of them. A worker that dies leaves its job active until it
// expires; pg-boss then offers it again and another worker completes it.

export interface WorkerHandle {
	stop(): Promise<void>;
	/** Resolves when the loop has ended. */
	done: Promise<void>;
}

export async function startWorker(
	opts: { batchSize?: number; idleMs?: number; label?: string } = {}
): Promise<WorkerHandle> {
	const label = opts.label ?? `pid ${process.pid}`;
	const batchSize = opts.batchSize ?? 20;
	const idleMs = opts.idleMs ?? 1_000;
	const boss = await getBoss('worker');
	const engine = await queueForEngineVersion();
	if (engine.newVersion)
		console.log(`[worker ${label}] engine version recorded; ${engine.queued} runs queued for it`);
	startMailLoop();

	let stopping = false;
	let wake: (() => void) | null = null;
	const sleep = (ms: number) =>
		new Promise<void>((resolve) => {
			const t = setTimeout(() => {
				wake = null;
				resolve();
			}, ms);
			wake = () => {
				clearTimeout(t);
				wake = null;
				resolve();
			};
		});

	// LISTEN: queued runs wake an idle worker at once (polling stays as the fallback).
	let listener: pg.Client | null = null;
	const listen = async () => {
		try {
			const c = new pg.Client({ connectionString: config.databaseUrl });
			c.on('error', () => {
				listener = null;
			});
			await c.connect();
			await c.query(`listen ${RUNS_CHANNEL}`);
			c.on('notification', () => wake?.());
			listener = c;
		} catch (e) {
			console.error(`[worker ${label}] listen failed: ${(e as Error).message}`);
		}
	};
	await listen();

	const loop = async () => {
		while (!stopping) {
			let jobs: { id: string; data: { runId?: number } }[] = [];
			try {
				if (!listener) await listen();
				jobs = ((await boss.fetch<{ runId?: number }>(RUN_QUEUE, { batchSize })) ?? []) as typeof jobs;
			} catch (e) {
				console.error(`[worker ${label}] fetch failed: ${(e as Error).message}`);
				await sleep(idleMs * 2);
				continue;
			}
			if (jobs.length === 0) {
				await sleep(idleMs);
				continue;
			}
			const batch = jobs.map((j) => ({ runId: Number(j.data?.runId), jobId: j.id }));
			const bad = batch.filter((b) => !Number.isInteger(b.runId));
			try {
				await completeRunJobs(bad.map((b) => b.jobId));
				// Each job is completed in the transaction that stores its run's result.
				await processRuns(
					batch.filter((b) => Number.isInteger(b.runId)),
					label
				);
			} catch (e) {
				// The database went away or similar: unfinished jobs are retried (runs are idempotent).
				console.error(`[worker ${label}] batch interrupted: ${(e as Error).message}`);
				await failRunJobs(
					batch.map((b) => b.jobId),
					(e as Error).message
				).catch(() => {});
			}
		}
	};
	const done = loop();
	return {
		done,
		async stop() {
			stopping = true;
			wake?.();
			await done;
			await listener?.end().catch(() => {});
			await stopBoss();
		}
	};
}
