import PgBoss from 'pg-boss';
import { config } from '../config';
import type { Db } from '../db';

// The job queue (pg-boss, PostgreSQL-backed): wiring only. A job says "analysis run N is due"; the web
// app inserts it inside the transaction of the change that queued the run, a worker (scripts/worker.ts)
// fetches it, and the job is completed in the transaction that stores the run's outcome. What a run
// is (its status and attempts) lives in analysis_runs alone (analyses/run.ts).

export const RUN_QUEUE = 'analysis-run';
/** A job says "build data package N" (src/lib/server/packages); its record is data_packages.status. */
export const PACKAGE_QUEUE = 'data-package';
export const BOSS_SCHEMA = 'pgboss';
/** NOTIFY channel: wakes idle workers when runs are queued (delivered when the queuing transaction commits). */
export const RUNS_CHANNEL = 'lw_analysis_runs';

/**
 * How the queue hands a job out again. A worker that stops mid-run leaves its job active until it
 * expires; the queue then offers it again after the retry delay. The retry limit is not the run's
 * attempt limit (config.runs.maxAttempts, counted on the run): it is a backstop far above it, so the
 * queue keeps offering a job until the run's record finishes it (as an error once its attempts are used
 * up), also when hand-outs end before a claim (the database went away mid-batch).
 */
export function runJobPolicy() {
	const runs = config.runs;
	return {
		retryLimit: Math.max(100, runs.maxAttempts * 20),
		retryDelay: runs.retryDelaySeconds,
		retryBackoff: false,
		expireInSeconds: runs.expireSeconds
	};
}

/**
 * A package build is long (minutes for a large project): it expires after 15 minutes and is handed out
 * again twice at most; the package's record (attempts) decides whether it is built again.
 */
export function packageJobPolicy() {
	return { retryLimit: 2, retryDelay: 5, retryBackoff: false, expireInSeconds: 15 * 60 };
}

let started: Promise<PgBoss> | undefined;
let role: 'producer' | 'worker' = 'producer';

/**
 * The process's pg-boss instance, started once. A producer (the web app, scripts) does no maintenance;
 * the worker supervises (expires jobs of crashed workers, archives) every few seconds.
 */
export function getBoss(as: 'producer' | 'worker' = 'producer'): Promise<PgBoss> {
	if (started) return started;
	role = as;
	started = (async () => {
		const boss = new PgBoss({
			connectionString: config.databaseUrl,
			schema: BOSS_SCHEMA,
			max: as === 'worker' ? 4 : 2,
			supervise: as === 'worker',
			schedule: false,
			maintenanceIntervalSeconds: config.runs.queueMaintenanceSeconds
		});
		boss.on('error', (e) => console.error(`[queue:${role}]`, (e as Error)?.message ?? e));
		await boss.start();
		const policy = runJobPolicy();
		const existing = await boss.getQueue(RUN_QUEUE);
		if (!existing) {
			try {
				await boss.createQueue(RUN_QUEUE, { name: RUN_QUEUE, ...policy });
			} catch (e) {
				// Another process created it at the same moment.
				if (!(await boss.getQueue(RUN_QUEUE))) throw e;
			}
		} else if (
			existing.expireInSeconds !== policy.expireInSeconds ||
			existing.retryLimit !== policy.retryLimit
		) {
			await boss.updateQueue(RUN_QUEUE, { name: RUN_QUEUE, ...policy });
		}
		if (!(await boss.getQueue(PACKAGE_QUEUE))) {
			try {
				await boss.createQueue(PACKAGE_QUEUE, { name: PACKAGE_QUEUE, ...packageJobPolicy() });
			} catch (e) {
				if (!(await boss.getQueue(PACKAGE_QUEUE))) throw e;
			}
		}
		return boss;
	})();
	started.catch(() => (started = undefined));
	return started;
}

export async function stopBoss(): Promise<void> {
	const s = started;
	started = undefined;
	if (s) await (await s).stop({ graceful: true, wait: true, timeout: 5_000 });
}

/**
 * pg-boss runs its SQL through this when given `{ db }`: the statements then run on the caller's Knex
 * transaction, so a job exists exactly when the change that queued it commits.
 */
export function knexExecutor(trx: Db): PgBoss.Db {
	return {
		async executeSql(text: string, values: unknown[] = []) {
			const bindings: unknown[] = [];
			const sql = text.replace(/\?/g, '\\?').replace(/\$(\d+)/g, (_m, n: string) => {
				const v = values[Number(n) - 1];
				bindings.push(v === undefined ? null : v);
				return '?';
			});
			const r = await trx.raw(sql, bindings as never[]);
			return { rows: (r as { rows: unknown[] }).rows };
		}
	};
}

/** Queue one job per analysis run id, in the caller's transaction. */
export async function sendRunJobs(trx: Db, runIds: number[]): Promise<void> {
	if (runIds.length === 0) return;
	const boss = await getBoss();
	const policy = runJobPolicy();
	for (let i = 0; i < runIds.length; i += 1000) {
		const jobs = runIds.slice(i, i + 1000).map((runId) => ({
			name: RUN_QUEUE,
			data: { runId },
			retryLimit: policy.retryLimit,
			retryDelay: policy.retryDelay,
			expireInSeconds: policy.expireInSeconds
		}));
		await boss.insert(jobs, { db: knexExecutor(trx) });
	}
	await trx.raw('select pg_notify(?, ?)', [RUNS_CHANNEL, String(runIds.length)]);
}

// pg-boss 10 completes and fails several jobs at once (its typings only declare some of the forms).
type Many = (
	name: string,
	ids: string[],
	data: object,
	options?: PgBoss.ConnectionOptions
) => Promise<unknown>;

/** Complete run jobs; with `trx`, inside that transaction. */
export async function completeRunJobs(ids: string[], trx?: Db): Promise<void> {
	if (ids.length === 0) return;
	const boss = await getBoss();
	await (boss.complete as unknown as Many).call(
		boss,
		RUN_QUEUE,
		ids,
		{},
		trx ? { db: knexExecutor(trx) } : {}
	);
}

/** Fail run jobs (they are retried after the retry delay). */
export async function failRunJobs(ids: string[], message: string): Promise<void> {
	if (ids.length === 0) return;
	const boss = await getBoss();
	await (boss.fail as unknown as Many).call(boss, RUN_QUEUE, ids, { message });
}

/** Queue the build of a data package, in the caller's transaction. */
export async function sendPackageJob(trx: Db, packageId: number): Promise<void> {
	const boss = await getBoss();
	await boss.insert([{ name: PACKAGE_QUEUE, data: { packageId }, ...packageJobPolicy() }], {
		db: knexExecutor(trx)
	});
	await trx.raw('select pg_notify(?, ?)', [RUNS_CHANNEL, 'package']);
}

/** Complete (or fail, to be handed out again) a package job. */
export async function completePackageJob(id: string): Promise<void> {
	const boss = await getBoss();
	await boss.complete(PACKAGE_QUEUE, id);
}
export async function failPackageJob(id: string, message: string): Promise<void> {
	const boss = await getBoss();
	await boss.fail(PACKAGE_QUEUE, id, { message });
}
