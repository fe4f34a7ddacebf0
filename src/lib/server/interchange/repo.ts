import type { Knex } from 'knex';
import type { Db } from '../db';

// SQL of requirements in and out. The service is the one caller.

export interface ExportDbRow {
	id: number;
	identifier: string;
	revision: number;
	title: string;
	statement: string;
	rationale: string;
	level: string;
	assurance_level: string;
	methods: string[];
	/** The requirement's review state now (the state of its current revision). */
	review_state: string;
	revised_at: Date;
	content_hash: string;
	spec_id: number | null;
	check: Record<string, unknown> | null;
	required_margin: number | null;
	operating_points: string[] | null;
	model_id: number | null;
	model_name: string | null;
	model_version_id: number | null;
	pinned_version: number | null;
	model_hash: string | null;
	object_id: string | null;
	local_revision: number | null;
	source_revision: number | null;
	source_last_change: Date | null;
}

/**
 * Requirement revisions with their specification, for an export. `pinned` names the revision and
 * specification of each requirement (a baseline's manifest); without it, the current ones. The import
 * source is the latest one at or below the revision written.
 */
export function exportRows(
	db: Db,
	projectId: number,
	pinned?: { ids: number[]; revisions: number[]; specIds: (number | null)[] }
): Promise<ExportDbRow[]> {
	const sel = pinned
		? `from unnest(?::bigint[], ?::int[], ?::bigint[]) with ordinality as w(id, revision, spec_id, ord)
			join requirements r on r.id = w.id and r.project_id = ?`
		: `from requirements r
			cross join lateral (select r.id, r.current_revision as revision, r.current_spec_id as spec_id, r.number as ord) w`;
	const bindings = (
		pinned ? [pinned.ids, pinned.revisions, pinned.specIds, projectId] : []
	) as Knex.RawBinding[];
	return db
		.raw(
			`select r.id, r.identifier, w.revision, v.title, v.statement, v.rationale, v.level, v.assurance_level,
				v.methods, r.review_state, v.created_at as revised_at, v.content_hash,
				s.id as spec_id, s."check", s.required_margin, s.operating_points, s.model_id, m.name as model_name,
				s.model_version_id, pmv.version as pinned_version,
				coalesce(pmv.content_hash, lmv.content_hash) as model_hash,
				src.object_id, src.local_revision, src.source_revision, src.source_last_change
			${sel}
			join requirement_revisions v on v.requirement_id = r.id and v.revision = w.revision
			left join stability_specs s on s.id = w.spec_id
			left join models m on m.id = s.model_id
			left join model_versions pmv on pmv.id = s.model_version_id
			left join model_versions lmv on s.model_version_id is null and lmv.model_id = m.id and lmv.version = m.latest_version
			left join lateral (
				select x.object_id, x.local_revision, x.source_revision, x.source_last_change
				from requirement_import_sources x
				where x.requirement_id = r.id and x.local_revision <= w.revision
				order by x.local_revision desc limit 1
			) src on true
			${pinned ? '' : 'where r.project_id = ?'}
			order by w.ord, r.id`,
			pinned ? bindings : [projectId]
		)
		.then((r: { rows: ExportDbRow[] }) => r.rows);
}

export const activeLinks = (db: Db, projectId: number) =>
	db('requirement_links as l')
		.join('requirements as c', 'c.id', 'l.child_id')
		.where('c.project_id', projectId)
		.whereNull('l.removed_at')
		.orderBy([{ column: 'l.child_id' }, { column: 'l.parent_id' }])
		.select('l.child_id', 'l.parent_id') as Promise<{ child_id: number; parent_id: number }[]>;

/** Requirement ids of a project by identifier (a baseline's manifest names them so). */
export const idsByIdentifier = (db: Db, projectId: number) =>
	db('requirements').where({ project_id: projectId }).select('id', 'identifier') as Promise<
		{ id: number; identifier: string }[]
	>;

/** The project's requirements with their import sources (object ids), for matching a file's records. */
export const importSourceIds = (db: Db, projectId: number) =>
	db('requirement_import_sources as x')
		.join('requirements as r', 'r.id', 'x.requirement_id')
		.where('r.project_id', projectId)
		.distinct('x.object_id', 'x.requirement_id') as Promise<{ object_id: string; requirement_id: number }[]>;

export const insertImportSource = (
	db: Db,
	row: {
		requirement_id: number;
		local_revision: number;
		object_id: string;
		source_revision: number | null;
		source_last_change: string | null;
		import_id: number;
	}
) => db('requirement_import_sources').insert(row).onConflict(['requirement_id', 'local_revision']).ignore();

export const modelsWithVersions = (db: Db, projectId: number) =>
	db('models as m')
		.leftJoin('model_versions as mv', 'mv.model_id', 'm.id')
		.where('m.project_id', projectId)
		.select(
			'm.id as model_id',
			'm.name',
			'm.latest_version',
			'mv.id as version_id',
			'mv.version',
			'mv.content_hash',
			db.raw(`mv.content->'operatingPoints' as points`)
		) as Promise<
		{
			model_id: number;
			name: string;
			latest_version: number;
			version_id: number | null;
			version: number | null;
			content_hash: string | null;
			points: { label: string }[] | null;
		}[]
	>;

