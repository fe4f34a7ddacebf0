import type { Db } from '../db';

// SQL for analysis runs.

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
