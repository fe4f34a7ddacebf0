import { config } from '../config';
import { db } from '../db';
import { ServiceError } from '../errors';
import { enqueueMail, kickMail } from '../mail';
import { dummyHash, hashPassword, verifyPassword } from '../passwords';
import { hashToken, newToken } from '../tokens';
import { invitations, memberships, passwordResets, projects, signInAttempts, users, type UserRow } from './repo';
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
	await signInAttempts.record(db(), email, good, ip);
	if (!good) throw new ServiceError(400, SIGN_IN_REFUSED);
	return user;
}

/** The user behind a session, or undefined when missing or disabled (takes effect at once). */
export async function activeUser(id: number): Promise<UserRow | undefined> {
	const u = await users.byId(db(), id);
	return u && !u.disabled ? u : undefined;
}

export async function createProject(input: { key: string; name: string; description: string }) {
	if (await projects.byKey(db(), input.key)) {
		throw new ServiceError(409, `A project with the key ${input.key} exists already.`, {
			key: 'This key is taken.'
		});
	}
	return projects.insert(db(), input);
}

export async function invite(input: {
	projectId: number;
	projectName: string;
	email: string;
	role: Role;
	invitedBy: UserRow;
}): Promise<{ link: string; existingUser: boolean }> {
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
		if ((await passwordResets.markUsed(trx, row.id)) === 0) throw new ServiceError(409, 'This link was just used.');
		await users.update(trx, row.user_id, { password_hash: await hashPassword(password) });
	});
}

export async function setMembership(projectId: number, userId: number, role: Role) {
	const u = await users.byId(db(), userId);
	if (!u) throw new ServiceError(404, 'No such user.', { userId: 'No such user.' });
	await memberships.upsert(db(), userId, projectId, role);
}

export async function removeMembership(projectId: number, userId: number) {
	const n = await memberships.remove(db(), userId, projectId);
	if (n === 0) throw new ServiceError(404, 'That person is not a member of this project.', { userId: 'Not a member.' });
}

export async function setUserDisabled(actor: UserRow, userId: number, disabled: boolean) {
	if (actor.id === userId && disabled) {
		throw new ServiceError(400, 'You cannot disable your own account.', { userId: 'That is you.' });
	}
	const n = await users.update(db(), userId, { disabled });
	if (n === 0) throw new ServiceError(404, 'No such user.', { userId: 'No such user.' });
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
export const accountExists = async (email: string) => !!(await users.byEmail(db(), email));

export async function changePassword(user: UserRow, current: string, next: string): Promise<void> {
	if (!(await verifyPassword(user.password_hash, current))) {
		throw new ServiceError(400, 'The current password is not right.', { current: 'Not right.' });
	}
	await users.update(db(), user.id, { password_hash: await hashPassword(next) });
}

export async function renameUser(user: UserRow, displayName: string): Promise<void> {
	await users.update(db(), user.id, { display_name: displayName });
}
