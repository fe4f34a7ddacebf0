import type { Db } from '../db';
import type { ListFilters } from './schema';

// SQL only. The service is the one caller and owns the transactions.

export interface RequirementRow {
	id: number;
	project_id: number;
	number: number;
	identifier: string;
	current_revision: number;
	current_spec_id: number | null;
	review_state: string;
	approved_revision: number | null;
	created_by: number | null;
	created_at: Date;
	updated_at: Date;
}

export interface RevisionRow {
	id: number;
	requirement_id: number;
	revision: number;
	title: string;
	statement: string;
	rationale: string;
	level: string;
	assurance_level: string;
	methods: string[];
	owner_id: number | null;
	status: string;
	change_note: string;
	author_id: number | null;
	content_hash: string;
	created_at: Date;
}

/** A requirement with its current revision (and who owns it). */
export interface RequirementView extends RevisionRow {
	id: number;
	revision_id: number;
	project_id: number;
	number: number;
	identifier: string;
	current_revision: number;
	current_spec_id: number | null;
	updated_at: Date;
	owner_name: string | null;
	owner_email: string | null;
}

export interface LinkRow {
	id: number;
	child_id: number;
	parent_id: number;
	child_revision: number;
	parent_revision: number;
	created_by: number | null;
	created_at: Date;
	removed_by: number | null;
	removed_at: Date | null;
}

export interface SpecRow {
	id: number;
	requirement_id: number;
	version: number;
	check: Record<string, unknown>;
	required_margin: number | null;
	operating_points: string[] | null;
	model_id: number;
	model_version_id: number | null;
	template: string | null;
	content_hash: string;
	author_id: number | null;
	created_at: Date;
}

function viewQuery(db: Db) {
	return db('requirements as r')
		.join('requirement_revisions as v', function () {
			this.on('v.requirement_id', 'r.id').andOn('v.revision', 'r.current_revision');
		})
		.leftJoin('users as o', 'o.id', 'v.owner_id')
		.select(
			'v.*',
			'v.id as revision_id',
			'r.id',
			'r.project_id',
			'r.number',
			'r.identifier',
			'r.current_revision',
			'r.current_spec_id',
			'r.updated_at',
			'o.display_name as owner_name',
			'o.email as owner_email',
			// The review state of the current revision (the revision's own column is what it was written with).
			'r.review_state as status',
			'r.approved_revision'
		);
}

export const projectsForRequirements = {
	/** Lock the project row and take the next number (never reused: the counter only grows). */
	takeNumber: async (db: Db, projectId: number): Promise<number> => {
		const row = await db('projects').where({ id: projectId }).forUpdate().first('next_requirement_number');
		const n = Number(row.next_requirement_number);
		await db('projects')
			.where({ id: projectId })
			.update({ next_requirement_number: n + 1 });
		return n;
	},
	lock: (db: Db, projectId: number) => db('projects').where({ id: projectId }).forUpdate().first('id'),
	/** After an identifier <KEY>-<n> came from a file: the counter continues above n. */
	moveNumberPast: (db: Db, projectId: number, n: number) =>
		db('projects')
			.where({ id: projectId })
			.update({ next_requirement_number: db.raw('greatest(next_requirement_number, ?)', [n + 1]) }),
	isMember: async (db: Db, projectId: number, userId: number) =>
		!!(await db('memberships').where({ project_id: projectId, user_id: userId }).first('user_id')),
	members: (db: Db, projectId: number) =>
		db('memberships as m')
			.join('users as u', 'u.id', 'm.user_id')
			.where('m.project_id', projectId)
			.where('u.disabled', false)
			.select('u.id', 'u.display_name as name', 'u.email', 'm.role')
			.orderBy('u.display_name') as Promise<{ id: number; name: string; email: string; role: string }[]>
};

