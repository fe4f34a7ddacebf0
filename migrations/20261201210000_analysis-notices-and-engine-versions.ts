import type { Knex } from 'knex';

// Bookkeeping of re-verification: which change already had its verdict-change mails written (one
// mail per person per change, even when the last two runs of a change finish at the same moment or a
// run is retried), and which engine versions have been seen (a new one re-queues every requirement).
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('analysis_notices', (t) => {
		// analysis_runs.trigger_ref, or "run:<id>" for a run queued without one
		t.text('trigger_ref').primary();
		t.integer('changes').notNullable();
		t.integer('mails').notNullable();
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
	});
	await knex.schema.createTable('engine_versions_seen', (t) => {
		t.text('engine_version').primary();
		t.integer('runs_queued').notNullable().defaultTo(0);
		t.timestamp('first_seen_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
	});
	await knex.raw('create index analysis_runs_trigger_ref on analysis_runs (trigger_ref)');
}

export async function down(knex: Knex): Promise<void> {
	await knex.raw('drop index if exists analysis_runs_trigger_ref');
	await knex.schema.dropTableIfExists('engine_versions_seen');
	await knex.schema.dropTableIfExists('analysis_notices');
}
