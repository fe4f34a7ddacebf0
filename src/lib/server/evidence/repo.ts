import type { Db } from '../db';
import type { Decision, EvidenceKind, VerificationMethod } from './schema';

// SQL for evidence. Rows of evidence_files, evidence_links and evidence_reviews are immutable (database
// triggers), and an accepted item refuses new revisions and changes.

export interface EvidenceRow {
	id: number;
	project_id: number;
	current_revision: number;
	created_by: number | null;
	created_at: Date;
	updated_at: Date;
}

export interface FileRow {
	id: number;
	evidence_id: number;
	revision: number;
	title: string;
	kind: EvidenceKind;
	method: VerificationMethod;
	test_article: string;
	test_date: string | null;
	note: string;
	original_name: string;
	storage_key: string;
	content_type: string;
	size_bytes: number;
	sha256: string;
	response: unknown;
	uploaded_by: number | null;
	uploaded_by_label: string;
	uploaded_at: Date;
}

export interface ReviewRow {
	id: number;
	evidence_file_id: number;
	decision: Decision;
	comment: string;
	meaning: string;
	reviewer_id: number | null;
	reviewer_label: string;
	reviewer_role: string;
	sha256: string;
	/** The signature of the decision (null only for rows older than signatures). */
	signature_id: number | null;
	reviewed_at: Date;
}

export interface RequirementRef {
	id: number;
	identifier: string;
	title: string | null;
	current_spec_id: number | null;
}

/** One row of the evidence list: the item with its current revision, review and linked requirements. */
export interface ListRow {
	id: number;
	revision: number;
	title: string;
	kind: EvidenceKind;
	method: VerificationMethod;
	test_article: string;
	test_date: string | null;
	original_name: string;
	size_bytes: number;
	sha256: string;
	uploaded_by_label: string;
	uploaded_at: Date;
	decision: Decision | null;
	reviewed_at: Date | null;
	reviewer_label: string | null;
	requirements: { id: number; identifier: string }[];
}

// test_date as text: a date column would otherwise come back as a local-midnight Date.
const fileColumns = [
	'f.id',
	'f.evidence_id',
	'f.revision',
	'f.title',
	'f.kind',
	'f.method',
	'f.test_article',
	'f.note',
	'f.original_name',
	'f.storage_key',
	'f.content_type',
	'f.size_bytes',
	'f.sha256',
	'f.response',
	'f.uploaded_by',
	'f.uploaded_by_label',
	'f.uploaded_at'
];