export const requirements = {
	insert: async (
		db: Db,
		row: { project_id: number; number: number; identifier: string; created_by: number | null }
	) => (await db('requirements').insert(row).returning('*'))[0] as RequirementRow,
	byId: (db: Db, id: number) => db<RequirementRow>('requirements').where({ id }).first(),
	byIdentifier: (db: Db, projectId: number, identifier: string) =>
		db<RequirementRow>('requirements').where({ project_id: projectId, identifier }).first(),
	// NO KEY UPDATE: serialises edits of one requirement without blocking the foreign-key checks of
	// concurrent run inserts (a model publish), which would otherwise deadlock with a specification edit.
	lock: (db: Db, id: number) => db<RequirementRow>('requirements').where({ id }).forNoKeyUpdate().first(),
	setCurrentRevision: (db: Db, id: number, revision: number) =>
		db('requirements').where({ id }).update({ current_revision: revision, updated_at: db.fn.now() }),
	setCurrentSpec: (db: Db, id: number, specId: number) =>
		db('requirements').where({ id }).update({ current_spec_id: specId, updated_at: db.fn.now() }),
	view: (db: Db, id: number) =>
		viewQuery(db).where('r.id', id).first() as Promise<RequirementView | undefined>,
	views: (db: Db, ids: number[]) => viewQuery(db).whereIn('r.id', ids) as Promise<RequirementView[]>,
	list: (db: Db, projectId: number, f: ListFilters) => {
		const q = viewQuery(db).where('r.project_id', projectId);
		if (f.status) q.where('r.review_state', f.status);
		if (f.level) q.where('v.level', f.level);
		if (f.owner) q.where('v.owner_id', f.owner);
		if (f.q) {
			const like = `%${f.q.replace(/[\\%_]/g, (c) => '\\' + c)}%`;
			q.where((w) =>
				w.whereILike('r.identifier', like).orWhereILike('v.title', like).orWhereILike('v.statement', like)
			);
		}
		return q.orderBy('r.number') as Promise<RequirementView[]>;
	},
	count: async (db: Db, projectId: number) =>
		Number((await db('requirements').where({ project_id: projectId }).count<{ c: number }[]>('* as c'))[0].c),
	/** Requirements of a project for pickers (identifier and current title). */
	options: (db: Db, projectId: number) =>
		viewQuery(db)
			.where('r.project_id', projectId)
			.orderBy('r.number')
			.select('r.id', 'r.identifier', 'v.title') as Promise<
			{ id: number; identifier: string; title: string }[]
		>
};

export const revisions = {
	insert: async (db: Db, row: Omit<RevisionRow, 'id' | 'created_at'>) =>
		(await db('requirement_revisions').insert(row).returning('*'))[0] as RevisionRow,
	get: (db: Db, requirementId: number, revision: number) =>
		db<RevisionRow>('requirement_revisions').where({ requirement_id: requirementId, revision }).first(),
	all: (db: Db, requirementId: number) =>
		db('requirement_revisions as v')
			.leftJoin('users as a', 'a.id', 'v.author_id')
			.leftJoin('users as o', 'o.id', 'v.owner_id')
			.where('v.requirement_id', requirementId)
			.select('v.*', 'a.display_name as author_name', 'o.display_name as owner_name')
			.orderBy('v.revision', 'desc') as Promise<
			(RevisionRow & { author_name: string | null; owner_name: string | null })[]
		>
};

export const links = {
	insert: async (db: Db, row: Omit<LinkRow, 'id' | 'created_at' | 'removed_by' | 'removed_at'>) =>
		(await db('requirement_links').insert(row).returning('*'))[0] as LinkRow,
	active: (db: Db, childId: number, parentId: number) =>
		db<LinkRow>('requirement_links')
			.where({ child_id: childId, parent_id: parentId })
			.whereNull('removed_at')
			.first(),
	byId: (db: Db, id: number) => db<LinkRow>('requirement_links').where({ id }).first(),
	remove: (db: Db, id: number, userId: number | null) =>
		db('requirement_links')
			.where({ id })
			.whereNull('removed_at')
			.update({ removed_at: db.fn.now(), removed_by: userId }),
	/** Every active derived-from edge inside a project (child -> parent). */
	activeInProject: (db: Db, projectId: number) =>
		db('requirement_links as l')
			.join('requirements as c', 'c.id', 'l.child_id')
			.where('c.project_id', projectId)
			.whereNull('l.removed_at')
			.select('l.child_id', 'l.parent_id') as Promise<{ child_id: number; parent_id: number }[]>,
	/** Active links of one requirement, with the other end's identifier and title. */
	around: (db: Db, requirementId: number) =>
		db('requirement_links as l')
			.join('requirements as c', 'c.id', 'l.child_id')
			.join('requirements as p', 'p.id', 'l.parent_id')
			.join('requirement_revisions as cv', function () {
				this.on('cv.requirement_id', 'c.id').andOn('cv.revision', 'c.current_revision');
			})
			.join('requirement_revisions as pv', function () {
				this.on('pv.requirement_id', 'p.id').andOn('pv.revision', 'p.current_revision');
			})
			.whereNull('l.removed_at')
			.where((w) => w.where('l.child_id', requirementId).orWhere('l.parent_id', requirementId))
			.select(
				'l.id',
				'l.child_id',
				'l.parent_id',
				'l.child_revision',
				'l.parent_revision',
				'l.created_at',
				'c.identifier as child_identifier',
				'cv.title as child_title',
				'c.current_revision as child_current_revision',
				'p.identifier as parent_identifier',
				'pv.title as parent_title',
				'p.current_revision as parent_current_revision'
			)
			.orderBy('l.created_at') as Promise<
			(Pick<
				LinkRow,
				'id' | 'child_id' | 'parent_id' | 'child_revision' | 'parent_revision' | 'created_at'
			> & {
				child_identifier: string;
				child_title: string;
				child_current_revision: number;
				parent_identifier: string;
				parent_title: string;
				parent_current_revision: number;
			})[]
		>
};

