import type { Knex } from 'knex';

// Personal API tokens for pipelines: stored as SHA-256 hashes, shown once, scoped to one
// project and one role, revocable.
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('api_tokens', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('user_id').notNullable().references('users.id').onDelete('CASCADE');
		t.bigInteger('project_id').notNullable().references('projects.id').onDelete('CASCADE');
		t.text('role').notNullable();
		t.text('label').notNullable();
		t.text('token_hash').notNullable().unique();
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.timestamp('last_used_at', { useTz: true });
		t.timestamp('revoked_at', { useTz: true });
	});
	await knex.raw(
		`alter table api_tokens add constraint api_tokens_role check (role in ('engineer','analyst','certifier','viewer'))`
	);
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTableIfExists('api_tokens');
}
