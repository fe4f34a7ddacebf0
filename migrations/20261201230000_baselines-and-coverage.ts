import type { Knex } from 'knex';

// Baselines: a frozen, immutable manifest of a project's requirements, links, model versions, latest
// analyses and evidence, with the SHA-256 of its canonical JSON. The database refuses any update or
// delete (lw_refuse_change from the requirements migration). Coverage snapshots: one row per project
// and day with the count of requirements per combined state, so the dashboard can draw a trend.
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('baselines', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('project_id').notNullable().references('projects.id').onDelete('RESTRICT');
		t.integer('number').notNullable();
		t.text('label').notNullable();
		t.text('note').notNullable().defaultTo('');
		t.jsonb('manifest').notNullable();
		t.text('manifest_hash').notNullable();
		t.text('engine_version').notNullable();
		t.integer('requirement_count').notNullable();
		t.bigInteger('created_by').references('users.id').onDelete('RESTRICT');
		t.text('created_by_label').notNullable();
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.unique(['project_id', 'number']);
	});
	await knex.raw(`alter table baselines
		add constraint bl_hash check (manifest_hash ~ '^[0-9a-f]{64}$'),
		add constraint bl_label check (length(btrim(label)) > 0)`);
	await knex.raw(`create trigger baselines_immutable before update or delete on baselines
		for each row execute function lw_refuse_change()`);

	await knex.schema.createTable('coverage_snapshots', (t) => {
		t.bigInteger('project_id').notNullable().references('projects.id').onDelete('RESTRICT');
		t.date('day').notNullable();
		// { total, states: { <combined state>: n } }
		t.jsonb('counts').notNullable();
		t.timestamp('updated_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.primary(['project_id', 'day']);
	});
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTableIfExists('coverage_snapshots');
	await knex.schema.dropTableIfExists('baselines');
}
