import type { Db } from '../db';

// All SQL of analysis runs: queuing, the state read, claiming, storing, the verdict-change notices,
// engine versions, queue health. analysis_runs is the one record of a run's status and attempts (see
// run.ts); the job queue only carries "run N is due" to a worker.

export interface RunRow {
	id: number;
	project_id: number;
	requirement_id: number;
	requirement_revision: number;
	spec_id: number;
	model_version_id: number;
	model_hash: string;
	engine_version: string;
	status: 'queued' | 'running' | 'done' | 'error';
	verdict: 'pass' | 'fail' | 'inconclusive' | null;
	result: Record<string, unknown> | null;
	worst_point: string | null;
	curves: unknown;
	error: string | null;
	output_hash: string | null;
	trigger: string;
	trigger_ref: string | null;
	triggered_by: number | null;
	attempts: number;
	queued_at: Date;
	started_at: Date | null;
	finished_at: Date | null;
	duration_ms: number | null;
	model_id: number;
	model_name: string;
	model_version: number;
	triggered_by_name: string | null;
}

function base(db: Db) {
	return db('analysis_runs as ar')
		.join('model_versions as mv', 'mv.id', 'ar.model_version_id')
		.join('models as m', 'm.id', 'mv.model_id')
		.leftJoin('users as u', 'u.id', 'ar.triggered_by');
}

const summaryColumns = [
	'ar.id',
	'ar.project_id',
	'ar.requirement_id',
	'ar.requirement_revision',
	'ar.spec_id',
	'ar.model_version_id',
	'ar.model_hash',
	'ar.engine_version',
	'ar.status',
	'ar.verdict',
	'ar.result',
	'ar.worst_point',
	'ar.error',
	'ar.output_hash',
	'ar.trigger',
	'ar.trigger_ref',
	'ar.triggered_by',
	'ar.attempts',
	'ar.queued_at',
	'ar.started_at',
	'ar.finished_at',
	'ar.duration_ms',
	'm.id as model_id',
	'm.name as model_name',
	'mv.version as model_version',
	'u.display_name as triggered_by_name'
];

export const runs = {
	forRequirement: (db: Db, requirementId: number, limit = 100) =>
		base(db)
			.where('ar.requirement_id', requirementId)
			.select(summaryColumns)
			.orderBy([
				{ column: 'ar.queued_at', order: 'desc' },
				{ column: 'ar.id', order: 'desc' }
			])
			.limit(limit) as Promise<Omit<RunRow, 'curves'>[]>,
	byId: (db: Db, id: number) =>
		base(db)
			.where('ar.id', id)
			.first([...summaryColumns, 'ar.curves']) as Promise<RunRow | undefined>,
	/** The latest finished run per requirement (for the trace graph). */
	latestFinished: (db: Db, projectId: number) =>
		db.raw(
			`select distinct on (requirement_id) requirement_id, id, status, verdict, model_version_id
			from analysis_runs where project_id = ? and status in ('done', 'error')
			order by requirement_id, finished_at desc, id desc`,
			[projectId]
		)
};

export const requirementProject = (db: Db, requirementId: number) =>
	db('requirements as r')
		.join('projects as p', 'p.id', 'r.project_id')
		.where('r.id', requirementId)
		.first('r.id', 'r.project_id', 'p.key as project_key') as Promise<
		{ id: number; project_id: number; project_key: string } | undefined
	>;

/** The current specification of a requirement, with its model, for the analysis panel. */
export const currentSpec = (db: Db, requirementId: number) =>
	db('requirements as r')
		.join('stability_specs as s', 's.id', 'r.current_spec_id')
		.join('models as m', 'm.id', 's.model_id')
		.leftJoin('model_versions as pv', 'pv.id', 's.model_version_id')
		.where('r.id', requirementId)
		.first(
			's.id',
			's.version',
			's.check',
			's.required_margin',
			's.operating_points',
			'm.id as model_id',
			'm.name as model_name',
			'pv.version as pinned_version'
		) as Promise<
		| {
				id: number;
				version: number;
				check: Record<string, unknown>;
				required_margin: number | null;
				operating_points: string[] | null;
				model_id: number;
				model_name: string;
				pinned_version: number | null;
		  }
		| undefined
	>;

