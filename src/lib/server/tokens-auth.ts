import { recordEvent } from './audit';
import { db } from './db';
import { apiTokens, type UserRow } from './identity/repo';
import type { Role } from './identity/roles';
import { hashToken } from './tokens';

/**
 * Personal API tokens (Authorization: Bearer ...): stored hashed, scoped to one project and one role.
 * Returns nothing for an unknown, revoked or expired token, or a disabled owner.
 */
/** Token use is audited at most once per token in a window of this length (its first request). */
export const TOKEN_USE_AUDIT_WINDOW_MINUTES = 15;

export async function userFromApiToken(
	token: string,
	request?: { method: string; path: string; requestId: string }
): Promise<{ user: UserRow; token: { id: number; projectId: number; role: Role } } | undefined> {
	if (!token || token.length > 200) return undefined;
	const row = await apiTokens.byHash(db(), hashToken(token));
	if (!row) return undefined;
	const { token_id, token_project_id, token_role, ...user } = row;
	const owner = user as UserRow;
	if (request) await auditUse(token_id, token_project_id, owner, request);
	apiTokens.touch(db(), token_id).catch(() => undefined);
	return { user: owner, token: { id: token_id, projectId: token_project_id, role: token_role } };
}

/**
 * The first use of a token in each window appends an audit event (who, which token, what request);
 * the requests after it within the window are covered by it. Changes made with a token are audited
 * anyway, each with the token as the actor. Committed before the request goes on.
 */
async function auditUse(
	tokenId: number,
	projectId: number,
	owner: UserRow,
	request: { method: string; path: string; requestId: string }
): Promise<void> {
	await db().transaction(async (trx) => {
		if (!(await apiTokens.claimUseAudit(trx, tokenId, TOKEN_USE_AUDIT_WINDOW_MINUTES))) return;
		await recordEvent(
			trx,
			{
				userId: owner.id,
				tokenId,
				label: `token ${tokenId} of ${owner.email}`,
				requestId: request.requestId
			},
			{
				projectId,
				action: 'api-token.use',
				subjectType: 'api-token',
				subjectId: tokenId,
				after: { method: request.method, path: request.path.slice(0, 300) }
			}
		);
	});
}
