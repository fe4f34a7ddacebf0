import type { Db } from '../db';
import type { Role } from './roles';

export interface UserRow {
	id: number;
	email: string;
	display_name: string;
	password_hash: string | null;
	disabled: boolean;
	site_admin: boolean;
	created_at: Date;
}

export interface ProjectRow {
	id: number;
	key: string;
	name: string;
	description: string;
	created_at: Date;
}

export interface MembershipView {
	user_id: number;
	email: string;
	display_name: string;
	disabled: boolean;
	role: Role;
	created_at: Date;
}

export const users = {
	byId: (db: Db, id: number) => db<UserRow>('users').where({ id }).first(),
	byEmail: (db: Db, email: string) => db<UserRow>('users').where('email', email).first(),
	list: (db: Db) =>
		db<UserRow>('users')
			.select('id', 'email', 'display_name', 'disabled', 'site_admin', 'created_at')
			.orderBy('email'),
	insert: async (
		db: Db,
		row: { email: string; display_name: string; password_hash: string | null; site_admin?: boolean }
	) => (await db('users').insert(row).returning('*'))[0] as UserRow,
	update: (db: Db, id: number, patch: Partial<Omit<UserRow, 'id'>>) =>
		db('users')
			.where({ id })
			.update({ ...patch, updated_at: db.fn.now() })
};

export const projects = {
	byKey: (db: Db, key: string) => db<ProjectRow>('projects').where({ key }).first(),
	list: (db: Db) => db<ProjectRow>('projects').orderBy('key'),
	forUser: (db: Db, userId: number) =>
		db('projects as p')
			.join('memberships as m', 'm.project_id', 'p.id')
			.where('m.user_id', userId)
			.select('p.id', 'p.key', 'p.name', 'p.description', 'm.role')
			.orderBy('p.key') as Promise<(ProjectRow & { role: Role })[]>,
	insert: async (db: Db, row: { key: string; name: string; description: string }) =>
		(await db('projects').insert(row).returning('*'))[0] as ProjectRow,
	/** The project a resource belongs to, for the access decision (every such table has project_id). */
	owning: (db: Db, kind: OwnedKind, id: number) =>
		db(`${OWNED_TABLES[kind]} as x`)
			.join('projects as p', 'p.id', 'x.project_id')
			.where('x.id', id)
			.first('p.id', 'p.key', 'p.name', 'p.description') as Promise<
			Omit<ProjectRow, 'created_at'> | undefined
		>
};

/** Resources that belong to one project and are addressed by their own id. */
export const OWNED_TABLES = {
	requirement: 'requirements',
	model: 'models',
	evidence: 'evidence',
	run: 'analysis_runs',
	baseline: 'baselines',
	finding: 'findings',
	import: 'imports'
} as const;
export type OwnedKind = keyof typeof OWNED_TABLES;

export const memberships = {
	role: async (db: Db, userId: number, projectId: number): Promise<Role | undefined> =>
		(await db('memberships').where({ user_id: userId, project_id: projectId }).first('role'))?.role,
	list: (db: Db, projectId: number) =>
		db('memberships as m')
			.join('users as u', 'u.id', 'm.user_id')
			.where('m.project_id', projectId)
			.select('u.id as user_id', 'u.email', 'u.display_name', 'u.disabled', 'm.role', 'm.created_at')
			.orderBy('u.email') as Promise<MembershipView[]>,
	upsert: (db: Db, userId: number, projectId: number, role: Role) =>
		db('memberships')
			.insert({ user_id: userId, project_id: projectId, role })
			.onConflict(['user_id', 'project_id'])
			.merge(['role']),
	remove: (db: Db, userId: number, projectId: number) =>
		db('memberships').where({ user_id: userId, project_id: projectId }).delete()
};

export const invitations = {
	insert: (
		db: Db,
		row: {
			email: string;
			project_id: number;
			role: Role;
			token_hash: string;
			invited_by: number | null;
			expires_at: Date;
		}
	) => db('invitations').insert(row),
	openByHash: (db: Db, tokenHash: string) =>
		db('invitations as i')
			.join('projects as p', 'p.id', 'i.project_id')
			.where('i.token_hash', tokenHash)
			.whereNull('i.accepted_at')
			.where('i.expires_at', '>', db.fn.now())
			.first('i.id', 'i.email', 'i.role', 'i.project_id', 'p.key as project_key', 'p.name as project_name'),
	markAccepted: (db: Db, id: number) =>
		db('invitations').where({ id }).whereNull('accepted_at').update({ accepted_at: db.fn.now() }),
	pending: (db: Db, projectId: number) =>
		db('invitations')
			.where({ project_id: projectId })
			.whereNull('accepted_at')
			.where('expires_at', '>', db.fn.now())
			.select('id', 'email', 'role', 'expires_at', 'created_at')
			.orderBy('created_at', 'desc')
};

