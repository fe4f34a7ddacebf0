import type { Knex } from 'knex';

// Open pages ask every few seconds whether anything changed in their project (GET .../live): the newest
// audit event of the project and the number of its open analysis runs. Both are answered from an index.
export async function up(knex: Knex): Promise<void> {
	await knex.raw(`create index audit_events_project_seq on audit_events (project_id, seq)`);
	await knex.raw(
		`create index analysis_runs_open_by_project on analysis_runs (project_id) where status in ('queued', 'running')`
	);
}

export async function down(knex: Knex): Promise<void> {
	await knex.raw(`drop index if exists analysis_runs_open_by_project`);
	await knex.raw(`drop index if exists audit_events_project_seq`);
}
