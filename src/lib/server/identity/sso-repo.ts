import type { Db } from '../db';
import type { Role } from './roles';

// All SQL of single sign-on: the link of a provider's person to an account, the administrator's
// group-to-role mapping per project, and the memberships that mapping grants (memberships.source).

export interface GroupRoleRow {
	id: number;
	project_id: number;
	group_name: string;
	role: Role;
	created_at: Date;
}

export const ssoIdentities = {
	userOf: async (db: Db, issuer: string, subject: string): Promise<number | undefined> => {
		const row = await db('sso_identities').where({ issuer, subject }).first('user_id');
		return row ? Number(row.user_id) : undefined;
	},
	link: (db: Db, issuer: string, subject: string, userId: number) =>
		db('sso_identities').insert({ issuer, subject, user_id: userId }),
	touch: (db: Db, issuer: string, subject: string) =>
		db('sso_identities').where({ issuer, subject }).update({ last_sign_in_at: db.fn.now() }),
	ofUser: (db: Db, userId: number) =>
		db('sso_identities').where({ user_id: userId }).select('issuer', 'subject', 'last_sign_in_at')
};

export const groupRoles = {
	ofProject: (db: Db, projectId: number) =>
		db<GroupRoleRow>('sso_group_roles')
			.where({ project_id: projectId })
			.orderBy('group_name')
			.select('id', 'project_id', 'group_name', 'role', 'created_at'),
	/** Every mapping that names one of these groups, with its project's key. */
	forGroups: (db: Db, groups: string[]) =>
		db('sso_group_roles as g')
			.join('projects as p', 'p.id', 'g.project_id')
			.whereIn('g.group_name', groups)
			.select('g.project_id', 'p.key as project_key', 'g.group_name', 'g.role') as Promise<
			{ project_id: number; project_key: string; group_name: string; role: Role }[]
		>,
	byGroup: (db: Db, projectId: number, groupName: string) =>
		db<GroupRoleRow>('sso_group_roles').where({ project_id: projectId, group_name: groupName }).first(),
	insert: async (
		db: Db,
		row: { project_id: number; group_name: string; role: Role; created_by: number | null }
	) => (await db('sso_group_roles').insert(row).returning('*'))[0] as GroupRoleRow,
	setRole: (db: Db, id: number, role: Role) => db('sso_group_roles').where({ id }).update({ role }),
	/** Remove one mapping of the project; the removed row, or undefined when there was none. */
	remove: async (db: Db, projectId: number, id: number) =>
		(await db('sso_group_roles').where({ id, project_id: projectId }).delete().returning('*'))[0] as
			GroupRoleRow | undefined
};

export const ssoMemberships = {
	/** The user's memberships with who granted them. */
	ofUser: (db: Db, userId: number) =>
		db('memberships').where({ user_id: userId }).select('project_id', 'role', 'source') as Promise<
			{ project_id: number; role: Role; source: 'manual' | 'sso' }[]
		>,
	/** Grant or change a membership by the group mapping (it then belongs to the mapping). */
	upsert: (db: Db, userId: number, projectId: number, role: Role) =>
		db('memberships')
			.insert({ user_id: userId, project_id: projectId, role, source: 'sso' })
			.onConflict(['user_id', 'project_id'])
			.merge({ role, source: 'sso' }),
	remove: (db: Db, userId: number, projectId: number) =>
		db('memberships').where({ user_id: userId, project_id: projectId, source: 'sso' }).delete()
};
