import { recordEvent, type Actor } from '../audit';
import { randomUUID } from 'node:crypto';
import { config } from '../config';
import { db } from '../db';
import { ServiceError } from '../errors';
import { enqueueMail, kickMail } from '../mail';
import { dummyHash, hashPassword, verifyPassword } from '../passwords';
import { hashToken, newToken } from '../tokens';
import {
	identityRow,
	invitations,
	memberships,
	passwordResets,
	projects,
	signInAttempts,
	users,
	type OwnedKind,
	type UserRow
} from './repo';
import type { Role } from './roles';

export const SIGN_IN_REFUSED = 'That e-mail address and password do not match an active account.';

const INVITATION_DAYS = 7;
const RESET_MINUTES = 60;

/**
 * Check an address and password. Unknown address, wrong password and disabled account give the
 * same answer (and take about the same time). Repeated failures for one address give 429.
 */
export async function checkCredentials(email: string, password: string, ip: string | null): Promise<UserRow> {
	const failures = await signInAttempts.recentFailures(db(), email, config.signInWindowMinutes);
	if (failures >= config.signInMaxFailures) {
		throw new ServiceError(
			429,
			`Too many failed sign-ins for this address. Wait ${config.signInWindowMinutes} minutes, or reset the password.`
		);
	}
	const user = await users.byEmail(db(), email);
	const ok = await verifyPassword(user?.password_hash ?? (await dummyHash()), password);
	const good = !!user && ok && !user.disabled;
	await db().transaction(async (trx) => {
		await signInAttempts.record(trx, email, good, ip);
		await recordEvent(
			trx,
			{ userId: good ? user.id : null, label: good ? user.email : `unverified ${email}` },
			{
				action: good ? 'auth.sign-in' : 'auth.sign-in-failed',
				subjectType: 'user',
				subjectId: user?.id ?? null,
				after: { email, ip }
			}
		);
	});
	if (!good) throw new ServiceError(400, SIGN_IN_REFUSED);
	return user;
}

/** The user behind a session, or undefined when missing or disabled (takes effect at once). */
// Sign-ins checked by our own form action, handed to Auth.js's authorize() without a second check.
// Process-local and single-use; an outside caller of the Auth.js endpoint cannot know a nonce.
const prechecked = new Map<string, { userId: number; expires: number }>();

export function precheckNonce(userId: number): string {
	const nonce = randomUUID();
	const now = Date.now();
	for (const [k, v] of prechecked) if (v.expires < now) prechecked.delete(k);
	prechecked.set(nonce, { userId, expires: now + 30_000 });
	return nonce;
}

export function consumePrecheck(nonce: string | null): number | undefined {
	if (!nonce) return undefined;
	const hit = prechecked.get(nonce);
	prechecked.delete(nonce);
	return hit && hit.expires > Date.now() ? hit.userId : undefined;
}

/** A project the user belongs to, with the role, as read with the user at the start of a request. */
export interface MemberOf {
	id: number;
	key: string;
	name: string;
	description: string;
	role: Role;
}

/**
 * The active user and the projects they belong to, in one round trip (every request needs both:
 * the access check and the project switcher).
 */
export async function activeIdentity(
	id: number
): Promise<{ user: UserRow; memberships: MemberOf[] } | undefined> {
	const row = await identityRow(db(), id);
	if (!row) return undefined;
	const { memberships, ...user } = row;
	return { user: user as UserRow, memberships: memberships as MemberOf[] };
}

export async function activeUser(id: number): Promise<UserRow | undefined> {
	const u = await users.byId(db(), id);
	return u && !u.disabled ? u : undefined;
}

export async function createProject(actor: Actor, input: { key: string; name: string; description: string }) {
	const taken = () =>
		new ServiceError(409, `A project with the key ${input.key} exists already.`, {
			key: 'This key is taken.'
		});
	if (await projects.byKey(db(), input.key)) throw taken();
	return db().transaction(async (trx) => {
		// Two admins creating the same key at once: the second meets the unique index, told the same way.
		const p = await projects.insert(trx, input).catch((e: { code?: string }) => {
			throw e?.code === '23505' ? taken() : e;
		});
		await recordEvent(trx, actor, {
			projectId: p.id,
			action: 'project.create',
			subjectType: 'project',
			subjectId: p.id,
			after: input
		});
		return p;
	});
}

