import type { Knex } from 'knex';

// The model version in force for a requirement's current specification, defined once: the version the
// specification pins, else the model's latest version. Every bulk read (verification state, trace
// matrix, queueing of runs, evidence comparison) joins this view instead of repeating the rule.
// model_version_id is null when the model has no version yet.
export async function up(knex: Knex): Promise<void> {
	await knex.raw(`
		create view requirement_inputs as
		select r.id as requirement_id, r.project_id, r.current_revision as requirement_revision,
			s.id as spec_id, s.model_id, mv.id as model_version_id, mv.content_hash as model_hash
		from requirements r
		join stability_specs s on s.id = r.current_spec_id
		join models m on m.id = s.model_id
		left join model_versions mv on mv.model_id = m.id
			and (case when s.model_version_id is null then mv.version = m.latest_version
				else mv.id = s.model_version_id end)
	`);
}

export async function down(knex: Knex): Promise<void> {
	await knex.raw(`drop view if exists requirement_inputs`);
}
