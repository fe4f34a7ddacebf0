import type { Knex } from 'knex';

// Users, projects, memberships, invitations and password-reset tokens.
// Tokens are stored as SHA-256 hashes; the plain token only ever exists in the mail that carries it.
export async function up(knex: Knex): Promise<void> {
	await knex.raw('create extension if not exists citext');

	await knex.schema.createTable('users', (t) => {
		t.bigIncrements('id').primary();
		t.specificType('email', 'citext').notNullable().unique();
		t.text('display_name').notNullable();
		t.text('password_hash');
		t.boolean('disabled').notNullable().defaultTo(false);
		t.boolean('site_admin').notNullable().defaultTo(false);
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.timestamp('updated_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
	});

	await knex.schema.createTable('projects', (t) => {
		t.bigIncrements('id').primary();
		t.text('key').notNullable().unique();
		t.text('name').notNullable();
		t.text('description').notNullable().defaultTo('');
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
	});
	await knex.raw(
		`alter table projects add constraint projects_key_format check (key ~ '^[A-Z][A-Z0-9]{1,9}$')`
	);

	await knex.schema.createTable('memberships', (t) => {
		t.bigInteger('user_id').notNullable().references('users.id').onDelete('CASCADE');
		t.bigInteger('project_id').notNullable().references('projects.id').onDelete('CASCADE');
		t.text('role').notNullable();
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.primary(['user_id', 'project_id']);
	});
	await knex.raw(
		`alter table memberships add constraint memberships_role check (role in ('engineer','analyst','certifier','viewer'))`
	);

	await knex.schema.createTable('invitations', (t) => {
		t.bigIncrements('id').primary();
		t.specificType('email', 'citext').notNullable();
		t.bigInteger('project_id').notNullable().references('projects.id').onDelete('CASCADE');
		t.text('role').notNullable();
		t.text('token_hash').notNullable().unique();
		t.bigInteger('invited_by').references('users.id').onDelete('SET NULL');
		t.timestamp('expires_at', { useTz: true }).notNullable();
		t.timestamp('accepted_at', { useTz: true });
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
	});

	await knex.schema.createTable('password_resets', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('user_id').notNullable().references('users.id').onDelete('CASCADE');
		t.text('token_hash').notNullable().unique();
		t.timestamp('expires_at', { useTz: true }).notNullable();
		t.timestamp('used_at', { useTz: true });
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
	});

	// Every sign-in attempt, for the per-address rate limit (kept in the database so that
	// several app processes share one count and a restart does not reset it).
	await knex.schema.createTable('sign_in_attempts', (t) => {
		t.bigIncrements('id').primary();
		t.specificType('email', 'citext').notNullable();
		t.boolean('succeeded').notNullable();
		t.text('ip');
		t.timestamp('at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.index(['email', 'at']);
	});

	// Outgoing mail: written in the same transaction as the change that causes it, sent by the
	// app and retried until the relay accepts it.
	await knex.schema.createTable('mail_outbox', (t) => {
		t.bigIncrements('id').primary();
		t.text('to_address').notNullable();
		t.text('subject').notNullable();
		t.text('body_text').notNullable();
		t.integer('attempts').notNullable().defaultTo(0);
		t.text('last_error');
		t.timestamp('next_attempt_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.timestamp('sent_at', { useTz: true });
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.index(['sent_at', 'next_attempt_at']);
	});
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTableIfExists('mail_outbox');
	await knex.schema.dropTableIfExists('sign_in_attempts');
	await knex.schema.dropTableIfExists('password_resets');
	await knex.schema.dropTableIfExists('invitations');
	await knex.schema.dropTableIfExists('memberships');
	await knex.schema.dropTableIfExists('projects');
	await knex.schema.dropTableIfExists('users');
}