export async function invite(
	actor: Actor,
	input: {
		projectId: number;
		projectName: string;
		email: string;
		role: Role;
		invitedBy: UserRow;
	}
): Promise<{ link: string; existingUser: boolean }> {
	const { token, hash } = newToken();
	const link = `${config.publicOrigin}/invitation/${token}`;
	const existing = await users.byEmail(db(), input.email);
	await db().transaction(async (trx) => {
		await invitations.insert(trx, {
			email: input.email,
			project_id: input.projectId,
			role: input.role,
			token_hash: hash,
			invited_by: input.invitedBy.id,
			expires_at: new Date(Date.now() + INVITATION_DAYS * 86_400_000)
		});
		await enqueueMail(trx, {
			to: input.email,
			subject: `You are invited to ${input.projectName} on Loopwarden`,
			text:
				`${input.invitedBy.display_name} invited you to the project "${input.projectName}" as ${input.role}.\n\n` +
				(existing
					? `Open this link and sign in with your existing account to join:\n${link}\n`
					: `Open this link to choose your password:\n${link}\n`) +
				`\nThe link works once and expires in ${INVITATION_DAYS} days.\n`
		});
		await recordEvent(trx, actor, {
			projectId: input.projectId,
			action: 'membership.invite',
			subjectType: 'invitation',
			subjectId: input.email,
			after: { email: input.email, role: input.role }
		});
	});
	kickMail();
	return { link, existingUser: !!existing };
}

export async function openInvitation(token: string) {
	return invitations.openByHash(db(), hashToken(token));
}

/** Accept an invitation: creates the account (new address) and the membership, once. */
export async function acceptInvitation(
	token: string,
	input: { displayName?: string; password?: string }
): Promise<{ projectKey: string; email: string }> {
	return db().transaction(async (trx) => {
		const inv = await invitations.openByHash(trx, hashToken(token));
		if (!inv) throw new ServiceError(404, 'This invitation link is not valid any more (used or expired).');
		const claimed = await invitations.markAccepted(trx, inv.id);
		if (claimed === 0) throw new ServiceError(409, 'This invitation was accepted a moment ago.');
		let user = await users.byEmail(trx, inv.email);
		if (!user) {
			if (!input.password || !input.displayName) {
				throw new ServiceError(400, 'Choose a name and a password.', {
					...(input.displayName ? {} : { displayName: 'Enter a name.' }),
					...(input.password ? {} : { password: 'Enter a password.' })
				});
			}
			user = await users.insert(trx, {
				email: inv.email,
				display_name: input.displayName,
				password_hash: await hashPassword(input.password)
			});
		}
		await memberships.upsert(trx, user.id, inv.project_id, inv.role);
		await recordEvent(
			trx,
			{ userId: user.id, label: user.email },
			{
				projectId: inv.project_id,
				action: 'membership.accept-invitation',
				subjectType: 'membership',
				subjectId: `${inv.project_id}:${user.id}`,
				after: { role: inv.role }
			}
		);
		return { projectKey: inv.project_key, email: inv.email };
	});
}

/** Always succeeds from the outside, so the form does not reveal which addresses exist. */
export async function requestPasswordReset(email: string): Promise<void> {
	const user = await users.byEmail(db(), email);
	if (!user || user.disabled) return;
	const { token, hash } = newToken();
	const link = `${config.publicOrigin}/reset/${token}`;
	await db().transaction(async (trx) => {
		await passwordResets.insert(trx, {
			user_id: user.id,
			token_hash: hash,
			expires_at: new Date(Date.now() + RESET_MINUTES * 60_000)
		});
		await enqueueMail(trx, {
			to: user.email,
			subject: 'Reset your Loopwarden password',
			text: `Someone asked to reset the password of ${user.email}.\n\nTo choose a new password, open:\n${link}\n\nThe link works once and expires in ${RESET_MINUTES} minutes. If you did not ask, ignore this mail.\n`
		});
	});
	kickMail();
}

export async function openPasswordReset(token: string) {
	return passwordResets.openByHash(db(), hashToken(token));
}