/** Rows of the trace graph of a project. */
export async function graphRows(db: Db, projectId: number) {
	const [reqs, links, mods, vers] = await Promise.all([
		db('requirements as r')
			.join('requirement_revisions as rr', function () {
				this.on('rr.requirement_id', '=', 'r.id').andOn('rr.revision', '=', 'r.current_revision');
			})
			.leftJoin('stability_specs as s', 's.id', 'r.current_spec_id')
			.where('r.project_id', projectId)
			.select('r.id', 'r.identifier', 'rr.title', 'rr.status', 'rr.level', 's.model_id', 's.model_version_id')
			.orderBy('r.number') as Promise<
			{
				id: number;
				identifier: string;
				title: string;
				status: string;
				level: string;
				model_id: number | null;
				model_version_id: number | null;
			}[]
		>,
		db('requirement_links as l')
			.join('requirements as c', 'c.id', 'l.child_id')
			.where('c.project_id', projectId)
			.whereNull('l.removed_at')
			.select('l.child_id', 'l.parent_id') as Promise<{ child_id: number; parent_id: number }[]>,
		db('models').where({ project_id: projectId }).select('id', 'name', 'latest_version') as Promise<
			{ id: number; name: string; latest_version: number }[]
		>,
		db('model_versions as v')
			.join('models as m', 'm.id', 'v.model_id')
			.where('m.project_id', projectId)
			.select('v.id', 'v.model_id', 'v.version', 'v.content_hash') as Promise<
			{ id: number; model_id: number; version: number; content_hash: string }[]
		>
	]);
	return { reqs, links, mods, vers };
}

// --- Queuing -------------------------------------------------------------------------------------

/**
 * Insert the runs of the current inputs of the requirements matched by `where` (over r, s, mv), once
 * per (requirement, revision, specification, model version, engine version). Returns the new run ids.
 */
export async function insertRuns(
	trx: Db,
	run: { engineVersion: string; trigger: string; ref: string | null; userId: number | null },
	where: string,
	bindings: unknown[]
): Promise<number[]> {
	// The model version in force is the view requirement_inputs (its one definition).
	// Retired requirements are not re-verified.
	const r = await trx.raw(
		`insert into analysis_runs (project_id, requirement_id, requirement_revision, spec_id, model_version_id,
				model_hash, engine_version, trigger, trigger_ref, triggered_by)
			select r.project_id, r.id, r.current_revision, ri.spec_id, ri.model_version_id, ri.model_hash, ?, ?, ?, ?
			from requirements r
			join requirement_revisions rr on rr.requirement_id = r.id and rr.revision = r.current_revision
			join requirement_inputs ri on ri.requirement_id = r.id and ri.model_version_id is not null
			where rr.status <> 'retired' and (${where})
			order by r.id
			on conflict (requirement_id, requirement_revision, spec_id, model_version_id, engine_version) do nothing
			returning id`,
		[run.engineVersion, run.trigger, run.ref, run.userId, ...bindings] as never[]
	);
	return (r.rows as { id: number }[]).map((x) => Number(x.id));
}

// --- Claiming and storing (run.ts) ---------------------------------------------------------------

/**
 * The worker's transactions commit asynchronously (synchronous_commit off): a result is re-derivable,
 * and a job's completion commits in the same transaction as its result, so after a crash of the
 * database server either both are there or the job is still open and the run is done again.
 */
export async function relaxed(trx: Db): Promise<void> {
	await trx.raw('set local synchronous_commit = off');
}

