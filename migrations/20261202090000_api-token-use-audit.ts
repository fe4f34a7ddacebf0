import type { Knex } from 'knex';

// Token use goes into the audit trail: the first request of a token in each window appends an
// "api-token.use" event. use_audited_at is when that last happened (the throttle's state).
export async function up(knex: Knex): Promise<void> {
	await knex.schema.alterTable('api_tokens', (t) => {
		t.timestamp('use_audited_at', { useTz: true });
	});
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.alterTable('api_tokens', (t) => {
		t.dropColumn('use_audited_at');
	});
}
