import type { Db } from '../db';

// SQL of the review workflow: the review state, named reviewers and threaded comments per revision.

export interface CommentRow {
	id: number;
	requirement_id: number;
	revision: number;
	parent_id: number | null;
	author_id: number | null;
	author_label: string;
	body: string;
	created_at: Date;
}

export const review = {
	/** The requirement with its current revision's author, owner and level, locked for the act. */
	lock: (db: Db, id: number) =>
		db('requirements as r')
			.join('requirement_revisions as v', function () {
				this.on('v.requirement_id', 'r.id').andOn('v.revision', 'r.current_revision');
			})
			.join('projects as p', 'p.id', 'r.project_id')
			.where('r.id', id)
			.forNoKeyUpdate('r')
			.first(
				'r.id',
				'r.project_id',
				'r.identifier',
				'r.current_revision',
				'r.current_spec_id',
				'r.review_state',
				'r.approved_revision',
				'v.title',
				'v.statement',
				'v.rationale',
				'v.level',
				'v.assurance_level',
				'v.methods',
				'v.owner_id',
				'v.author_id',
				'v.content_hash',
				'p.key as project_key',
				'p.review_independence',
				'p.independent_approvals'
			) as Promise<
			| {
					id: number;
					project_id: number;
					identifier: string;
					current_revision: number;
					current_spec_id: number | null;
					review_state: string;
					approved_revision: number | null;
					title: string;
					statement: string;
					rationale: string;
					level: string;
					assurance_level: string;
					methods: string[];
					owner_id: number | null;
					author_id: number | null;
					content_hash: string;
					project_key: string;
					review_independence: 'a-b' | 'all';
					independent_approvals: number;
			  }
			| undefined
		>,
	setState: (db: Db, id: number, state: string, approvedRevision?: number) =>
		db('requirements')
			.where({ id })
			.update({
				review_state: state,
				...(approvedRevision !== undefined ? { approved_revision: approvedRevision } : {}),
				updated_at: db.fn.now()
			}),
	/** The analyst of the requirement's current specification: the owner of its model. */
	analystOf: async (db: Db, specId: number | null): Promise<number | null> => {
		if (!specId) return null;
		const row = await db('stability_specs as s')
			.join('models as m', 'm.id', 's.model_id')
			.where('s.id', specId)
			.first('m.owner_id', 'm.name', 's.version', 's.content_hash');
		return row?.owner_id == null ? null : Number(row.owner_id);
	},
	spec: (db: Db, specId: number) =>
		db('stability_specs').where({ id: specId }).first('id', 'version', 'content_hash') as Promise<
			{ id: number; version: number; content_hash: string } | undefined
		>,
	addReviewers: (
		db: Db,
		rows: { requirement_id: number; revision: number; user_id: number; named_by: number | null }[]
	) =>
		db('requirement_reviewers').insert(rows).onConflict(['requirement_id', 'revision', 'user_id']).ignore(),
	reviewers: (db: Db, requirementId: number) =>
		db('requirement_reviewers as x')
			.join('users as u', 'u.id', 'x.user_id')
			.where('x.requirement_id', requirementId)
			.orderBy(['x.revision', 'u.display_name'])
			.select('x.revision', 'u.id', 'u.display_name as name', 'u.email') as Promise<
			{ revision: number; id: number; name: string; email: string }[]
		>,
	addComment: async (db: Db, row: Omit<CommentRow, 'id' | 'created_at'>) =>
		(await db('review_comments').insert(row).returning('*'))[0] as CommentRow,
	comment: (db: Db, id: number) => db<CommentRow>('review_comments').where({ id }).first(),
	comments: (db: Db, requirementId: number) =>
		db<CommentRow>('review_comments').where({ requirement_id: requirementId }).orderBy('id') as Promise<
			CommentRow[]
		>,
	setIndependence: (db: Db, projectId: number, rule: 'a-b' | 'all', approvals: number) =>
		db('projects')
			.where({ id: projectId })
			.update({ review_independence: rule, independent_approvals: approvals }),
	independence: (db: Db, projectId: number) =>
		db('projects').where({ id: projectId }).first('review_independence', 'independent_approvals') as Promise<{
			review_independence: 'a-b' | 'all';
			independent_approvals: number;
		}>
};
