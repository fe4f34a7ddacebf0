import { recordEvent, type Actor } from '../audit';
import { config } from '../config';
import { db } from '../db';
import { ServiceError } from '../errors';
import { users } from './repo';
import type { Role } from './roles';
import { groupRoles, ssoIdentities, ssoMemberships } from './sso-repo';
import { groupsOf, rolesFromGroups, type SsoRefusal } from './sso-rules';

// Single sign-on's acts: a sign-in through the identity provider (the account found, linked or
// created just in time, the project roles set from the group mapping, all audited) and the
// administrator's mapping of provider groups to project roles.

/** What the app takes from a validated ID token (or the userinfo answer). */
export interface ProviderProfile {
	issuer: string;
	subject: string;
	email: string | null;
	emailVerified: boolean | null;
	name: string | null;
	groups: string[];
	/** auth_time, seconds since 1970 (OpenID Connect Core 1.0 section 2). */
	authTime: number | null;
}

/** The profile from the provider's claims; `claimName` is the configured groups claim. */
export function profileFromClaims(
	issuer: string,
	claims: Record<string, unknown>,
	groupsClaim: string,
	authTime: number | null
): ProviderProfile {
	const str = (v: unknown) => (typeof v === 'string' && v.trim() ? v.trim() : null);
	return {
		issuer,
		subject: String(claims.sub ?? ''),
		email: str(claims.email)?.toLowerCase() ?? null,
		emailVerified: typeof claims.email_verified === 'boolean' ? claims.email_verified : null,
		name: str(claims.name),
		groups: groupsOf(claims, groupsClaim),
		authTime
	};
}

export type SsoOutcome = { userId: number; created: boolean } | { refused: SsoRefusal };

const refusedActor = (p: ProviderProfile): Actor => ({
	label: `unverified ${p.email ?? p.subject} (${p.issuer})`
});

/**
 * A sign-in through the identity provider. The person is the account linked to (issuer, subject);
 * the first time, the account with the same e-mail address when the provider says it verified the
 * address, else a new account without a password (just in time). Then the group mapping decides
 * the person's role in every project it names one of their groups for; a membership the mapping
 * granted earlier goes when none of their groups maps to that project any more. Memberships given
 * by invitation in other projects stay. Every step is in the audit trail, in one transaction.
 */
export async function ssoSignIn(p: ProviderProfile): Promise<SsoOutcome> {
	if (!p.subject) return { refused: 'no-subject' };
	return db().transaction(async (trx) => {
		// One sign-in at a time per person: two first sign-ins at once would both create the account.
		await trx.raw('select pg_advisory_xact_lock(hashtext(?))', [`${p.issuer} ${p.subject}`]);
		let userId = await ssoIdentities.userOf(trx, p.issuer, p.subject);
		let created = false;
		if (userId === undefined) {
			if (!p.email) {
				await recordEvent(trx, refusedActor(p), {
					action: 'auth.sign-in-failed',
					subjectType: 'user',
					after: { method: 'oidc', issuer: p.issuer, subject: p.subject, reason: 'no e-mail address' }
				});
				return { refused: 'no-email' };
			}
			const existing = await users.byEmail(trx, p.email);
			if (existing && p.emailVerified !== true) {
				await recordEvent(trx, refusedActor(p), {
					action: 'auth.sign-in-failed',
					subjectType: 'user',
					subjectId: existing.id,
					after: {
						method: 'oidc',
						issuer: p.issuer,
						subject: p.subject,
						reason: 'e-mail address not verified'
					}
				});
				return { refused: 'unverified-email' };
			}
			const user =
				existing ??
				(await users.insert(trx, { email: p.email, display_name: p.name ?? p.email, password_hash: null }));
			created = !existing;
			userId = Number(user.id);
			await ssoIdentities.link(trx, p.issuer, p.subject, userId);
			await recordEvent(
				trx,
				{ userId, label: p.email },
				{
					action: created ? 'user.sso-create' : 'user.sso-link',
					subjectType: 'user',
					subjectId: userId,
					after: { email: p.email, name: p.name, issuer: p.issuer, subject: p.subject }
				}
			);
		}
		const user = await users.byId(trx, userId);
		if (!user || user.disabled) {
			await recordEvent(trx, refusedActor(p), {
				action: 'auth.sign-in-failed',
				subjectType: 'user',
				subjectId: userId,
				after: { method: 'oidc', issuer: p.issuer, subject: p.subject, reason: 'account disabled' }
			});
			return { refused: 'disabled' };
		}
		const actor: Actor = { userId, label: user.email };
		await applyGroupMapping(trx, actor, userId, p.groups);
		await ssoIdentities.touch(trx, p.issuer, p.subject);
		await recordEvent(trx, actor, {
			action: 'auth.sign-in',
			subjectType: 'user',
			subjectId: userId,
			after: { method: 'oidc', issuer: p.issuer, subject: p.subject, groups: p.groups, authTime: p.authTime }
		});
		return { userId, created };
	});
}

