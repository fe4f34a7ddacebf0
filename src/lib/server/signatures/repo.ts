import type { Db } from '../db';

// SQL of the signatures. Insert-only: the database refuses UPDATE and DELETE.

export interface SignatureRow {
	id: number;
	project_id: number;
	act: string;
	target_type: string;
	target_id: number;
	target_revision: number;
	content: unknown;
	content_sha256: string;
	meaning: string;
	comment: string;
	signer_id: number;
	signer_name: string;
	signer_email: string;
	signer_role: string;
	confirmed_by: string;
	signed_at: Date;
}

export const signatures = {
	insert: async (db: Db, row: Omit<SignatureRow, 'id' | 'signed_at'>) =>
		(
			await db('signatures')
				.insert({ ...row, content: JSON.stringify(row.content) })
				.returning('*')
		)[0] as SignatureRow,
	of: (db: Db, targetType: string, targetId: number) =>
		db<SignatureRow>('signatures')
			.where({ target_type: targetType, target_id: targetId })
			.orderBy('id') as Promise<SignatureRow[]>,
	/** Every signature of a project, oldest first (one read for a data package). */
	ofProject: (db: Db, projectId: number) =>
		db<SignatureRow>('signatures').where({ project_id: projectId }).orderBy('id') as Promise<SignatureRow[]>,
	byIds: (db: Db, ids: number[]) =>
		ids.length
			? (db<SignatureRow>('signatures').whereIn('id', ids) as Promise<SignatureRow[]>)
			: Promise.resolve([]),
	count: async (db: Db, projectId: number) =>
		Number((await db('signatures').where({ project_id: projectId }).count('* as n').first())?.n ?? 0)
};
