import type { Knex } from 'knex';
import { ModelInputError } from '../../stability/index';
import { lockChain, recordEvent, type Actor } from '../audit';
import { computeRun } from '../analyses/compute';
import type { RunRow } from '../analyses/repo';
import { db } from '../db';
import { kickMail } from '../mail';
import { afterRunFinished } from './notices';
import { completeRunJobs, runJobPolicy } from './boss';

// Execute analysis runs. Safe to call twice for the same run (a retried job): a finished run is left
// alone, and only the first finisher writes the outcome.

export type RunOutcome = 'done' | 'error' | 'skipped';

function holdMs(): number {
	// Fault-injection aid for the crash test (tests/integration/models/reverify.test.ts): wait this long
	// after claiming runs, so the test can kill the worker mid-run. Unset in production.
	const n = Number(process.env.LW_WORKER_HOLD_MS);
	return Number.isFinite(n) && n > 0 ? n : 0;
}

/**
 * The worker's transactions commit asynchronously (synchronous_commit off): a result is re-derivable,
 * and a job's completion commits in the same transaction as its result, so after a crash of the
 * database server either both are there or the job is still open and the run is done again.
 */
async function relaxed(trx: Knex.Transaction) {
	await trx.raw('set local synchronous_commit = off');
}

const FINISHED_COLUMNS = [
	'id',
	'trigger_ref',
	'project_id',
	'requirement_id',
	'requirement_revision',
	'spec_id',
	'model_version_id',
	'model_hash',
	'engine_version',
	'status',
	'verdict',
	'worst_point',
	'output_hash',
	'error',
	'duration_ms'
] as const;
type FinishedRow = Pick<RunRow, (typeof FINISHED_COLUMNS)[number]>;

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
	/** The pg-boss job: completed in the transaction that stores the run's result. */
	jobId?: string;
}

interface Claimed {
	id: number;
	trigger_ref: string | null;
	check: unknown;
	required_margin: number | null;
	operating_points: string[] | null;
	content: { operatingPoints: { label: string; model: never }[] };
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
	const maxAttempts = runJobPolicy().retryLimit + 1;
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
		const rows: { id: number; status: string; attempts: number }[] = await trx('analysis_runs')
			.whereIn('id', ids)
			.forUpdate()
			.orderBy('id')
			.select('id', 'status', 'attempts');
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
			const done = await trx('analysis_runs')
				.whereIn('id', exhausted)
				.update({
					status: 'error',
					error: trx.raw(
						`'No result after ' || attempts || ' attempts: the worker stopped during each one.'`
					),
					finished_at: trx.fn.now()
				})
				.returning([...FINISHED_COLUMNS]);
			for (const d of done) {
				await recordRunFinished(trx, actor, d);
				mails += await afterRunFinished(trx, d);
			}
		}
		await complete(trx, [...settled, ...exhausted]);
		for (const id of settled) out.set(id, 'skipped');
		for (const id of exhausted) out.set(id, 'error');
		if (toClaim.length === 0) return { claimed: [] as Claimed[], mails };
		await trx('analysis_runs')
			.whereIn('id', toClaim)
			.update({ status: 'running', attempts: trx.raw('attempts + 1'), started_at: trx.fn.now() });
		const claimed: Claimed[] = (
			await trx.raw(
				`select ar.id, ar.trigger_ref, s."check", s.required_margin, s.operating_points, mv.content
				from analysis_runs ar
				join stability_specs s on s.id = ar.spec_id
				join model_versions mv on mv.id = ar.model_version_id
				where ar.id = any(?::bigint[]) order by ar.id`,
				[toClaim]
			)
		).rows;
		return { claimed, mails };
	});
	if (claim.mails) kickMail();
	if (claim.claimed.length && holdMs()) await new Promise((r) => setTimeout(r, holdMs()));

	for (const run of claim.claimed) {
		const runId = Number(run.id);
		const t0 = performance.now();
		let update: Record<string, unknown>;
		try {
			const r = computeRun({
				check: run.check,
				requiredMargin: run.required_margin ?? null,
				operatingPoints: run.operating_points ?? null,
				content: run.content
			});
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
			const [finished] = await trx('analysis_runs')
				.where({ id: runId, status: 'running' })
				.update({ ...update, finished_at: trx.fn.now(), duration_ms: duration })
				.returning([...FINISHED_COLUMNS]);
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
