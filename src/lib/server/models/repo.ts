import type { Db } from '../db';

// SQL for loop models and their immutable versions.

export interface ModelRow {
	id: number;
	project_id: number;
	name: string;
	description: string;
	owner_id: number | null;
	latest_version: number;
	created_at: Date;
}

export interface ModelVersionRow {
	id: number;
	model_id: number;
	version: number;
	note: string;
	content: { operatingPoints: { label: string; model: unknown }[] };
	content_hash: string;
	author_id: number | null;
	created_at: Date;
}

export const models = {
	list: (db: Db, projectId: number) =>
		db('models as m')
			.leftJoin('users as o', 'o.id', 'm.owner_id')
			.leftJoin('model_versions as v', function () {
				this.on('v.model_id', '=', 'm.id').andOn('v.version', '=', 'm.latest_version');
			})
			.where('m.project_id', projectId)
			.select(
				'm.id',
				'm.name',
				'm.description',
				'm.latest_version',
				'm.created_at',
				'o.display_name as owner_name',
				'o.email as owner_email',
				'v.created_at as latest_at',
				'v.content_hash as latest_hash',
				db.raw(
					`(select count(*)::int from requirements r join stability_specs s on s.id = r.current_spec_id where s.model_id = m.id) as requirement_count`
				)
			)
			.orderBy('m.name') as Promise<
			{
				id: number;
				name: string;
				description: string;
				latest_version: number;
				created_at: Date;
				owner_name: string | null;
				owner_email: string | null;
				latest_at: Date | null;
				latest_hash: string | null;
				requirement_count: number;
			}[]
		>,
	byId: (db: Db, id: number) => db<ModelRow>('models').where({ id }).first(),
	byName: (db: Db, projectId: number, name: string) =>
		db<ModelRow>('models').where({ project_id: projectId, name }).first(),
	lockById: (db: Db, id: number) => db<ModelRow>('models').where({ id }).forNoKeyUpdate().first(),
	insert: async (
		db: Db,
		row: { project_id: number; name: string; description: string; owner_id: number | null }
	) => (await db('models').insert(row).returning('*'))[0] as ModelRow,
	setLatest: (db: Db, id: number, version: number) =>
		db('models').where({ id }).update({ latest_version: version })
};

export const versions = {
	list: (db: Db, modelId: number) =>
		db('model_versions as v')
			.leftJoin('users as a', 'a.id', 'v.author_id')
			.where('v.model_id', modelId)
			.select(
				'v.id',
				'v.version',
				'v.note',
				'v.content_hash',
				'v.created_at',
				'a.display_name as author_name',
				db.raw(`jsonb_array_length(v.content->'operatingPoints') as point_count`)
			)
			.orderBy('v.version', 'desc') as Promise<
			{
				id: number;
				version: number;
				note: string;
				content_hash: string;
				created_at: Date;
				author_name: string | null;
				point_count: number;
			}[]
		>,
	get: (db: Db, modelId: number, version: number) =>
		db('model_versions as v')
			.leftJoin('users as a', 'a.id', 'v.author_id')
			.where({ 'v.model_id': modelId, 'v.version': version })
			.first('v.*', 'a.display_name as author_name') as Promise<
			(ModelVersionRow & { author_name: string | null }) | undefined
		>,
	byId: (db: Db, id: number) => db<ModelVersionRow>('model_versions').where({ id }).first(),
	insert: async (
		db: Db,
		row: {
			model_id: number;
			version: number;
			note: string;
			content: unknown;
			content_hash: string;
			author_id: number | null;
		}
	) =>
		(
			await db('model_versions')
				.insert({ ...row, content: JSON.stringify(row.content) })
				.returning('*')
		)[0] as ModelVersionRow
};

/** Requirements whose current specification uses the model (pinned to a version or tracking the latest). */
export function requirementsUsing(db: Db, modelId: number) {
	return db('requirements as r')
		.join('stability_specs as s', 's.id', 'r.current_spec_id')
		.join('requirement_revisions as rr', function () {
			this.on('rr.requirement_id', '=', 'r.id').andOn('rr.revision', '=', 'r.current_revision');
		})
		.leftJoin('model_versions as pv', 'pv.id', 's.model_version_id')
		.where('s.model_id', modelId)
		.select(
			'r.id',
			'r.identifier',
			'rr.title',
			'rr.status',
			's.check',
			's.operating_points',
			's.required_margin',
			'pv.version as pinned_version'
		)
		.orderBy('r.number') as Promise<
		{
			id: number;
			identifier: string;
			title: string;
			status: string;
			check: { type: string; sector?: [number, number | string | null] };
			operating_points: string[] | null;
			required_margin: number | null;
			pinned_version: number | null;
		}[]
	>;
}

/** Members who may own a model: analysts of the project and site administrators who are members. */
export function possibleOwners(db: Db, projectId: number) {
	return db('memberships as ms')
		.join('users as u', 'u.id', 'ms.user_id')
		.where('ms.project_id', projectId)
		.andWhere((q) => q.where('ms.role', 'analyst').orWhere('u.site_admin', true))
		.andWhere('u.disabled', false)
		.select('u.id', 'u.display_name', 'u.email')
		.orderBy('u.display_name') as Promise<{ id: number; display_name: string; email: string }[]>;
}

/** A site administrator with an enabled account (may own a model without being an analyst). */
export const activeSiteAdmin = async (db: Db, userId: number) =>
	!!(await db('users').where({ id: userId, site_admin: true, disabled: false }).first('id'));
