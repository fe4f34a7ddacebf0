import type { Knex } from 'knex';

// A signature confirmed by a fresh login at the identity provider (for accounts without a Loopwarden
// password): each attempt is one row, made when the signer is sent to the provider and used at most
// once when the provider sends them back. It binds the provider's answer (state, nonce) to exactly one
// pending signature: the act (its meaning), the subject (type, id) and the revision.
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('signing_challenges', (t) => {
		t.bigIncrements('id').primary();
		// SHA-256 of the state sent to the provider (the state itself is never stored).
		t.text('state_sha256').notNullable().unique();
		t.text('nonce').notNullable();
		t.text('code_verifier').notNullable();
		t.bigInteger('user_id').notNullable().references('users.id').onDelete('CASCADE');
		t.bigInteger('project_id').notNullable().references('projects.id').onDelete('CASCADE');
		t.text('act').notNullable();
		t.text('meaning').notNullable();
		t.text('target_type').notNullable();
		t.bigInteger('target_id').notNullable();
		t.integer('target_revision').notNullable();
		// The rest of the signing form (decision, comment ...), validated again when it is used.
		t.jsonb('fields').notNullable();
		t.text('return_to').notNullable();
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.timestamp('expires_at', { useTz: true }).notNullable();
		t.timestamp('used_at', { useTz: true });
		t.text('outcome');
		t.index(['user_id', 'created_at']);
	});
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTable('signing_challenges');
}
