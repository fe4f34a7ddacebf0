import type { Knex } from 'knex';

// The append-only audit trail. Each event carries the SHA-256 of the previous event's hash and
// its own canonical content, so a changed or removed entry breaks the chain at that point
// (NIST SP 800-53 AU-9(3) asks for cryptographic protection of audit information).
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('audit_events', (t) => {
		t.bigIncrements('seq').primary();
		t.timestamp('at', { useTz: true }).notNullable();
		t.bigInteger('project_id').references('projects.id').onDelete('RESTRICT');
		t.bigInteger('actor_user_id').references('users.id').onDelete('RESTRICT');
		t.bigInteger('actor_token_id');
		t.text('actor_label').notNullable();
		t.text('action').notNullable();
		t.text('subject_type').notNullable();
		t.text('subject_id');
		t.jsonb('before');
		t.jsonb('after');
		t.text('request_id');
		t.text('prev_hash').notNullable();
		t.text('hash').notNullable().unique();
		t.index(['subject_type', 'subject_id']);
		t.index(['project_id', 'at']);
	});
	await knex.raw(`create trigger audit_events_append_only before update or delete on audit_events
		for each row execute function lw_refuse_change()`);
	await knex.raw(`create trigger audit_events_no_truncate before truncate on audit_events
		for each statement execute function lw_refuse_change()`);
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTableIfExists('audit_events');
}
