import knexFactory, { type Knex } from 'knex';
import { hashPassword } from '../../src/lib/server/passwords';
import type { Role } from '../../src/lib/server/identity/roles';
import { env } from '../helpers/env';

// Data factories for integration and browser tests: they write straight to the test database.
let instance: Knex | undefined;
export function testDb(): Knex {
	instance ??= knexFactory({ client: 'pg', connection: env.databaseUrl, pool: { min: 0, max: 4 } });
	return instance;
}
export async function closeTestDb() {
	await instance?.destroy();
	instance = undefined;
}

let seq = 0;
export function unique(prefix = 'x'): string {
	return `${prefix}${Date.now().toString(36)}${(++seq).toString(36)}${Math.floor(Math.random() * 1e4)}`;
}

export const PASSWORD = 'correct-horse-battery';
let cachedHash: Promise<string> | undefined;

export async function createUser(
	opts: { email?: string; name?: string; admin?: boolean; disabled?: boolean } = {}
) {
	cachedHash ??= hashPassword(PASSWORD);
	const email = opts.email ?? `${unique('u')}@example.test`;
	const [u] = await testDb()('users')
		.insert({
			email,
			display_name: opts.name ?? 'Test Person',
			password_hash: await cachedHash,
			site_admin: opts.admin ?? false,
			disabled: opts.disabled ?? false
		})
		.returning('*');
	return { ...u, password: PASSWORD } as {
		id: number;
		email: string;
		password: string;
		display_name: string;
	};
}

export async function createProject(opts: { key?: string; name?: string } = {}) {
	const key =
		opts.key ??
		'T' +
			Math.random()
				.toString(36)
				.slice(2, 8)
				.toUpperCase()
				.replace(/[^A-Z0-9]/g, 'Q');
	const [p] = await testDb()('projects')
		.insert({ key, name: opts.name ?? `Project ${key}`, description: 'test project' })
		.returning('*');
	return p as { id: number; key: string; name: string };
}

export async function addMember(userId: number, projectId: number, role: Role) {
	await testDb()('memberships').insert({ user_id: userId, project_id: projectId, role });
}

/** A project with one member per role, an admin and an outsider (member of another project). */
export async function createTeam() {
	const project = await createProject();
	const other = await createProject();
	const users = {
		engineer: await createUser({ name: 'Eng' }),
		analyst: await createUser({ name: 'Ana' }),
		certifier: await createUser({ name: 'Cert' }),
		viewer: await createUser({ name: 'View' }),
		admin: await createUser({ name: 'Admin', admin: true }),
		outsider: await createUser({ name: 'Out' })
	};
	await addMember(users.engineer.id, project.id, 'engineer');
	await addMember(users.analyst.id, project.id, 'analyst');
	await addMember(users.certifier.id, project.id, 'certifier');
	await addMember(users.viewer.id, project.id, 'viewer');
	await addMember(users.outsider.id, other.id, 'engineer');
	return { project, other, users };
}
