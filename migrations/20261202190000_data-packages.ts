import type { Knex } from 'knex';

// Data packages: the report (PDF) and archive (ZIP) generated for a frozen baseline, or as a draft of the
// project's present state (baseline_id null). A row is the package's one record: its status and
// progress are written only by the package builder (src/lib/server/packages), the files live in object
// storage under the keys given here with their SHA-256. Rows are kept (the audit trail refers to them);
// a package that failed stays as it failed and a new request makes a new row.
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('data_packages', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('project_id').notNullable().references('projects.id').onDelete('RESTRICT');
		t.bigInteger('baseline_id').references('baselines.id').onDelete('RESTRICT');
		t.text('status').notNullable().defaultTo('queued');
		t.integer('progress').notNullable().defaultTo(0);
		t.text('step').notNullable().defaultTo('queued');
		t.integer('attempts').notNullable().defaultTo(0);
		t.text('error');
		// The manifest the package was built from (a draft's is taken when its build starts).
		t.text('manifest_hash');
		t.integer('report_pages');
		t.text('report_key');
		t.text('report_sha256');
		t.bigInteger('report_bytes');
		t.text('archive_key');
		t.text('archive_sha256');
		t.bigInteger('archive_bytes');
		t.bigInteger('requested_by').references('users.id').onDelete('RESTRICT');
		t.text('requested_by_label').notNullable();
		t.timestamp('requested_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.timestamp('started_at', { useTz: true });
		t.timestamp('finished_at', { useTz: true });
		t.index(['project_id', 'baseline_id', 'id']);
	});
	await knex.raw(`alter table data_packages
		add constraint dp_status check (status in ('queued', 'running', 'done', 'error')),
		add constraint dp_progress check (progress between 0 and 100),
		add constraint dp_hashes check (
			(report_sha256 is null or report_sha256 ~ '^[0-9a-f]{64}$') and
			(archive_sha256 is null or archive_sha256 ~ '^[0-9a-f]{64}$') and
			(manifest_hash is null or manifest_hash ~ '^[0-9a-f]{64}$')),
		add constraint dp_done check (status <> 'done' or (report_key is not null and archive_key is not null
			and report_sha256 is not null and archive_sha256 is not null))`);
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTableIfExists('data_packages');
}
