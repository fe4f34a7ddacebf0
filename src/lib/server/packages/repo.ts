import type { Db } from '../db';

// SQL only: the data_packages records and the stored rows a package copies out (run results and curves,
// model version contents, specifications, evidence storage keys), each read by the ids a manifest names.

export type PackageStatus = 'queued' | 'running' | 'done' | 'error';

export interface PackageRow {
	id: number;
	project_id: number;
	baseline_id: number | null;
	status: PackageStatus;
	progress: number;
	step: string;
	attempts: number;
	error: string | null;
	manifest_hash: string | null;
	report_pages: number | null;
	report_key: string | null;
	report_sha256: string | null;
	report_bytes: number | string | null;
	archive_key: string | null;
	archive_sha256: string | null;
	archive_bytes: number | string | null;
	requested_by: number | null;
	requested_by_label: string;
	requested_at: Date;
	started_at: Date | null;
	finished_at: Date | null;
}

export interface RunRow {
	id: number;
	verdict: string | null;
	result: Record<string, unknown> | null;
	worst_point: string | null;
	curves: unknown;
	output_hash: string | null;
	status: string;
	error: string | null;
}

export interface ModelVersionRow {
	id: number;
	model: string;
	version: number;
	note: string;
	content: unknown;
	content_hash: string;
	created_at: Date;
}

export interface SpecRow {
	id: number;
	check: Record<string, unknown>;
	required_margin: number | null;
	operating_points: string[] | null;
}

export const packages = {
	insert: async (
		db: Db,
		row: Pick<PackageRow, 'project_id' | 'baseline_id' | 'requested_by' | 'requested_by_label'>
	) => (await db('data_packages').insert(row).returning('*'))[0] as PackageRow,
	/**
	 * A package of the same baseline (null: a draft) still waiting in the queue, or, for a baseline,
	 * being built: a second request while one is on its way gets that one. A baseline's package is
	 * fixed by its frozen manifest; a draft that has started may already have read the present state,
	 * so only a queued draft is shared.
	 */
	inFlight: (db: Db, projectId: number, baselineId: number | null) =>
		db<PackageRow>('data_packages')
			.where({ project_id: projectId })
			.andWhere((q) =>
				baselineId === null
					? q.whereNull('baseline_id').where({ status: 'queued' })
					: q.where({ baseline_id: baselineId }).whereIn('status', ['queued', 'running'])
			)
			.orderBy('id', 'desc')
			.first(),
	byId: (db: Db, projectId: number, id: number) =>
		db<PackageRow>('data_packages').where({ project_id: projectId, id }).first(),
	byIdAnyProject: (db: Db, id: number) => db<PackageRow>('data_packages').where({ id }).first(),
	/** The newest packages of a baseline (null: the project's drafts). */
	latest: (db: Db, projectId: number, baselineId: number | null, limit = 5) =>
		db<PackageRow>('data_packages')
			.where({ project_id: projectId })
			.andWhere((q) =>
				baselineId === null ? q.whereNull('baseline_id') : q.where({ baseline_id: baselineId })
			)
			.orderBy('id', 'desc')
			.limit(limit),
	/** Claim a queued (or stalled running) package: one builder at a time per row. */
	claim: async (db: Db, id: number): Promise<PackageRow | undefined> =>
		(
			await db('data_packages')
				.where({ id })
				.whereIn('status', ['queued', 'running'])
				.update({
					status: 'running',
					attempts: db.raw('attempts + 1'),
					started_at: db.fn.now(),
					progress: 0,
					step: 'starting'
				})
				.returning('*')
		)[0] as PackageRow | undefined,
	progress: (db: Db, id: number, progress: number, step: string) =>
		db('data_packages')
			.where({ id, status: 'running' })
			.update({ progress: Math.max(0, Math.min(100, Math.round(progress))), step }),
	finish: (
		db: Db,
		id: number,
		files: Pick<
			PackageRow,
			| 'manifest_hash'
			| 'report_pages'
			| 'report_key'
			| 'report_sha256'
			| 'report_bytes'
			| 'archive_key'
			| 'archive_sha256'
			| 'archive_bytes'
		>
	) =>
		db('data_packages')
			.where({ id })
			.update({ ...files, status: 'done', progress: 100, step: 'done', finished_at: db.fn.now() }),
	fail: (db: Db, id: number, message: string) =>
		db('data_packages')
			.where({ id })
			.update({ status: 'error', step: 'failed', error: message.slice(0, 2000), finished_at: db.fn.now() })
};

export const stored = {
	runs: (db: Db, ids: number[]) =>
		ids.length
			? (db('analysis_runs')
					.whereIn('id', ids)
					.select(
						'id',
						'verdict',
						'result',
						'worst_point',
						'curves',
						'output_hash',
						'status',
						'error'
					) as Promise<RunRow[]>)
			: Promise.resolve([] as RunRow[]),
	modelVersions: (db: Db, ids: number[]) =>
		ids.length
			? (db('model_versions as v')
					.join('models as m', 'm.id', 'v.model_id')
					.whereIn('v.id', ids)
					.orderBy([{ column: 'm.name' }, { column: 'v.version' }])
					.select(
						'v.id',
						'm.name as model',
						'v.version',
						'v.note',
						'v.content',
						'v.content_hash',
						'v.created_at'
					) as Promise<ModelVersionRow[]>)
			: Promise.resolve([] as ModelVersionRow[]),
	specs: (db: Db, ids: number[]) =>
		ids.length
			? (db('stability_specs')
					.whereIn('id', ids)
					.select('id', 'check', 'required_margin', 'operating_points') as Promise<SpecRow[]>)
			: Promise.resolve([] as SpecRow[]),
	evidenceFiles: (db: Db, ids: number[]) =>
		ids.length
			? (db('evidence_files')
					.whereIn('id', ids)
					.select('id', 'storage_key', 'sha256', 'size_bytes') as Promise<
					{ id: number; storage_key: string; sha256: string; size_bytes: number | string }[]
				>)
			: Promise.resolve([]),
	/** The baseline frozen just before this one (for "what changed"), or null. */
	previousBaseline: (db: Db, projectId: number, number: number | null) =>
		db('baselines')
			.where({ project_id: projectId })
			.modify((q) => {
				if (number !== null) q.where('number', '<', number);
			})
			.orderBy('number', 'desc')
			.first('id', 'number', 'label', 'manifest', 'manifest_hash', 'created_at') as Promise<
			| {
					id: number;
					number: number;
					label: string;
					manifest: unknown;
					manifest_hash: string;
					created_at: Date;
			  }
			| undefined
		>
};