/** The columns a finished run hands to the audit event and the notices. */
export const FINISHED_COLUMNS = [
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
export type FinishedRow = Pick<RunRow, (typeof FINISHED_COLUMNS)[number]>;

/** Lock the runs (in id order) and read their status and attempts. */
export const lockRuns = (trx: Db, ids: number[]) =>
	trx('analysis_runs')
		.whereIn('id', ids)
		.forUpdate()
		.orderBy('id')
		.select('id', 'status', 'attempts') as Promise<
		{ id: number; status: RunRow['status']; attempts: number }[]
	>;

/** Finish, as errors, runs that used up their attempts without a result. */
export const finishExhausted = (trx: Db, ids: number[]) =>
	trx('analysis_runs')
		.whereIn('id', ids)
		.update({
			status: 'error',
			error: trx.raw(`'No result after ' || attempts || ' attempts: the worker stopped during each one.'`),
			finished_at: trx.fn.now()
		})
		.returning([...FINISHED_COLUMNS]) as Promise<FinishedRow[]>;

export interface ClaimedRun {
	id: number;
	trigger_ref: string | null;
	check: unknown;
	required_margin: number | null;
	operating_points: string[] | null;
	content: { operatingPoints: { label: string; model: never }[] };
}

/** Claim the runs (one more attempt each) and read their inputs. */
export async function claimRuns(trx: Db, ids: number[]): Promise<ClaimedRun[]> {
	await trx('analysis_runs')
		.whereIn('id', ids)
		.update({ status: 'running', attempts: trx.raw('attempts + 1'), started_at: trx.fn.now() });
	return (
		await trx.raw(
			`select ar.id, ar.trigger_ref, s."check", s.required_margin, s.operating_points, mv.content
			from analysis_runs ar
			join stability_specs s on s.id = ar.spec_id
			join model_versions mv on mv.id = ar.model_version_id
			where ar.id = any(?::bigint[]) order by ar.id`,
			[ids]
		)
	).rows;
}

export interface RunOutcomeRow {
	id: number;
	status: 'done' | 'error';
	verdict: string | null;
	result: unknown;
	worst_point: string | null;
	curves: unknown;
	output_hash: string | null;
	error: string | null;
	duration_ms: number;
}

/**
 * Store the outcomes of a batch of claimed runs in one statement; a run another attempt finished first
 * is left alone (only runs still 'running' are written). Returns the rows written, in id order.
 */
export async function storeOutcomes(trx: Db, outcomes: RunOutcomeRow[]): Promise<FinishedRow[]> {
	if (outcomes.length === 0) return [];
	const r = await trx.raw(
		`update analysis_runs ar set status = v.status, verdict = v.verdict, result = v.result,
				worst_point = v.worst_point, curves = v.curves, output_hash = v.output_hash, error = v.error,
				duration_ms = v.duration_ms, finished_at = now()
			from jsonb_to_recordset(?::jsonb) as v(id bigint, status text, verdict text, result jsonb,
				worst_point text, curves jsonb, output_hash text, error text, duration_ms integer)
			where ar.id = v.id and ar.status = 'running'
			returning ${FINISHED_COLUMNS.map((c) => `ar.${c}`).join(', ')}`,
		[JSON.stringify(outcomes)]
	);
	return (r.rows as FinishedRow[]).sort((a, b) => Number(a.id) - Number(b.id));
}

// --- Verdict-change notices (notices.ts) ---------------------------------------------------------

// Two-key advisory lock namespace (the audit chain uses the one-key form).
const NOTICE_LOCK = 7_431_003;

/** Serialise the finishers of one change: the last one sees every other run committed. */
export async function lockChange(trx: Db, ref: string): Promise<void> {
	await trx.raw('select pg_advisory_xact_lock(?, hashtext(?))', [NOTICE_LOCK, ref]);
}

export async function openRunsOfChange(trx: Db, triggerRef: string): Promise<number> {
	const open = await trx('analysis_runs')
		.where({ trigger_ref: triggerRef })
		.whereIn('status', ['queued', 'running'])
		.count<{ count: string | number }[]>('* as count');
	return Number(open[0].count);
}

/** Claim the notice of a change; false when it was sent already. */
export async function claimNotice(trx: Db, ref: string): Promise<boolean> {
	const claimed = await trx.raw(
		`insert into analysis_notices (trigger_ref, changes, mails) values (?, 0, 0) on conflict do nothing returning trigger_ref`,
		[ref]
	);
	return claimed.rows.length > 0;
}

export const recordNotice = (trx: Db, ref: string, counts: { changes: number; mails: number }) =>
	trx('analysis_notices').where({ trigger_ref: ref }).update(counts);

export interface ChangeRun {
	id: number;
	requirement_id: number;
	status: string;
	verdict: string | null;
	worst_point: string | null;
	identifier: string;
	title: string;
	req_owner: number | null;
	model_owner: number | null;
	model_name: string;
	model_version: number;
	project_key: string;
	trigger: string;
	prev_status: string | null;
	prev_verdict: string | null;
	not_applicable: unknown;
	prev_not_applicable: unknown;
}

/**
 * Each run of a change (its trigger_ref, or the one run) with the outcome before it: the requirement's
 * newest finished run outside this change that finished no later than it.
 */
export async function changeRuns(
	trx: Db,
	change: { triggerRef: string } | { runId: number }
): Promise<ChangeRun[]> {
	const byRef = 'triggerRef' in change;
	return (
		await trx.raw(
			`with g as (select * from analysis_runs where ${byRef ? 'trigger_ref = ?' : 'id = ?'})
			select g.id, g.requirement_id, g.status, g.verdict, g.worst_point, g.trigger,
				g.result -> 'notApplicable' as not_applicable, prev.not_applicable as prev_not_applicable,
				r.identifier, rr.title, rr.owner_id as req_owner, m.owner_id as model_owner, m.name as model_name,
				mv.version as model_version, p.key as project_key, prev.status as prev_status, prev.verdict as prev_verdict
			from g
			join requirements r on r.id = g.requirement_id
			join requirement_revisions rr on rr.requirement_id = r.id and rr.revision = r.current_revision
			join model_versions mv on mv.id = g.model_version_id
			join models m on m.id = mv.model_id
			join projects p on p.id = g.project_id
			left join lateral (
				select x.status, x.verdict, x.result -> 'notApplicable' as not_applicable from analysis_runs x
				where x.requirement_id = g.requirement_id and x.status in ('done', 'error')
					and x.id not in (select id from g) and x.finished_at <= g.finished_at
				order by x.finished_at desc, x.id desc limit 1
			) prev on true
			order by r.number`,
			[byRef ? change.triggerRef : change.runId]
		)
	).rows;
}

/** The people a notice goes to (enabled accounts only). */
export const noticeRecipients = (trx: Db, userIds: number[]) =>
	trx('users')
		.whereIn('id', userIds)
		.where({ disabled: false })
		.select('id', 'email', 'display_name') as Promise<{ id: number; email: string; display_name: string }[]>;

// --- Engine versions (engine-version.ts) ---------------------------------------------------------

const ENGINE_LOCK = 7_431_004;

/** Serialise start-ups that record engine versions. */
export async function lockEngineVersions(trx: Db): Promise<void> {
	await trx.raw('select pg_advisory_xact_lock(?)', [ENGINE_LOCK]);
}

export const engineVersionSeen = async (trx: Db, version: string) =>
	!!(await trx('engine_versions_seen').where({ engine_version: version }).first());

export const recordEngineVersion = (trx: Db, version: string, runsQueued: number) =>
	trx('engine_versions_seen').insert({ engine_version: version, runs_queued: runsQueued });

// --- Reads for pages and health ------------------------------------------------------------------

/** The runs that used one model version, one row per requirement (its newest run with that version). */
export async function runsOfModelVersion(db: Db, modelVersionId: number) {
	const r = await db.raw(
		`select distinct on (ar.requirement_id) ar.id, ar.requirement_id, r.identifier, ar.status, ar.verdict, ar.worst_point, ar.finished_at
		from analysis_runs ar join requirements r on r.id = ar.requirement_id
		where ar.model_version_id = ?
		order by ar.requirement_id, ar.queued_at desc, ar.id desc`,
		[modelVersionId]
	);
	return r.rows as {
		id: number;
		requirement_id: number;
		identifier: string;
		status: string;
		verdict: string | null;
		worst_point: string | null;
		finished_at: Date | null;
	}[];
}

/** How many runs wait for a worker, and for how long the oldest has waited (seconds). */
export async function waitingRuns(db: Db): Promise<{ waiting: number; oldest: number }> {
	const r = await db.raw(
		`select count(*)::int as waiting, coalesce(extract(epoch from now() - min(queued_at)), 0)::int as oldest
		from analysis_runs where status = 'queued'`
	);
	return r.rows[0] as { waiting: number; oldest: number };
}

// --- Worker heartbeats (migration 20261202160000) -------------------------------------------------

export interface HeartbeatRow {
	worker_id: string;
	host: string;
	pid: number;
	started_at: Date;
	beat_at: Date;
	stopped_at: Date | null;
	/** Seconds since the last beat, by the database's clock (one clock for every machine). */
	age_seconds: number;
}

export const heartbeats = {
	async beat(db: Db, w: { workerId: string; host: string; pid: number }): Promise<void> {
		await db.raw(
			`insert into worker_heartbeats (worker_id, host, pid) values (?, ?, ?)
			on conflict (worker_id) do update set beat_at = now(), stopped_at = null`,
			[w.workerId, w.host, w.pid]
		);
	},
	async stopped(db: Db, workerId: string): Promise<void> {
		await db.raw(`update worker_heartbeats set stopped_at = now() where worker_id = ?`, [workerId]);
	},
	/** Forget workers silent for a day (each start adds a row). */
	async prune(db: Db): Promise<void> {
		await db.raw(`delete from worker_heartbeats where beat_at < now() - interval '1 day'`);
	},
	/** The most recent workers, newest beat first. */
	async recent(db: Db, limit = 10): Promise<HeartbeatRow[]> {
		const r = await db.raw(
			`select worker_id, host, pid, started_at, beat_at, stopped_at,
				extract(epoch from now() - beat_at)::float8 as age_seconds
			from worker_heartbeats order by beat_at desc limit ?`,
			[limit]
		);
		return r.rows as HeartbeatRow[];
	}
};