async function applyGroupMapping(
	trx: Parameters<typeof recordEvent>[0],
	actor: Actor,
	userId: number,
	groups: string[]
) {
	const wanted = rolesFromGroups(groups.length ? await groupRoles.forGroups(trx, groups) : []);
	const current = new Map((await ssoMemberships.ofUser(trx, userId)).map((m) => [Number(m.project_id), m]));
	for (const [projectId, { role, groups: from }] of wanted) {
		const had = current.get(projectId);
		if (had && had.role === role && had.source === 'sso') continue;
		await ssoMemberships.upsert(trx, userId, projectId, role);
		await recordEvent(trx, actor, {
			projectId,
			action: 'membership.sso-set-role',
			subjectType: 'membership',
			subjectId: `${projectId}:${userId}`,
			before: had ? { role: had.role, source: had.source } : null,
			after: { role, groups: from }
		});
	}
	for (const [projectId, had] of current) {
		if (had.source !== 'sso' || wanted.has(projectId)) continue;
		await ssoMemberships.remove(trx, userId, projectId);
		await recordEvent(trx, actor, {
			projectId,
			action: 'membership.sso-remove',
			subjectType: 'membership',
			subjectId: `${projectId}:${userId}`,
			before: { role: had.role, source: 'sso' },
			after: { reason: 'no mapped group any more' }
		});
	}
}

/** Whether single sign-on is configured (the sign-in page offers it only then). */
export function ssoProvider(): { name: string; issuer: string } | null {
	const c = config.oidc;
	return c ? { name: c.name, issuer: c.issuer } : null;
}

export const listGroupRoles = (projectId: number) => groupRoles.ofProject(db(), projectId);

export async function addGroupRole(actor: Actor, projectId: number, input: { group: string; role: Role }) {
	return db().transaction(async (trx) => {
		if (await groupRoles.byGroup(trx, projectId, input.group))
			throw new ServiceError(
				409,
				`The group ${input.group} is mapped already; change its role in the list.`,
				{
					group: 'Mapped already.'
				}
			);
		const row = await groupRoles.insert(trx, {
			project_id: projectId,
			group_name: input.group,
			role: input.role,
			created_by: actor.userId ?? null
		});
		await recordEvent(trx, actor, {
			projectId,
			action: 'sso.group-role-add',
			subjectType: 'sso-group-role',
			subjectId: row.id,
			after: { group: input.group, role: input.role }
		});
		return row;
	});
}

export async function setGroupRole(actor: Actor, projectId: number, id: number, role: Role) {
	await db().transaction(async (trx) => {
		const rows = await groupRoles.ofProject(trx, projectId);
		const row = rows.find((r) => Number(r.id) === id);
		if (!row)
			throw new ServiceError(404, 'There is no such mapping in this project.', { id: 'No such mapping.' });
		if (row.role === role) return;
		await groupRoles.setRole(trx, id, role);
		await recordEvent(trx, actor, {
			projectId,
			action: 'sso.group-role-change',
			subjectType: 'sso-group-role',
			subjectId: id,
			before: { group: row.group_name, role: row.role },
			after: { group: row.group_name, role }
		});
	});
}

export async function removeGroupRole(actor: Actor, projectId: number, id: number) {
	await db().transaction(async (trx) => {
		const row = await groupRoles.remove(trx, projectId, id);
		if (!row)
			throw new ServiceError(404, 'There is no such mapping in this project.', { id: 'No such mapping.' });
		await recordEvent(trx, actor, {
			projectId,
			action: 'sso.group-role-remove',
			subjectType: 'sso-group-role',
			subjectId: id,
			before: { group: row.group_name, role: row.role }
		});
	});
}