export const passwordResets = {
	insert: (db: Db, row: { user_id: number; token_hash: string; expires_at: Date }) =>
		db('password_resets').insert(row),
	openByHash: (db: Db, tokenHash: string) =>
		db('password_resets')
			.where('token_hash', tokenHash)
			.whereNull('used_at')
			.where('expires_at', '>', db.fn.now())
			.first('id', 'user_id'),
	markUsed: (db: Db, id: number) =>
		db('password_resets').where({ id }).whereNull('used_at').update({ used_at: db.fn.now() })
};

export const signInAttempts = {
	record: (db: Db, email: string, succeeded: boolean, ip: string | null) =>
		db('sign_in_attempts').insert({ email, succeeded, ip }),
	recentFailures: async (db: Db, email: string, windowMinutes: number): Promise<number> => {
		// Failures since the last success, inside the window.
		const row = await db('sign_in_attempts')
			.where('email', email)
			.where('succeeded', false)
			.where('at', '>', db.raw(`now() - (? || ' minutes')::interval`, [String(windowMinutes)]))
			.where(
				'at',
				'>',
				db.raw(
					`coalesce((select max(at) from sign_in_attempts s where s.email = ? and s.succeeded), '-infinity')`,
					[email]
				)
			)
			.count<{ count: string }[]>('* as count');
		return Number(row[0]?.count ?? 0);
	}
};

/** The enabled user with every project they belong to (and their role there), in one round trip. */
export async function identityRow(db: Db, id: number) {
	const { rows } = await db.raw(
		`select u.*, coalesce((
		   select json_agg(json_build_object('id', p.id, 'key', p.key, 'name', p.name,
		            'description', p.description, 'role', m.role) order by p.key)
		     from memberships m join projects p on p.id = m.project_id
		    where m.user_id = u.id), '[]'::json) as memberships
		   from users u where u.id = ? and not u.disabled`,
		[id]
	);
	return rows[0] as
		| (UserRow & {
				memberships: { id: number; key: string; name: string; description: string; role: string }[];
		  })
		| undefined;
}

export interface ApiTokenRow {
	id: number;
	label: string;
	key: string;
	role: Role;
	created_at: Date;
	last_used_at: Date | null;
	revoked_at: Date | null;
}

/** Personal API tokens: stored hashed, scoped to one project and one role. */
export const apiTokens = {
	ofUser: (db: Db, userId: number) =>
		db('api_tokens as t')
			.join('projects as p', 'p.id', 't.project_id')
			.where('t.user_id', userId)
			.orderBy('t.created_at', 'desc')
			.select(
				't.id',
				't.label',
				'p.key',
				't.role',
				't.created_at',
				't.last_used_at',
				't.revoked_at'
			) as Promise<ApiTokenRow[]>,
	insert: async (
		db: Db,
		row: { user_id: number; project_id: number; role: Role; label: string; token_hash: string }
	) => Number((await db('api_tokens').insert(row).returning('id'))[0].id),
	/** Revoke one active token of the user; false when there is none. */
	revoke: async (db: Db, id: number, userId: number) =>
		(await db('api_tokens')
			.where({ id, user_id: userId })
			.whereNull('revoked_at')
			.update({ revoked_at: db.fn.now() })) > 0,
	/** The active token with this hash and its enabled owner. */
	byHash: (db: Db, tokenHash: string) =>
		db('api_tokens as t')
			.join('users as u', 'u.id', 't.user_id')
			.where('t.token_hash', tokenHash)
			.whereNull('t.revoked_at')
			.where('u.disabled', false)
			.first(
				'u.*',
				't.id as token_id',
				't.project_id as token_project_id',
				't.role as token_role'
			) as Promise<(UserRow & { token_id: number; token_project_id: number; token_role: Role }) | undefined>,
	touch: (db: Db, id: number) => db('api_tokens').where({ id }).update({ last_used_at: db.fn.now() }),
	/**
	 * Mark the token's use as audited unless that happened within the last `minutes`; true when this
	 * call marked it (the caller then writes the audit event).
	 */
	claimUseAudit: async (db: Db, id: number, minutes: number) =>
		(await db('api_tokens')
			.where({ id })
			.where((q) =>
				q
					.whereNull('use_audited_at')
					.orWhere('use_audited_at', '<', db.raw(`now() - (? || ' minutes')::interval`, [String(minutes)]))
			)
			.update({ use_audited_at: db.fn.now() })) > 0
};