export const specs = {
	insert: async (db: Db, row: Omit<SpecRow, 'id' | 'created_at'>) =>
		(
			await db('stability_specs')
				.insert({ ...row, check: JSON.stringify(row.check) })
				.returning('*')
		)[0] as SpecRow,
	byId: (db: Db, id: number) => db<SpecRow>('stability_specs').where({ id }).first(),
	latestVersion: async (db: Db, requirementId: number): Promise<number> =>
		Number(
			(
				await db('stability_specs')
					.where({ requirement_id: requirementId })
					.max<{ m: number | null }[]>('version as m')
			)[0].m ?? 0
		),
	all: (db: Db, requirementId: number) =>
		db('stability_specs as s')
			.leftJoin('users as a', 'a.id', 's.author_id')
			.leftJoin('models as m', 'm.id', 's.model_id')
			.leftJoin('model_versions as mv', 'mv.id', 's.model_version_id')
			.where('s.requirement_id', requirementId)
			.select('s.*', 'a.display_name as author_name', 'm.name as model_name', 'mv.version as model_version')
			.orderBy('s.version', 'desc') as Promise<
			(SpecRow & { author_name: string | null; model_name: string | null; model_version: number | null })[]
		>
};

export const models = {
	/** Taken by a specification edit, the same lock a publish takes: the two are serialised, so the
	 * edit sees the newest version or the publish sees the new specification, and no run is lost. */
	lock: (db: Db, id: number) =>
		db('models')
			.where({ id })
			.forNoKeyUpdate()
			.first('id', 'project_id', 'name', 'latest_version') as Promise<
			{ id: number; project_id: number; name: string; latest_version: number } | undefined
		>,
	inProject: (db: Db, projectId: number) =>
		db('models')
			.where({ project_id: projectId })
			.select('id', 'name', 'latest_version')
			.orderBy('name') as Promise<{ id: number; name: string; latest_version: number }[]>,
	byId: (db: Db, id: number) =>
		db('models').where({ id }).first('id', 'project_id', 'name', 'latest_version') as Promise<
			{ id: number; project_id: number; name: string; latest_version: number } | undefined
		>,
	version: (db: Db, id: number) =>
		db('model_versions').where({ id }).first('id', 'model_id', 'version', 'content') as Promise<
			| { id: number; model_id: number; version: number; content: { operatingPoints?: { label: string }[] } }
			| undefined
		>,
	versions: (db: Db, projectId: number) =>
		db('model_versions as mv')
			.join('models as m', 'm.id', 'mv.model_id')
			.where('m.project_id', projectId)
			.select(
				'mv.id',
				'mv.model_id',
				'mv.version',
				'mv.content_hash',
				db.raw(`mv.content->'operatingPoints' as points`)
			)
			.orderBy([{ column: 'mv.model_id' }, { column: 'mv.version', order: 'desc' }]) as Promise<
			{
				id: number;
				model_id: number;
				version: number;
				content_hash: string;
				points: { label: string }[] | null;
			}[]
		>
};
