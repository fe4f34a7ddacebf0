import { recordEvent, type Actor } from '../audit';
import { db } from '../db';
import { ServiceError } from '../errors';
import { hashToken, newToken } from '../tokens';
import { apiTokens, memberships, projects, type UserRow } from './repo';
import type { Role } from './roles';

// Personal API tokens for pipelines. The plain token is returned once and never stored; it is
// scoped to one project and one role, which may not exceed the owner's own role there.

export interface TokenView {
	id: number;
	label: string;
	projectKey: string;
	role: Role;
	createdAt: string;
	lastUsedAt: string | null;
	revokedAt: string | null;
}

export async function listTokens(user: UserRow): Promise<TokenView[]> {
	const rows = await apiTokens.ofUser(db(), user.id);
	return rows.map((r) => ({
		id: r.id,
		label: r.label,
		projectKey: r.key,
		role: r.role,
		createdAt: new Date(r.created_at).toISOString(),
		lastUsedAt: r.last_used_at ? new Date(r.last_used_at).toISOString() : null,
		revokedAt: r.revoked_at ? new Date(r.revoked_at).toISOString() : null
	}));
}

export async function createToken(
	actor: Actor,
	user: UserRow,
	input: { projectKey: string; role: Role; label: string }
): Promise<{ token: string; id: number }> {
	const project = await projects.byKey(db(), input.projectKey);
	if (!project)
		throw new ServiceError(404, `There is no project ${input.projectKey}.`, {
			projectKey: 'No such project.'
		});
	const own = await memberships.role(db(), user.id, project.id);
	if (!own && !user.site_admin) {
		throw new ServiceError(403, `You are not a member of ${project.key}.`, {
			projectKey: 'You are not a member.'
		});
	}
	if (!user.site_admin && own !== input.role && input.role !== 'viewer') {
		throw new ServiceError(
			403,
			`A token may have your own role in ${project.key} (${own}) or viewer, not ${input.role}.`,
			{
				role: `Choose ${own} or viewer.`
			}
		);
	}
	const plain = `lw_${newToken().token}`;
	const id = await db().transaction(async (trx) => {
		const tokenId = await apiTokens.insert(trx, {
			user_id: user.id,
			project_id: project.id,
			role: input.role,
			label: input.label,
			token_hash: hashToken(plain)
		});
		await recordEvent(trx, actor, {
			projectId: project.id,
			action: 'api-token.create',
			subjectType: 'api-token',
			subjectId: tokenId,
			after: { label: input.label, role: input.role }
		});
		return tokenId;
	});
	return { token: plain, id };
}

export async function revokeToken(actor: Actor, user: UserRow, id: number): Promise<void> {
	await db().transaction(async (trx) => {
		if (!(await apiTokens.revoke(trx, id, user.id)))
			throw new ServiceError(404, 'No such active token of yours.', { id: 'Not found.' });
		await recordEvent(trx, actor, { action: 'api-token.revoke', subjectType: 'api-token', subjectId: id });
	});
}
