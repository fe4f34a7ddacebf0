import type { Db } from '../db';

// SQL of findings. The open states come from src/lib/verification/findings.ts as a parameter.

export interface FindingRow {
	id: number;
	project_id: number;
	number: number;
	requirement_id: number;
	cause: string;
	run_id: number | null;
	evidence_id: number | null;
	evidence_revision: number | null;
	model_version_id: number | null;
	assurance_level: string;
	title: string;
	description: string;
	state: string;
	assignee_id: number | null;
	opened_by: number | null;
	opened_by_label: string;
	opened_at: Date;
	updated_at: Date;
	version: number;
	cleared_by_run_id: number | null;
	cleared_by_evidence_revision: number | null;
	justification: string | null;
	target_date: string | null;
	signature_id: number | null;
}

export interface FindingListRow extends FindingRow {
	identifier: string;
	requirement_title: string;
	assignee_name: string | null;
	assignee_email: string | null;
	project_key: string;
	model_name: string | null;
	model_version: number | null;
	evidence_title: string | null;
}

export interface FindingFilters {
	state?: string[];
	cause?: string;
	assignee?: number;
	requirement?: number;
	assurance?: string;
}

function listQuery(db: Db) {
	return db('findings as f')
		.join('requirements as r', 'r.id', 'f.requirement_id')
		.join('requirement_revisions as v', function () {
			this.on('v.requirement_id', 'r.id').andOn('v.revision', 'r.current_revision');
		})
		.join('projects as p', 'p.id', 'f.project_id')
		.leftJoin('users as u', 'u.id', 'f.assignee_id')
		.leftJoin('model_versions as mv', 'mv.id', 'f.model_version_id')
		.leftJoin('models as m', 'm.id', 'mv.model_id')
		.leftJoin('evidence_files as ef', function () {
			this.on('ef.evidence_id', 'f.evidence_id').andOn('ef.revision', 'f.evidence_revision');
		})
		.select(
			'f.*',
			// A calendar date, not a timestamp in the server's zone.
			db.raw(`to_char(f.target_date, 'YYYY-MM-DD') as target_date`),
			'r.identifier',
			'v.title as requirement_title',
			'u.display_name as assignee_name',
			'u.email as assignee_email',
			'p.key as project_key',
			'm.name as model_name',
			'mv.version as model_version',
			'ef.title as evidence_title'
		);
}

export const findings = {
	nextNumber: async (db: Db, projectId: number): Promise<number> => {
		const row = await db('projects').where({ id: projectId }).forUpdate().first('next_finding_number');
		const n = Number(row.next_finding_number);
		await db('projects')
			.where({ id: projectId })
			.update({ next_finding_number: n + 1 });
		return n;
	},
	insert: async (db: Db, row: Partial<FindingRow>) =>
		(await db('findings').insert(row).returning('*'))[0] as FindingRow,
	lock: (db: Db, id: number) => db<FindingRow>('findings').where({ id }).forUpdate().first(),
	get: (db: Db, id: number) => listQuery(db).where('f.id', id).first() as Promise<FindingListRow | undefined>,
	/** Change a finding; the version goes up by one. */
	update: async (db: Db, id: number, patch: Partial<FindingRow>) =>
		(
			await db('findings')
				.where({ id })
				.update({ ...patch, version: db.raw('version + 1'), updated_at: db.fn.now() })
				.returning('*')
		)[0] as FindingRow,
	list: (db: Db, projectId: number, f: FindingFilters) => {
		const q = listQuery(db).where('f.project_id', projectId);
		if (f.state?.length) q.whereIn('f.state', f.state);
		if (f.cause) q.where('f.cause', f.cause);
		if (f.assignee) q.where('f.assignee_id', f.assignee);
		if (f.requirement) q.where('f.requirement_id', f.requirement);
		if (f.assurance) q.where('f.assurance_level', f.assurance);
		return q.orderBy('f.number', 'desc') as Promise<FindingListRow[]>;
	},
	/** Findings of a requirement and cause still in one of the given states (evidence: of that item). */
	ofCause: (
		db: Db,
		c: { requirementId: number; cause: string; evidenceId?: number | null },
		states: readonly string[]
	) => {
		const q = db<FindingRow>('findings')
			.where({ requirement_id: c.requirementId, cause: c.cause })
			.whereIn('state', [...states]);
		if (c.evidenceId != null) q.where('evidence_id', c.evidenceId);
		return q.forUpdate().orderBy('id') as Promise<FindingRow[]>;
	},
	countByState: async (db: Db, projectId: number) => {
		const rows = (await db('findings')
			.where({ project_id: projectId })
			.groupBy('state')
			.select('state')
			.count('* as n')) as { state: string; n: string | number }[];
		return Object.fromEntries(rows.map((r) => [r.state, Number(r.n)])) as Record<string, number>;
	},
	/** Who is concerned with a run: the owner of the model of its model version, and the requirement's level. */
	runContext: (db: Db, runId: number) =>
		db('analysis_runs as ar')
			.join('requirements as r', 'r.id', 'ar.requirement_id')
			.join('requirement_revisions as v', function () {
				this.on('v.requirement_id', 'r.id').andOn('v.revision', 'r.current_revision');
			})
			.join('model_versions as mv', 'mv.id', 'ar.model_version_id')
			.join('models as m', 'm.id', 'mv.model_id')
			.where('ar.id', runId)
			.first(
				'ar.id',
				'ar.project_id',
				'ar.requirement_id',
				'ar.requirement_revision',
				'ar.model_version_id',
				'ar.status',
				'ar.verdict',
				db.raw(`ar.result -> 'notApplicable' as not_applicable`),
				'r.current_revision',
				'r.identifier',
				'v.assurance_level',
				'm.owner_id as model_owner',
				'm.name as model_name',
				'mv.version as model_version'
			) as Promise<
			| {
					id: number;
					project_id: number;
					requirement_id: number;
					requirement_revision: number;
					model_version_id: number;
					status: string;
					verdict: string | null;
					not_applicable: unknown;
					current_revision: number;
					identifier: string;
					assurance_level: string;
					model_owner: number | null;
					model_name: string;
					model_version: number;
			  }
			| undefined
		>,
	requirementContext: (db: Db, requirementId: number) =>
		db('requirements as r')
			.join('requirement_revisions as v', function () {
				this.on('v.requirement_id', 'r.id').andOn('v.revision', 'r.current_revision');
			})
			.where('r.id', requirementId)
			.first('r.id', 'r.project_id', 'r.identifier', 'v.assurance_level', 'v.owner_id', 'v.title') as Promise<
			| {
					id: number;
					project_id: number;
					identifier: string;
					assurance_level: string;
					owner_id: number | null;
					title: string;
			  }
			| undefined
		>
};
