import type { Knex } from 'knex';
import { hashPassword } from '../passwords';
import { DEMO_ACCOUNTS, DEMO_PASSWORD, DEMO_PROJECT } from './accounts';

/** Seed the demo scenario into an empty database. Returns false when there was data already. */
export async function seedDemo(knex: Knex): Promise<boolean> {
	const existing = await knex('users').count<{ count: number }[]>('* as count');
	if (Number(existing[0].count) > 0) return false;
	const hash = await hashPassword(DEMO_PASSWORD);
	await knex.transaction(async (trx) => {
		const [project] = await trx('projects').insert(DEMO_PROJECT).returning('*');
		for (const a of DEMO_ACCOUNTS) {
			const [u] = await trx('users')
				.insert({ email: a.email, display_name: a.name, password_hash: hash, site_admin: a.admin })
				.returning('*');
			if (a.role) await trx('memberships').insert({ user_id: u.id, project_id: project.id, role: a.role });
		}
	});
	return true;
}
