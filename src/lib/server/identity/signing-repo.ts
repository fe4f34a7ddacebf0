import type { Db } from '../db';

// SQL of the pending signatures confirmed at the identity provider (signing_challenges).

export interface SigningChallengeRow {
	id: number;
	state_sha256: string;
	nonce: string;
	code_verifier: string;
	user_id: number;
	project_id: number;
	act: string;
	meaning: string;
	target_type: string;
	target_id: number;
	target_revision: number;
	fields: Record<string, unknown>;
	return_to: string;
	created_at: Date;
	expires_at: Date;
	used_at: Date | null;
	outcome: string | null;
}

export const signingChallenges = {
	insert: async (db: Db, row: Omit<SigningChallengeRow, 'id' | 'created_at' | 'used_at' | 'outcome'>) =>
		(
			await db('signing_challenges')
				.insert({ ...row, fields: JSON.stringify(row.fields) })
				.returning('*')
		)[0] as SigningChallengeRow,
	byState: (db: Db, stateSha256: string) =>
		db<SigningChallengeRow>('signing_challenges').where({ state_sha256: stateSha256 }).first() as Promise<
			SigningChallengeRow | undefined
		>,
	/** Take the challenge for this one answer: null when it was taken already (a replay). */
	claim: async (db: Db, id: number) =>
		((
			await db('signing_challenges')
				.where({ id })
				.whereNull('used_at')
				.update({ used_at: db.fn.now(), outcome: 'claimed' })
				.returning('*')
		)[0] as SigningChallengeRow | undefined) ?? null,
	settle: (db: Db, id: number, outcome: string) => db('signing_challenges').where({ id }).update({ outcome })
};