/**
 * What an import is compared against, as one text: every requirement's current revision and
 * specification, every active link, every model's latest version. Equal texts mean nothing an import
 * looks at changed.
 */
export async function projectState(db: Db, projectId: number): Promise<string> {
	const r = await db.raw(
		`select md5(coalesce((select string_agg(id || ':' || current_revision || ':' || coalesce(current_spec_id, 0), ',' order by id)
				from requirements where project_id = ?), '') || '|' ||
			coalesce((select string_agg(l.child_id || '>' || l.parent_id, ',' order by l.id)
				from requirement_links l join requirements c on c.id = l.child_id
				where c.project_id = ? and l.removed_at is null), '') || '|' ||
			coalesce((select string_agg(id || ':' || latest_version, ',' order by id) from models where project_id = ?), '')) as state`,
		[projectId, projectId, projectId]
	);
	return r.rows[0].state as string;
}

export interface ImportRow {
	id: number;
	project_id: number;
	format: string;
	file_name: string;
	file_sha256: string;
	size_bytes: number;
	status: 'preview' | 'running' | 'confirmed' | 'failed';
	mapping: unknown;
	preview: unknown;
	project_state: string;
	result: unknown;
	progress: { done: number; total: number } | null;
	created_by: number | null;
	created_at: Date;
	confirmed_at: Date | null;
}

const SUMMARY = [
	'id',
	'project_id',
	'format',
	'file_name',
	'file_sha256',
	'size_bytes',
	'status',
	'mapping',
	'preview',
	'project_state',
	'result',
	'progress',
	'created_by',
	'created_at',
	'confirmed_at'
];

export const imports = {
	insert: async (
		db: Db,
		row: Omit<ImportRow, 'id' | 'status' | 'result' | 'progress' | 'created_at' | 'confirmed_at'> & {
			content: Buffer;
		}
	) =>
		(
			await db('imports')
				.insert({ ...row, mapping: JSON.stringify(row.mapping), preview: JSON.stringify(row.preview) })
				.returning(SUMMARY)
		)[0] as ImportRow,
	byId: (db: Db, id: number) => db('imports').where({ id }).first(SUMMARY) as Promise<ImportRow | undefined>,
	content: async (db: Db, id: number) =>
		((await db('imports').where({ id }).first('content')) as { content: Buffer } | undefined)?.content,
	list: (db: Db, projectId: number, limit = 20) =>
		db('imports as i')
			.leftJoin('users as u', 'u.id', 'i.created_by')
			.where('i.project_id', projectId)
			.orderBy('i.id', 'desc')
			.limit(limit)
			.select(
				'i.id',
				'i.format',
				'i.file_name',
				'i.status',
				'i.created_at',
				'i.confirmed_at',
				db.raw(`i.preview->'counts' as counts`),
				'u.display_name as by'
			) as Promise<
			{
				id: number;
				format: string;
				file_name: string;
				status: string;
				created_at: Date;
				confirmed_at: Date | null;
				counts: Record<string, number> | null;
				by: string | null;
			}[]
		>,
	setPreview: (db: Db, id: number, mapping: unknown, preview: unknown, state: string) =>
		db('imports')
			.where({ id, status: 'preview' })
			.update({ mapping: JSON.stringify(mapping), preview: JSON.stringify(preview), project_state: state }),
	/** Take the import for confirming: true when it was a preview (no one else is confirming it). */
	claim: async (db: Db, id: number, total: number) =>
		(await db('imports')
			.where({ id, status: 'preview' })
			.update({ status: 'running', progress: JSON.stringify({ done: 0, total }) })) === 1,
	release: (db: Db, id: number) =>
		db('imports').where({ id, status: 'running' }).update({ status: 'preview', progress: null }),
	progress: (db: Db, id: number, done: number, total: number) =>
		db('imports')
			.where({ id })
			.update({ progress: JSON.stringify({ done, total }) }),
	finish: (db: Db, id: number, result: unknown) =>
		db('imports')
			.where({ id })
			.update({ status: 'confirmed', result: JSON.stringify(result), confirmed_at: db.fn.now() }),
	fail: (db: Db, id: number, result: unknown) =>
		db('imports')
			.where({ id })
			.update({ status: 'failed', result: JSON.stringify(result) })
};

export const mappings = {
	get: async (db: Db, projectId: number, format: string) =>
		(
			(await db('import_mappings').where({ project_id: projectId, format }).first('mapping')) as
				{ mapping: unknown } | undefined
		)?.mapping ?? null,
	put: (db: Db, projectId: number, format: string, mapping: unknown) =>
		db('import_mappings')
			.insert({ project_id: projectId, format, mapping: JSON.stringify(mapping), updated_at: db.fn.now() })
			.onConflict(['project_id', 'format'])
			.merge()
};
