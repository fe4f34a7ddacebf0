import type { Knex } from 'knex';

// A person's choices about how a project's pages look to them (for now: which trace-matrix columns
// show). One row per user, project and preference name; the value is checked by the service's schema
// before it is stored. Removing the user or the project removes their preferences.
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('user_preferences', (t) => {
		t.bigInteger('user_id').notNullable().references('users.id').onDelete('CASCADE');
		t.bigInteger('project_id').notNullable().references('projects.id').onDelete('CASCADE');
		t.text('name').notNullable();
		t.jsonb('value').notNullable();
		t.timestamp('updated_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.primary(['user_id', 'project_id', 'name']);
	});
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTable('user_preferences');
}
