import type { Knex } from 'knex';

// Requirements with immutable revisions, derived-from links, stability specifications, loop models
// with immutable versions, and the analysis runs that tie them together.
export async function up(knex: Knex): Promise<void> {
	// One function for every append-only table: UPDATE and DELETE are refused by the database itself.
	await knex.raw(`
		create or replace function lw_refuse_change() returns trigger language plpgsql as $$
		begin
			raise exception 'rows of % are immutable (% refused)', tg_table_name, tg_op
				using errcode = 'restrict_violation';
		end $$;
	`);

	await knex.schema.alterTable('projects', (t) => {
		t.integer('next_requirement_number').notNullable().defaultTo(1);
	});

	await knex.schema.createTable('requirements', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('project_id').notNullable().references('projects.id').onDelete('RESTRICT');
		t.integer('number').notNullable();
		t.text('identifier').notNullable();
		t.integer('current_revision').notNullable().defaultTo(1);
		t.bigInteger('current_spec_id');
		t.bigInteger('created_by').references('users.id');
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.timestamp('updated_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.unique(['project_id', 'number']);
		t.unique(['project_id', 'identifier']);
	});

	await knex.schema.createTable('requirement_revisions', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('requirement_id').notNullable().references('requirements.id').onDelete('RESTRICT');
		t.integer('revision').notNullable();
		t.text('title').notNullable();
		t.text('statement').notNullable();
		t.text('rationale').notNullable().defaultTo('');
		t.text('level').notNullable();
		t.text('assurance_level').notNullable();
		t.specificType('methods', 'text[]').notNullable();
		t.bigInteger('owner_id').references('users.id');
		t.text('status').notNullable();
		t.text('change_note').notNullable().defaultTo('');
		t.bigInteger('author_id').references('users.id');
		t.text('content_hash').notNullable();
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.unique(['requirement_id', 'revision']);
	});
	await knex.raw(`alter table requirement_revisions
		add constraint rr_level check (level in ('system','subsystem','loop')),
		add constraint rr_dal check (assurance_level in ('A','B','C','D','E')),
		add constraint rr_status check (status in ('draft','in-review','approved','retired')),
		add constraint rr_methods check (methods <@ array['analysis','test','inspection','demonstration']::text[] and cardinality(methods) > 0)`);
	await knex.raw(`create trigger requirement_revisions_immutable before update or delete on requirement_revisions
		for each row execute function lw_refuse_change()`);

	// child is derived from parent. Removing a link keeps the row (removed_at) for the history.
	await knex.schema.createTable('requirement_links', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('child_id').notNullable().references('requirements.id').onDelete('RESTRICT');
		t.bigInteger('parent_id').notNullable().references('requirements.id').onDelete('RESTRICT');
		t.integer('child_revision').notNullable();
		t.integer('parent_revision').notNullable();
		t.bigInteger('created_by').references('users.id');
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.bigInteger('removed_by').references('users.id');
		t.timestamp('removed_at', { useTz: true });
	});
	await knex.raw(`alter table requirement_links add constraint rl_not_self check (child_id <> parent_id)`);
	await knex.raw(
		`create unique index requirement_links_active on requirement_links (child_id, parent_id) where removed_at is null`
	);

	await knex.schema.createTable('models', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('project_id').notNullable().references('projects.id').onDelete('RESTRICT');
		t.text('name').notNullable();
		t.text('description').notNullable().defaultTo('');
		t.bigInteger('owner_id').references('users.id');
		t.integer('latest_version').notNullable().defaultTo(0);
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.unique(['project_id', 'name']);
	});

	// content = { operatingPoints: [{ label, model }] } in the engine's model forms; content_hash is the
	// SHA-256 of its canonical JSON (keys sorted, numbers as JavaScript prints them).
	await knex.schema.createTable('model_versions', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('model_id').notNullable().references('models.id').onDelete('RESTRICT');
		t.integer('version').notNullable();
		t.text('note').notNullable().defaultTo('');
		t.jsonb('content').notNullable();
		t.text('content_hash').notNullable();
		t.bigInteger('author_id').references('users.id');
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.unique(['model_id', 'version']);
	});
	await knex.raw(`create trigger model_versions_immutable before update or delete on model_versions
		for each row execute function lw_refuse_change()`);

	// Immutable too: an edit of a requirement's specification is a new row, and
	// requirements.current_spec_id points at the one in force.
	await knex.schema.createTable('stability_specs', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('requirement_id').notNullable().references('requirements.id').onDelete('RESTRICT');
		t.integer('version').notNullable();
		// { type: 'circle', sector: [k1, k2] } | { type: 'popov', sector: [0, k] } | { type: 'positive-real' }
		// | { type: 'margins', minGainMarginDb, minPhaseMarginDeg }; as the engine's check schema.
		t.jsonb('check').notNullable();
		// e.g. 0.2: the certified upper bound must exceed the required k2 by 20 %
		t.double('required_margin');
		// null: every operating point of the model version
		t.specificType('operating_points', 'text[]');
		t.bigInteger('model_id').notNullable().references('models.id').onDelete('RESTRICT');
		// null: track the model's latest version
		t.bigInteger('model_version_id').references('model_versions.id').onDelete('RESTRICT');
		t.text('template');
		t.text('content_hash').notNullable();
		t.bigInteger('author_id').references('users.id');
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.unique(['requirement_id', 'version']);
	});
	await knex.raw(`create trigger stability_specs_immutable before update or delete on stability_specs
		for each row execute function lw_refuse_change()`);
	await knex.raw(
		`alter table requirements add constraint requirements_current_spec foreign key (current_spec_id) references stability_specs(id)`
	);

	// One run per requirement revision x specification x model version x engine version.
	await knex.schema.createTable('analysis_runs', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('project_id').notNullable().references('projects.id').onDelete('RESTRICT');
		t.bigInteger('requirement_id').notNullable().references('requirements.id').onDelete('RESTRICT');
		t.integer('requirement_revision').notNullable();
		t.bigInteger('spec_id').notNullable().references('stability_specs.id').onDelete('RESTRICT');
		t.bigInteger('model_version_id').notNullable().references('model_versions.id').onDelete('RESTRICT');
		t.text('model_hash').notNullable();
		t.text('engine_version').notNullable();
		t.text('status').notNullable().defaultTo('queued');
		t.text('verdict');
		t.jsonb('result');
		t.text('worst_point');
		t.jsonb('curves');
		t.text('error');
		t.text('output_hash');
		t.text('trigger').notNullable();
		t.text('trigger_ref');
		t.bigInteger('triggered_by').references('users.id');
		t.integer('attempts').notNullable().defaultTo(0);
		t.timestamp('queued_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.timestamp('started_at', { useTz: true });
		t.timestamp('finished_at', { useTz: true });
		t.integer('duration_ms');
		t.unique(['requirement_id', 'requirement_revision', 'spec_id', 'model_version_id', 'engine_version']);
		t.index(['requirement_id', 'queued_at']);
		t.index(['status']);
	});
	await knex.raw(`alter table analysis_runs
		add constraint ar_status check (status in ('queued','running','done','error')),
		add constraint ar_verdict check (verdict is null or verdict in ('pass','fail','inconclusive'))`);
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTableIfExists('analysis_runs');
	await knex.raw('alter table requirements drop constraint if exists requirements_current_spec');
	await knex.schema.dropTableIfExists('stability_specs');
	await knex.schema.dropTableIfExists('model_versions');
	await knex.schema.dropTableIfExists('models');
	await knex.schema.dropTableIfExists('requirement_links');
	await knex.schema.dropTableIfExists('requirement_revisions');
	await knex.schema.dropTableIfExists('requirements');
	await knex.schema.alterTable('projects', (t) => t.dropColumn('next_requirement_number'));
	await knex.raw('drop function if exists lw_refuse_change()');
}
