import { spawn } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import pg from 'pg';
import { config } from '../config';
import { startMailLoop } from '../mail';
import {
	PACKAGE_QUEUE,
	RUN_QUEUE,
	RUNS_CHANNEL,
	completePackageJob,
	completeRunJobs,
	failPackageJob,
	failRunJobs,
	getBoss,
	stopBoss
} from './boss';
import { queueForEngineVersion } from '../analyses/engine-version';
import { processRuns } from '../analyses/run';
import { startHeartbeat } from '../analyses/workers';

// The analysis worker's queue wiring: fetches run jobs from pg-boss and hands them to analyses/run.ts,
// which claims, computes and stores each run. Several workers (processes, machines) may run side by
// side; pg-boss hands each job to one of them. A worker that dies leaves its job active until it
// expires; pg-boss then offers it again and another worker completes it.

/** The heap cap of a package build's process (MB): with it a 500-requirement package peaks near 320 MB. */
const PACKAGE_HEAP_MB = 256;
const PACKAGE_SCRIPT = fileURLToPath(new URL('../../../../scripts/package-build.ts', import.meta.url));

/** Build one data package in its own process (scripts/package-build.ts); resolves with its exit code. */
function buildPackageProcess(packageId: number, label: string): Promise<number> {
	return new Promise((resolve) => {
		const child = spawn(
			process.execPath,
			[
				// The worker runs under tsx: its loader flags let the child run the TypeScript script too.
				...process.execArgv.filter((a) => !a.startsWith('--max-old-space-size')),
				`--max-old-space-size=${PACKAGE_HEAP_MB}`,
				PACKAGE_SCRIPT,
				String(packageId)
			],
			{ stdio: ['ignore', 'inherit', 'inherit'] }
		);
		child.on('error', (e) => {
			console.error(`[worker ${label}] package ${packageId}: ${e.message}`);
			resolve(1);
		});
		child.on('exit', (code) => resolve(code ?? 1));
	});
}

export interface WorkerHandle {
	stop(): Promise<void>;
	/** Resolves when the loop has ended. */
	done: Promise<void>;
}

export async function startWorker(
	opts: { batchSize?: number; idleMs?: number; label?: string } = {}
): Promise<WorkerHandle> {
	const label = opts.label ?? `pid ${process.pid}`;
	// Read first: a wrong LW_WORKER_QUEUES stops the worker before it takes any job.
	const queues = config.workerQueues;
	const batchSize = opts.batchSize ?? 20;
	const idleMs = opts.idleMs ?? 1_000;
	const boss = await getBoss('worker');
	const engine = await queueForEngineVersion();
	if (engine.newVersion)
		console.log(`[worker ${label}] engine version recorded; ${engine.queued} runs queued for it`);
	startMailLoop();
	const stopHeartbeat = await startHeartbeat(label);

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
	// Data packages: one at a time per worker, beside the runs (a build takes seconds to minutes; the
	// runs keep flowing in the other loop). The package's record decides what is built (packages/service).
	const packageLoop = async () => {
		while (!stopping) {
			let jobs: { id: string; data: { packageId?: number } }[] = [];
			try {
				jobs = ((await boss.fetch<{ packageId?: number }>(PACKAGE_QUEUE, { batchSize: 1 })) ??
					[]) as typeof jobs;
			} catch (e) {
				console.error(`[worker ${label}] package fetch failed: ${(e as Error).message}`);
			}
			if (jobs.length === 0) {
				await new Promise((r) => setTimeout(r, idleMs));
				continue;
			}
			for (const j of jobs) {
				try {
					// The package's record (data_packages) says done or failed when the process exits 0; any
					// other exit (killed, out of memory) leaves the job to be handed out again.
					const code = await buildPackageProcess(Number(j.data?.packageId), label);
					if (code === 0) await completePackageJob(j.id);
					else await failPackageJob(j.id, `package build exited with code ${code}`);
				} catch (e) {
					console.error(`[worker ${label}] package build interrupted: ${(e as Error).message}`);
					await failPackageJob(j.id, (e as Error).message).catch(() => {});
				}
			}
		}
	};
	const done = Promise.all([queues.runs ? loop() : null, queues.packages ? packageLoop() : null]).then(
		() => undefined
	);
	return {
		done,
		async stop() {
			stopping = true;
			wake?.();
			await done;
			await stopHeartbeat();
			await listener?.end().catch(() => {});
			await stopBoss();
		}
	};
}
