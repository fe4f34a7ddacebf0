import type { Knex } from 'knex';

// Imports of requirements (ReqIF, XLSX, CSV).
// - requirement_import_sources: where a requirement revision came from, one immutable row per revision an
//   import wrote. A ReqIF export writes the file's SPEC-OBJECT identifier, revision (counting on from
//   the file's) and LAST-CHANGE from it, so a file that went out and came back exports the same bytes.
// - imports: one row per upload: the preview (plan, counts, problems) and the state of the project it was
//   computed on; confirming applies the stored plan, refused when the project changed since.
// - import_mappings: the mapping last used per project and format (the preview starts from it).
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('requirement_import_sources', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('requirement_id').notNullable().references('requirements.id').onDelete('RESTRICT');
		t.integer('local_revision').notNullable();
		t.text('object_id').notNullable();
		t.integer('source_revision');
		t.timestamp('source_last_change', { useTz: true });
		t.bigInteger('import_id');
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.unique(['requirement_id', 'local_revision']);
	});
	await knex.raw(
		`create index requirement_import_sources_object on requirement_import_sources (object_id, requirement_id)`
	);
	await knex.raw(`create trigger requirement_import_sources_immutable before update or delete on requirement_import_sources
		for each row execute function lw_refuse_change()`);

	await knex.schema.createTable('imports', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('project_id').notNullable().references('projects.id').onDelete('RESTRICT');
		t.text('format').notNullable();
		t.text('file_name').notNullable().defaultTo('');
		t.text('file_sha256').notNullable();
		t.bigInteger('size_bytes').notNullable();
		// The file itself, so the preview can be computed again with another mapping before confirming.
		t.binary('content').notNullable();
		t.text('status').notNullable().defaultTo('preview');
		t.jsonb('mapping').notNullable();
		t.jsonb('preview').notNullable();
		t.text('project_state').notNullable();
		t.jsonb('result');
		t.jsonb('progress');
		t.bigInteger('created_by').references('users.id');
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.timestamp('confirmed_at', { useTz: true });
	});
	await knex.raw(
		`alter table imports add constraint imports_format check (format in ('reqif','xlsx','csv')),
		add constraint imports_status check (status in ('preview','running','confirmed','failed'))`
	);
	await knex.raw(`create index imports_project on imports (project_id, id)`);

	await knex.schema.createTable('import_mappings', (t) => {
		t.bigInteger('project_id').notNullable().references('projects.id').onDelete('RESTRICT');
		t.text('format').notNullable();
		t.jsonb('mapping').notNullable();
		t.timestamp('updated_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.primary(['project_id', 'format']);
	});
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTableIfExists('import_mappings');
	await knex.schema.dropTableIfExists('imports');
	await knex.schema.dropTableIfExists('requirement_import_sources');
}
