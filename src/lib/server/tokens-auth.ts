import { db } from './db';
import type { UserRow } from './identity/repo';
import type { Role } from './identity/roles';
import { hashToken } from './tokens';

/**
 * Personal API tokens (Authorization: Bearer ...): stored hashed, scoped to one project and one role.
 * Returns nothing for an unknown, revoked or expired token, or a disabled owner.
 */
export async function userFromApiToken(
	token: string
): Promise<{ user: UserRow; token: { id: number; projectId: number; role: Role } } | undefined> {
	if (!token || token.length > 200) return undefined;
	const row = await db()('api_tokens as t')
		.join('users as u', 'u.id', 't.user_id')
		.where('t.token_hash', hashToken(token))
		.whereNull('t.revoked_at')
		.where('u.disabled', false)
		.first('u.*', 't.id as token_id', 't.project_id as token_project_id', 't.role as token_role');
	if (!row) return undefined;
	const { token_id, token_project_id, token_role, ...user } = row;
	db()('api_tokens')
		.where({ id: token_id })
		.update({ last_used_at: db().fn.now() })
		.catch(() => undefined);
	return { user: user as UserRow, token: { id: token_id, projectId: token_project_id, role: token_role } };
}
