import { ModelInputError } from '../../stability/index';
import { computeRun } from '../analyses/compute';
import type { Knex } from 'knex';
import { db } from '../db';
import { kickMail } from '../mail';
import { afterRunFinished } from './notices';
import { RUN_QUEUE, getBoss, knexExecutor, runJobPolicy } from './boss';

// Execute one analysis run. Safe to call twice for the same run (a retried job): a finished run is
// left alone, and only the first finisher writes the outcome.

export type RunOutcome = 'done' | 'error' | 'skipped';

function holdMs(): number {
	// Fault-injection aid for the crash test (tests/integration/reverify.test.ts): wait this long after
	// claiming a run, so the test can kill the worker mid-run. Unset in production.
	const n = Number(process.env.LW_WORKER_HOLD_MS);
	return Number.isFinite(n) && n > 0 ? n : 0;
}

/**
 * The worker's transactions commit asynchronously (synchronous_commit off): a result is re-derivable,
 * and the job's completion commits in the same transaction as the result, so after a crash of the
 * database server either both are there or the job is still open and the run is done again.
 */
async function relaxed(trx: Knex.Transaction) {
	await trx.raw('set local synchronous_commit = off');
}

/**
 * Run one analysis. With `jobId`, the pg-boss job is completed in the transaction that stores the
 * result (then the caller must not complete it again).
 */
export async function processRun(
	runId: number,
	workerLabel = `pid ${process.pid}`,
	opts: { jobId?: string } = {}
): Promise<RunOutcome> {
	const maxAttempts = runJobPolicy().retryLimit + 1;
	const boss = opts.jobId ? await getBoss() : null;
	const completeJob = async (trx: Knex.Transaction) => {
		if (boss && opts.jobId) await boss.complete(RUN_QUEUE, opts.jobId, {}, { db: knexExecutor(trx) });
	};
	const claim = await db().transaction(async (trx) => {
		await relaxed(trx);
		const run = await trx('analysis_runs').where({ id: runId }).forUpdate().first();
		if (!run || run.status === 'done' || run.status === 'error') {
			await completeJob(trx);
			return { run: null, mails: 0 };
		}
		if (run.attempts >= maxAttempts) {
			// Every attempt so far ended without a result (the worker stopped): record it, never lose it.
			const [done] = await trx('analysis_runs')
				.where({ id: runId })
				.update({
					status: 'error',
					error: `No result after ${run.attempts} attempts: the worker stopped during each one.`,
					finished_at: trx.fn.now()
				})
				.returning(['id', 'trigger_ref']);
			await completeJob(trx);
			return { run: null, mails: await afterRunFinished(trx, done) };
		}
		const [claimed] = await trx('analysis_runs')
			.where({ id: runId })
			.update({ status: 'running', attempts: run.attempts + 1, started_at: trx.fn.now() })
			.returning('*');
		return { run: claimed, mails: 0 };
	});
	if (claim.mails) kickMail();
	const run = claim.run;
	if (!run) return 'skipped';
	if (holdMs()) await new Promise((r) => setTimeout(r, holdMs()));

	const [spec, version] = await Promise.all([
		db()('stability_specs').where({ id: run.spec_id }).first(),
		db()('model_versions').where({ id: run.model_version_id }).first()
	]);
	const t0 = performance.now();
	let update: Record<string, unknown>;
	try {
		const out = computeRun({
			check: spec.check,
			requiredMargin: spec.required_margin ?? null,
			operatingPoints: spec.operating_points ?? null,
			content: version.content
		});
		update = {
			status: 'done',
			verdict: out.verdict,
			result: JSON.stringify(out.result),
			worst_point: out.worstPoint,
			curves: JSON.stringify(out.curves),
			output_hash: out.outputHash,
			error: null
		};
	} catch (e) {
		const message =
			e instanceof ModelInputError
				? `The engine refused the input: ${e.message}`
				: `The engine failed: ${(e as Error)?.message ?? String(e)}`;
		console.error(`[worker ${workerLabel}] run ${runId}: ${message}`);
		update = { status: 'error', verdict: null, error: message.slice(0, 2000) };
	}
	const duration = Math.round(performance.now() - t0);
	const mails = await db().transaction(async (trx) => {
		await relaxed(trx);
		await completeJob(trx);
		const [finished] = await trx('analysis_runs')
			.where({ id: runId, status: 'running' })
			.update({ ...update, finished_at: trx.fn.now(), duration_ms: duration })
			.returning(['id', 'trigger_ref']);
		// Another attempt finished first: keep its result.
		if (!finished) return 0;
		return afterRunFinished(trx, finished);
	});
	if (mails) kickMail();
	return update.status as RunOutcome;
}
