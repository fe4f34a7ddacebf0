import type { Knex } from 'knex';

// Single sign-on through an OpenID Connect identity provider:
// - sso_identities links a provider's person (issuer + subject) to a Loopwarden account;
// - sso_group_roles is the administrator's mapping of a provider group to a role in one project;
// - memberships.source says who grants a membership: 'manual' (invitation, administrator) or 'sso'
//   (the group mapping, applied at each sign-in; removed when the person leaves the group).
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('sso_identities', (t) => {
		t.text('issuer').notNullable();
		t.text('subject').notNullable();
		t.bigInteger('user_id').notNullable().references('users.id').onDelete('CASCADE');
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.timestamp('last_sign_in_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.primary(['issuer', 'subject']);
		t.index(['user_id']);
	});

	await knex.schema.createTable('sso_group_roles', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('project_id').notNullable().references('projects.id').onDelete('CASCADE');
		t.text('group_name').notNullable();
		t.text('role').notNullable();
		t.bigInteger('created_by').references('users.id').onDelete('SET NULL');
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.unique(['project_id', 'group_name']);
	});
	await knex.raw(
		`alter table sso_group_roles add constraint sso_group_roles_role check (role in ('engineer','analyst','certifier','viewer')),
		   add constraint sso_group_roles_group check (length(group_name) between 1 and 200)`
	);
	await knex.raw(`create index sso_group_roles_group on sso_group_roles (group_name)`);

	await knex.raw(
		`alter table memberships add column source text not null default 'manual'
		   constraint memberships_source check (source in ('manual','sso'))`
	);
}

export async function down(knex: Knex): Promise<void> {
	await knex.raw('alter table memberships drop column source');
	await knex.schema.dropTable('sso_group_roles');
	await knex.schema.dropTable('sso_identities');
}
