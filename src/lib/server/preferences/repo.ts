import type { Db } from '../db';

// SQL of a person's per-project preferences (table user_preferences).

export async function read(db: Db, userId: number, projectId: number, name: string): Promise<unknown> {
	const row = await db('user_preferences')
		.where({ user_id: userId, project_id: projectId, name })
		.first('value');
	return row?.value;
}

export async function write(db: Db, userId: number, projectId: number, name: string, value: unknown) {
	await db('user_preferences')
		.insert({
			user_id: userId,
			project_id: projectId,
			name,
			value: JSON.stringify(value),
			updated_at: db.fn.now()
		})
		.onConflict(['user_id', 'project_id', 'name'])
		.merge(['value', 'updated_at']);
}