export const evidenceRepo = {
	insertItem: async (db: Db, row: { project_id: number; created_by: number | null }) =>
		(await db('evidence').insert(row).returning('*'))[0] as EvidenceRow,

	setCurrentRevision: (db: Db, id: number, revision: number) =>
		db('evidence').where({ id }).update({ current_revision: revision, updated_at: db.fn.now() }),

	insertFile: async (
		db: Db,
		row: Omit<FileRow, 'id' | 'uploaded_at' | 'response'> & { response: string | null }
	) => (await db('evidence_files').insert(row).returning('id'))[0].id as number,

	insertLinks: (db: Db, fileId: number, requirementIds: number[]) =>
		db('evidence_links').insert(requirementIds.map((r) => ({ evidence_file_id: fileId, requirement_id: r }))),

	insertReview: async (db: Db, row: Omit<ReviewRow, 'id' | 'reviewed_at'>) =>
		(await db('evidence_reviews').insert(row).returning('*'))[0] as ReviewRow,

	item: (db: Db, id: number) => db<EvidenceRow>('evidence').where({ id }).first(),

	/** Lock the item row so concurrent revisions and reviews of one item happen one after another. */
	lockItem: (db: Db, id: number) => db<EvidenceRow>('evidence').where({ id }).forUpdate().first(),

	files: (db: Db, evidenceId: number) =>
		db('evidence_files as f')
			.where('f.evidence_id', evidenceId)
			.orderBy('f.revision', 'desc')
			.select([...fileColumns, db.raw(`to_char(f.test_date, 'YYYY-MM-DD') as test_date`)]) as Promise<
			FileRow[]
		>,

	file: (db: Db, evidenceId: number, revision: number) =>
		db('evidence_files as f')
			.where({ 'f.evidence_id': evidenceId, 'f.revision': revision })
			.first([...fileColumns, db.raw(`to_char(f.test_date, 'YYYY-MM-DD') as test_date`)]) as Promise<
			FileRow | undefined
		>,

	reviews: (db: Db, evidenceId: number) =>
		db('evidence_reviews as r')
			.join('evidence_files as f', 'f.id', 'r.evidence_file_id')
			.where('f.evidence_id', evidenceId)
			.orderBy('r.reviewed_at', 'desc')
			.select('r.*', 'f.revision') as Promise<(ReviewRow & { revision: number })[]>,

	hasAccepted: async (db: Db, evidenceId: number) =>
		!!(await db('evidence_reviews as r')
			.join('evidence_files as f', 'f.id', 'r.evidence_file_id')
			.where({ 'f.evidence_id': evidenceId, 'r.decision': 'accepted' })
			.first('r.id')),

	linksOfFiles: (db: Db, fileIds: number[]) =>
		db('evidence_links as l')
			.join('requirements as r', 'r.id', 'l.requirement_id')
			.leftJoin('requirement_revisions as rr', function () {
				this.on('rr.requirement_id', 'r.id').andOn('rr.revision', 'r.current_revision');
			})
			.whereIn('l.evidence_file_id', fileIds)
			.orderBy('r.identifier')
			.select(
				'l.evidence_file_id',
				'r.id',
				'r.identifier',
				'rr.title',
				'r.current_spec_id',
				'rr.assurance_level'
			) as Promise<(RequirementRef & { evidence_file_id: number; assurance_level: string | null })[]>,

	/** Requirements of a project named by id or identifier (identifiers compared case-insensitively). */
	requirementsByRef: (db: Db, projectId: number, ids: number[], identifiers: string[]) =>
		db('requirements as r')
			.leftJoin('requirement_revisions as rr', function () {
				this.on('rr.requirement_id', 'r.id').andOn('rr.revision', 'r.current_revision');
			})
			.where('r.project_id', projectId)
			.andWhere((q) => {
				q.whereIn('r.id', ids.length ? ids : [0]);
				if (identifiers.length)
					q.orWhereRaw('upper(r.identifier) = any(?::text[])', [identifiers.map((s) => s.toUpperCase())]);
			})
			.select('r.id', 'r.identifier', 'rr.title', 'r.current_spec_id') as Promise<RequirementRef[]>,

	/** Every requirement of a project (for the link and filter choices). */
	projectRequirements: (db: Db, projectId: number) =>
		db('requirements as r')
			.leftJoin('requirement_revisions as rr', function () {
				this.on('rr.requirement_id', 'r.id').andOn('rr.revision', 'r.current_revision');
			})
			.where('r.project_id', projectId)
			.orderBy('r.identifier')
			.select('r.id', 'r.identifier', 'rr.title', 'r.current_spec_id') as Promise<RequirementRef[]>,

	list: async (
		db: Db,
		projectId: number,
		filters: { kind?: string; review?: string; requirementId?: number }
	) => {
		const q = db('evidence as e')
			.join('evidence_files as f', function () {
				this.on('f.evidence_id', 'e.id').andOn('f.revision', 'e.current_revision');
			})
			.leftJoin('evidence_reviews as rv', 'rv.evidence_file_id', 'f.id')
			.where('e.project_id', projectId)
			.orderBy('f.uploaded_at', 'desc')
			.select(
				'e.id',
				'f.revision',
				'f.title',
				'f.kind',
				'f.method',
				'f.test_article',
				db.raw(`to_char(f.test_date, 'YYYY-MM-DD') as test_date`),
				'f.original_name',
				'f.size_bytes',
				'f.sha256',
				'f.uploaded_by_label',
				'f.uploaded_at',
				'rv.decision',
				'rv.reviewed_at',
				'rv.reviewer_label',
				db.raw(`coalesce((select json_agg(json_build_object('id', r.id, 'identifier', r.identifier) order by r.identifier)
					from evidence_links l join requirements r on r.id = l.requirement_id where l.evidence_file_id = f.id), '[]') as requirements`)
			);
		if (filters.kind) q.where('f.kind', filters.kind);
		if (filters.review === 'pending') q.whereNull('rv.id');
		else if (filters.review) q.where('rv.decision', filters.review);
		if (filters.requirementId) {
			q.whereExists(function () {
				this.select(db.raw('1'))
					.from('evidence_links as l2')
					.whereRaw('l2.evidence_file_id = f.id')
					.andWhere('l2.requirement_id', filters.requirementId!);
			});
		}
		return (await q) as ListRow[];
	},

	tolerance: (db: Db, requirementId: number) =>
		db('evidence_tolerances').where({ requirement_id: requirementId }).first() as Promise<
			{ requirement_id: number; relative_error: number; phase_deg: number } | undefined
		>,

	upsertTolerance: (
		db: Db,
		row: { requirement_id: number; relative_error: number; phase_deg: number; updated_by: number | null }
	) =>
		db('evidence_tolerances')
			.insert({ ...row, updated_at: db.fn.now() })
			.onConflict('requirement_id')
			.merge(),

	/**
	 * A requirement's current specification and the model version in force for it (the view
	 * requirement_inputs, the one definition of that rule).
	 */
	specWithModel: (db: Db, specId: number) =>
		db('requirement_inputs as ri')
			.join('stability_specs as s', 's.id', 'ri.spec_id')
			.join('models as m', 'm.id', 'ri.model_id')
			.leftJoin('model_versions as mv', 'mv.id', 'ri.model_version_id')
			.where('ri.spec_id', specId)
			.first(
				's.id as spec_id',
				's.version as spec_version',
				's.check',
				's.operating_points',
				's.required_margin',
				'm.id as model_id',
				'm.name as model_name',
				'mv.id as model_version_id',
				'mv.version as model_version',
				'mv.content as model_content',
				'mv.content_hash as model_hash'
			) as Promise<
			| {
					spec_id: number;
					spec_version: number;
					check: unknown;
					operating_points: string[] | null;
					required_margin: number | null;
					model_id: number;
					model_name: string;
					model_version_id: number | null;
					model_version: number | null;
					model_content: unknown;
					model_hash: string | null;
			  }
			| undefined
		>
};
