import type { Knex } from 'knex';

// The trace matrix reads each row's children through the active links of a parent; the existing
// partial index leads with the child.
export async function up(knex: Knex): Promise<void> {
	await knex.raw(
		`create index requirement_links_active_parent on requirement_links (parent_id, child_id) where removed_at is null`
	);
}

export async function down(knex: Knex): Promise<void> {
	await knex.raw(`drop index if exists requirement_links_active_parent`);
}