export async function resetPassword(token: string, password: string): Promise<void> {
	await db().transaction(async (trx) => {
		const row = await passwordResets.openByHash(trx, hashToken(token));
		if (!row) throw new ServiceError(404, 'This reset link is not valid any more (used or expired).');
		if ((await passwordResets.markUsed(trx, row.id)) === 0)
			throw new ServiceError(409, 'This link was just used.');
		await users.update(trx, row.user_id, { password_hash: await hashPassword(password) });
		await recordEvent(
			trx,
			{ userId: row.user_id, label: `user ${row.user_id} (reset link)` },
			{
				action: 'user.password-reset',
				subjectType: 'user',
				subjectId: row.user_id
			}
		);
	});
}

export async function setMembership(actor: Actor, projectId: number, userId: number, role: Role) {
	await db().transaction(async (trx) => {
		const u = await users.byId(trx, userId);
		if (!u) throw new ServiceError(404, 'No such user.', { userId: 'No such user.' });
		const before = await memberships.role(trx, userId, projectId);
		await memberships.upsert(trx, userId, projectId, role);
		await recordEvent(trx, actor, {
			projectId,
			action: 'membership.set-role',
			subjectType: 'membership',
			subjectId: `${projectId}:${userId}`,
			before: before ? { role: before } : null,
			after: { role, email: u.email }
		});
	});
}

export async function removeMembership(actor: Actor, projectId: number, userId: number) {
	await db().transaction(async (trx) => {
		const before = await memberships.role(trx, userId, projectId);
		const n = await memberships.remove(trx, userId, projectId);
		if (n === 0)
			throw new ServiceError(404, 'That person is not a member of this project.', {
				userId: 'Not a member.'
			});
		await recordEvent(trx, actor, {
			projectId,
			action: 'membership.remove',
			subjectType: 'membership',
			subjectId: `${projectId}:${userId}`,
			before: { role: before }
		});
	});
}

export async function setUserDisabled(actor: Actor, userId: number, disabled: boolean) {
	if (actor.userId === userId && disabled) {
		throw new ServiceError(400, 'You cannot disable your own account.', { userId: 'That is you.' });
	}
	await db().transaction(async (trx) => {
		const n = await users.update(trx, userId, { disabled });
		if (n === 0) throw new ServiceError(404, 'No such user.', { userId: 'No such user.' });
		await recordEvent(trx, actor, {
			action: disabled ? 'user.disable' : 'user.enable',
			subjectType: 'user',
			subjectId: userId
		});
	});
}

export const listProjectsFor = (user: UserRow) =>
	user.site_admin
		? projects.list(db()).then((ps) => ps.map((p) => ({ ...p, role: 'admin' as const })))
		: projects.forUser(db(), user.id);
export const listAllProjects = () => projects.list(db());
export const listUsers = () => users.list(db());
export const listMembers = (projectId: number) => memberships.list(db(), projectId);
export const listPendingInvitations = (projectId: number) => invitations.pending(db(), projectId);
export const projectByKey = (key: string) => projects.byKey(db(), key);
export const roleIn = (userId: number, projectId: number) => memberships.role(db(), userId, projectId);
export const projectOwning = (kind: OwnedKind, id: number) => projects.owning(db(), kind, id);
export const accountExists = async (email: string) => !!(await users.byEmail(db(), email));

export async function changePassword(
	actor: Actor,
	user: UserRow,
	current: string,
	next: string
): Promise<void> {
	if (!(await verifyPassword(user.password_hash, current))) {
		throw new ServiceError(400, 'The current password is not right.', { current: 'Not right.' });
	}
	const hash = await hashPassword(next);
	await db().transaction(async (trx) => {
		await users.update(trx, user.id, { password_hash: hash });
		await recordEvent(trx, actor, {
			action: 'user.password-change',
			subjectType: 'user',
			subjectId: user.id
		});
	});
}

export async function renameUser(actor: Actor, user: UserRow, displayName: string): Promise<void> {
	await db().transaction(async (trx) => {
		await users.update(trx, user.id, { display_name: displayName });
		await recordEvent(trx, actor, {
			action: 'user.rename',
			subjectType: 'user',
			subjectId: user.id,
			before: { name: user.display_name },
			after: { name: displayName }
		});
	});
}
