import type { Knex } from 'knex';

// Test evidence: an evidence item has one or more file revisions (immutable rows: a new file is a new
// revision that supersedes the previous one), each linked to the requirements it verifies, and reviewed
// by a certifier. Once a revision is accepted the item is frozen: the database refuses a further
// revision, any change of the item and any deletion. Per-requirement tolerances for model-versus-test
// agreement live in their own (mutable, audited) table.
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('evidence', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('project_id').notNullable().references('projects.id').onDelete('RESTRICT');
		t.integer('current_revision').notNullable().defaultTo(1);
		t.bigInteger('created_by').references('users.id').onDelete('RESTRICT');
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.timestamp('updated_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.index(['project_id']);
	});

	await knex.schema.createTable('evidence_files', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('evidence_id').notNullable().references('evidence.id').onDelete('RESTRICT');
		t.integer('revision').notNullable();
		t.text('title').notNullable();
		t.text('kind').notNullable();
		t.text('method').notNullable();
		t.text('test_article').notNullable().defaultTo('');
		t.date('test_date');
		t.text('note').notNullable().defaultTo('');
		// As the uploader's browser sent it (shown); the storage key carries a sanitised form.
		t.text('original_name').notNullable();
		t.text('storage_key').notNullable().unique();
		t.text('content_type').notNullable();
		t.bigInteger('size_bytes').notNullable();
		t.text('sha256').notNullable();
		// Parsed measured frequency response ({ layout, units, points: [{ w, re, im }] }, w in rad/s).
		t.jsonb('response');
		t.bigInteger('uploaded_by').references('users.id').onDelete('RESTRICT');
		t.text('uploaded_by_label').notNullable();
		t.timestamp('uploaded_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.unique(['evidence_id', 'revision']);
	});
	await knex.raw(`alter table evidence_files
		add constraint ef_kind check (kind in ('frequency-response','test-report','log','other')),
		add constraint ef_method check (method in ('test','inspection','demonstration')),
		add constraint ef_sha256 check (sha256 ~ '^[0-9a-f]{64}$'),
		add constraint ef_size check (size_bytes >= 0),
		add constraint ef_revision check (revision >= 1)`);
	await knex.raw(`create trigger evidence_files_immutable before update or delete on evidence_files
		for each row execute function lw_refuse_change()`);

	// "verifies": a revision and the requirements it verifies; immutable with the revision.
	await knex.schema.createTable('evidence_links', (t) => {
		t.bigInteger('evidence_file_id').notNullable().references('evidence_files.id').onDelete('RESTRICT');
		t.bigInteger('requirement_id').notNullable().references('requirements.id').onDelete('RESTRICT');
		t.primary(['evidence_file_id', 'requirement_id']);
		t.index(['requirement_id']);
	});
	await knex.raw(`create trigger evidence_links_immutable before update or delete on evidence_links
		for each row execute function lw_refuse_change()`);

	// One decision per revision; a sign-off records who, when and what the signature means.
	await knex.schema.createTable('evidence_reviews', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('evidence_file_id')
			.notNullable()
			.unique()
			.references('evidence_files.id')
			.onDelete('RESTRICT');
		t.text('decision').notNullable();
		t.text('comment').notNullable();
		t.text('meaning').notNullable();
		t.bigInteger('reviewer_id').references('users.id').onDelete('RESTRICT');
		t.text('reviewer_label').notNullable();
		t.text('reviewer_role').notNullable();
		// The file's SHA-256 as the reviewer saw it.
		t.text('sha256').notNullable();
		t.timestamp('reviewed_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
	});
	await knex.raw(`alter table evidence_reviews
		add constraint er_decision check (decision in ('accepted','rejected')),
		add constraint er_comment check (length(btrim(comment)) > 0)`);
	await knex.raw(`create trigger evidence_reviews_immutable before update or delete on evidence_reviews
		for each row execute function lw_refuse_change()`);

	// Frozen once accepted: no new revision, no change of the item, no deletion.
	await knex.raw(`
		create or replace function lw_evidence_frozen() returns trigger language plpgsql as $$
		declare
			item bigint;
		begin
			if tg_table_name = 'evidence_files' then item := new.evidence_id; else item := old.id; end if;
			if tg_table_name = 'evidence' and tg_op = 'DELETE' then
				raise exception 'evidence % cannot be deleted', old.id using errcode = 'restrict_violation';
			end if;
			if exists (select 1 from evidence_files f join evidence_reviews r on r.evidence_file_id = f.id
					where f.evidence_id = item and r.decision = 'accepted') then
				raise exception 'evidence % is accepted and frozen (% on % refused)', item, tg_op, tg_table_name
					using errcode = 'restrict_violation';
			end if;
			if tg_op = 'DELETE' then return old; end if;
			return new;
		end $$;
	`);
	await knex.raw(`create trigger evidence_frozen before update or delete on evidence
		for each row execute function lw_evidence_frozen()`);
	await knex.raw(`create trigger evidence_files_frozen before insert on evidence_files
		for each row execute function lw_evidence_frozen()`);

	// Model-versus-test agreement tolerance per requirement (default 10 % / 5 degrees when no row).
	await knex.schema.createTable('evidence_tolerances', (t) => {
		t.bigInteger('requirement_id').primary().references('requirements.id').onDelete('RESTRICT');
		t.double('relative_error').notNullable();
		t.double('phase_deg').notNullable();
		t.bigInteger('updated_by').references('users.id').onDelete('RESTRICT');
		t.timestamp('updated_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
	});
	await knex.raw(`alter table evidence_tolerances
		add constraint et_relative check (relative_error > 0 and relative_error <= 10),
		add constraint et_phase check (phase_deg > 0 and phase_deg <= 180)`);
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTableIfExists('evidence_tolerances');
	await knex.schema.dropTableIfExists('evidence_reviews');
	await knex.schema.dropTableIfExists('evidence_links');
	await knex.schema.dropTableIfExists('evidence_files');
	await knex.schema.dropTableIfExists('evidence');
	await knex.raw('drop function if exists lw_evidence_frozen()');
}
