import type { Knex } from 'knex';
import { ModelInputError } from '../../stability/index';
import { lockChain, recordEvents, type Actor, type AuditEvent } from '../audit';
import { config } from '../config';
import { db } from '../db';
import { completeRunJobs } from '../jobs/boss';
import { kickMail } from '../mail';
import { computeRun } from './compute';
import { afterRun as findingsAfterRun } from '../findings/service';
import { afterRunFinished } from './notices';
import {
	claimRuns,
	finishExhausted,
	lockRuns,
	relaxed,
	storeOutcomes,
	type ClaimedRun,
	type FinishedRow,
	type RunOutcomeRow
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
function runFinishedEvent(r: FinishedRow): AuditEvent {
	return {
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
	};
}

export interface RunJob {
	runId: number;
	/** The queue's job: completed in the transaction that stores the run's result. */
	jobId?: string;
}

/**
 * Run a batch: one transaction claims them all (attempts + 1), then they are computed one by one and
 * stored together in one transaction (see storeBatch). Runs already finished only have their jobs
 * completed.
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
	// The chain's lock is taken only when a run must be finished as exhausted (that writes an audit
	// event): claiming alone takes no lock that the storing of other batches holds. The chain lock must
	// come before the row locks (see lockChain), so a claim that finds an exhausted run starts again
	// with it.
	const claimOnce = (withChain: boolean) =>
		db().transaction(async (trx) => {
			await relaxed(trx);
			if (withChain) await lockChain(trx);
			const rows = await lockRuns(trx, ids);
			const present = new Set(rows.map((r) => Number(r.id)));
			const settled = [
				...ids.filter((id) => !present.has(id)),
				...rows.filter((r) => r.status === 'done' || r.status === 'error').map((r) => Number(r.id))
			];
			const open = rows.filter((r) => r.status === 'queued' || r.status === 'running');
			const exhausted = open.filter((r) => r.attempts >= maxAttempts).map((r) => Number(r.id));
			const toClaim = open.filter((r) => r.attempts < maxAttempts).map((r) => Number(r.id));
			if (exhausted.length && !withChain) return null;
			let mails = 0;
			if (exhausted.length) {
				// Every attempt so far ended without a result (the worker stopped): record it, never lose it.
				const done = await finishExhausted(trx, exhausted);
				await recordEvents(trx, actor, done.map(runFinishedEvent));
				for (const d of done) {
					mails += await findingsAfterRun(trx, actor, Number(d.id));
					mails += await afterRunFinished(trx, d);
				}
			}
			await complete(trx, [...settled, ...exhausted]);
			for (const id of settled) out.set(id, 'skipped');
			for (const id of exhausted) out.set(id, 'error');
			if (toClaim.length === 0) return { claimed: [] as ClaimedRun[], mails };
			return { claimed: await claimRuns(trx, toClaim), mails };
		});
	const claim = (await claimOnce(false)) ?? (await claimOnce(true))!;
	if (claim.mails) kickMail();
	// Fault-injection aid for the crash test (tests/integration/models/reverify.test.ts): wait after
	// claiming, so the test can kill the worker mid-run. Unset in production.
	if (claim.claimed.length && holdMs) await new Promise((r) => setTimeout(r, holdMs));

	// Computed one after another, stored in batches: one transaction (a handful of statements) per
	// batch, whatever its size. A batch is also stored when computing has taken a while, so a slow run
	// does not hold finished results back.
	let pending: RunOutcomeRow[] = [];
	let since = performance.now();
	const flush = async () => {
		if (pending.length === 0) return;
		const outcomes = pending;
		pending = [];
		since = performance.now();
		const mails = await storeBatch(outcomes, actor, complete);
		if (mails) kickMail();
		for (const o of outcomes) out.set(Number(o.id), o.status);
	};
	for (const run of claim.claimed) {
		pending.push(computeOne(run, workerLabel));
		if (performance.now() - since >= FLUSH_AFTER_MS) await flush();
	}
	await flush();
	return out;
}

/** Store computed results at the latest after this long (ms), even within a batch. */
const FLUSH_AFTER_MS = 1_000;

/** Run the engine on one claimed run; an engine refusal or exception is an 'error' outcome. */
function computeOne(run: ClaimedRun, workerLabel: string): RunOutcomeRow {
	const runId = Number(run.id);
	const t0 = performance.now();
	let outcome: Omit<RunOutcomeRow, 'id' | 'duration_ms'>;
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
		outcome = {
			status: 'done',
			verdict: r.verdict,
			result: r.result,
			worst_point: r.worstPoint,
			curves: r.curves,
			output_hash: r.outputHash,
			error: null
		};
	} catch (e) {
		const message =
			e instanceof ModelInputError
				? `The engine refused the input: ${e.message}`
				: `The engine failed: ${(e as Error)?.message ?? String(e)}`;
		console.error(`[worker ${workerLabel}] run ${runId}: ${message}`);
		outcome = {
			status: 'error',
			verdict: null,
			result: null,
			worst_point: null,
			curves: null,
			output_hash: null,
			error: message.slice(0, 2000)
		};
	}
	return { id: runId, ...outcome, duration_ms: Math.round(performance.now() - t0) };
}

/**
 * One transaction for a batch of outcomes: complete their jobs, store the runs still open (another
 * attempt that finished first keeps its result), their audit events, their findings, and the verdict-change notice of
 * each change whose last run this batch finished (checked once per change, not once per run).
 */
async function storeBatch(
	outcomes: RunOutcomeRow[],
	actor: Actor,
	complete: (trx: Knex.Transaction, runIds: number[]) => Promise<void>
): Promise<number> {
	return db().transaction(async (trx) => {
		await relaxed(trx);
		await lockChain(trx);
		await complete(
			trx,
			outcomes.map((o) => Number(o.id))
		);
		const finished = await storeOutcomes(trx, outcomes);
		await recordEvents(trx, actor, finished.map(runFinishedEvent));
		let mails = 0;
		// A failing verdict opens a finding, a proved one closes the analysis findings
		// (findings/service.ts): that is per run, so every stored run is looked at.
		for (const f of finished) mails += await findingsAfterRun(trx, actor, Number(f.id));
		const seen = new Set<string>();
		for (const f of finished) {
			const ref = f.trigger_ref ?? `run:${f.id}`;
			if (seen.has(ref)) continue;
			seen.add(ref);
			mails += await afterRunFinished(trx, f);
		}
		return mails;
	});
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
