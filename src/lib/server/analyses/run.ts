import type { Knex } from 'knex';
import { ModelInputError } from '../../stability/index';
import { lockChain, recordEvent, type Actor } from '../audit';
import { config } from '../config';
import { db } from '../db';
import { completeRunJobs } from '../jobs/boss';
import { kickMail } from '../mail';
import { computeRun } from './compute';
import { afterRunFinished } from './notices';
import {
	claimRuns,
	finishExhausted,
	lockRuns,
	relaxed,
	storeOutcome,
	type ClaimedRun,
	type FinishedRow
} from './repo';

// Execute analysis runs: claim, compute, store. Safe to call twice for the same run (a job handed out
// again): a finished run is left alone, and only the first finisher writes the outcome.
//
// One record of a run's life: its analysis_runs row. Its status (queued -> running -> done | error) and
// its attempts (one per claim) are written here and nowhere else, and they alone decide whether a run
// is tried again: a run whose attempts are used up is finished as an error on the next hand-out. The job
// queue (pg-boss, jobs/boss.ts) is wiring: a job says "run N is due" and is completed in the transaction
// that stores N's outcome; its own retry state only makes it hand the job out again after a worker
// stopped, and its retry limit is a backstop far above the attempts (see jobs/boss.ts).

export type RunOutcome = 'done' | 'error' | 'skipped';

/**
 * The verdict goes into the audit trail in the transaction that stores it, filed under the requirement
 * (its page shows it in the history) with the inputs that produced it.
 */
async function recordRunFinished(trx: Knex.Transaction, actor: Actor, r: FinishedRow): Promise<void> {
	await recordEvent(trx, actor, {
		projectId: Number(r.project_id),
		action: r.status === 'done' ? 'analysis.verdict' : 'analysis.error',
		subjectType: 'requirement',
		subjectId: Number(r.requirement_id),
		after: {
			run: Number(r.id),
			status: r.status,
			verdict: r.verdict,
			worstPoint: r.worst_point,
			outputHash: r.output_hash,
			error: r.error,
			requirementRevision: Number(r.requirement_revision),
			specId: Number(r.spec_id),
			modelVersionId: Number(r.model_version_id),
			modelHash: r.model_hash,
			engineVersion: r.engine_version
		}
	});
}

export interface RunJob {
	runId: number;
	/** The queue's job: completed in the transaction that stores the run's result. */
	jobId?: string;
}

/**
 * Run a batch: one transaction claims them all (attempts + 1), then each is computed and stored in its
 * own transaction. Runs already finished only have their jobs completed.
 */
export async function processRuns(
	batch: RunJob[],
	workerLabel = `pid ${process.pid}`
): Promise<Map<number, RunOutcome>> {
	const out = new Map<number, RunOutcome>();
	if (batch.length === 0) return out;
	const { maxAttempts, holdMs } = config.runs;
	const jobOf = new Map(batch.map((j) => [Number(j.runId), j.jobId]));
	const complete = async (trx: Knex.Transaction, runIds: number[]) => {
		const ids = runIds.map((id) => jobOf.get(id)).filter((x): x is string => !!x);
		await completeRunJobs(ids, trx);
	};
	const ids = [...jobOf.keys()];

	const actor: Actor = { label: `worker ${workerLabel}` };
	const claim = await db().transaction(async (trx) => {
		await relaxed(trx);
		// Runs whose attempts are used up are finished here, with an audit event: the chain first.
		await lockChain(trx);
		const rows = await lockRuns(trx, ids);
		const present = new Set(rows.map((r) => Number(r.id)));
		const settled = [
			...ids.filter((id) => !present.has(id)),
			...rows.filter((r) => r.status === 'done' || r.status === 'error').map((r) => Number(r.id))
		];
		const open = rows.filter((r) => r.status === 'queued' || r.status === 'running');
		const exhausted = open.filter((r) => r.attempts >= maxAttempts).map((r) => Number(r.id));
		const toClaim = open.filter((r) => r.attempts < maxAttempts).map((r) => Number(r.id));
		let mails = 0;
		if (exhausted.length) {
			// Every attempt so far ended without a result (the worker stopped): record it, never lose it.
			for (const d of await finishExhausted(trx, exhausted)) {
				await recordRunFinished(trx, actor, d);
				mails += await afterRunFinished(trx, d);
			}
		}
		await complete(trx, [...settled, ...exhausted]);
		for (const id of settled) out.set(id, 'skipped');
		for (const id of exhausted) out.set(id, 'error');
		if (toClaim.length === 0) return { claimed: [] as ClaimedRun[], mails };
		return { claimed: await claimRuns(trx, toClaim), mails };
	});
	if (claim.mails) kickMail();
	// Fault-injection aid for the crash test (tests/integration/models/reverify.test.ts): wait after
	// claiming, so the test can kill the worker mid-run. Unset in production.
	if (claim.claimed.length && holdMs) await new Promise((r) => setTimeout(r, holdMs));

	for (const run of claim.claimed) {
		const runId = Number(run.id);
		const t0 = performance.now();
		let update: Record<string, unknown>;
		try {
			const r = computeRun(
				{
					check: run.check,
					requiredMargin: run.required_margin ?? null,
					operatingPoints: run.operating_points ?? null,
					content: run.content
				},
				config.runs.engineBudgetSeconds
			);
			update = {
				status: 'done',
				verdict: r.verdict,
				result: JSON.stringify(r.result),
				worst_point: r.worstPoint,
				curves: JSON.stringify(r.curves),
				output_hash: r.outputHash,
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
			await lockChain(trx);
			await complete(trx, [runId]);
			const finished = await storeOutcome(trx, runId, { ...update, duration_ms: duration });
			// Another attempt finished first: keep its result.
			if (!finished) return 0;
			await recordRunFinished(trx, actor, finished);
			return afterRunFinished(trx, finished);
		});
		if (mails) kickMail();
		out.set(runId, update.status as RunOutcome);
	}
	return out;
}

/** Run one analysis (scripts such as the demo seed call this directly). */
export async function processRun(
	runId: number,
	workerLabel = `pid ${process.pid}`,
	opts: { jobId?: string } = {}
): Promise<RunOutcome> {
	const r = await processRuns([{ runId, jobId: opts.jobId }], workerLabel);
	return r.get(Number(runId)) ?? 'skipped';
}
