import type { Knex } from 'knex';

// Sign-off: electronic signatures (one table for every signed act), the requirement review workflow
// (review state per requirement, named reviewers and threaded comments per revision, the revision in
// force), findings, and the project's independence setting. Signatures and comments are append-only.
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('signatures', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('project_id').notNullable().references('projects.id').onDelete('RESTRICT');
		// requirement.approve | requirement.return | evidence.accept | evidence.reject | finding.close |
		// finding.defer | finding.not-a-defect | baseline.release
		t.text('act').notNullable();
		t.text('target_type').notNullable();
		t.bigInteger('target_id').notNullable();
		// The revision (requirement, evidence), the version (finding) or the number (baseline) signed.
		t.integer('target_revision').notNullable();
		// Exactly what was signed (canonical JSON) and its SHA-256.
		t.jsonb('content').notNullable();
		t.text('content_sha256').notNullable();
		t.text('meaning').notNullable();
		t.text('comment').notNullable().defaultTo('');
		t.bigInteger('signer_id').notNullable().references('users.id').onDelete('RESTRICT');
		t.text('signer_name').notNullable();
		t.text('signer_email').notNullable();
		t.text('signer_role').notNullable();
		// How the signer was confirmed at the moment of signing ('password'; an identity provider later).
		t.text('confirmed_by').notNullable();
		t.timestamp('signed_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.index(['target_type', 'target_id']);
	});
	await knex.raw(`alter table signatures
		add constraint sig_hash check (content_sha256 ~ '^[0-9a-f]{64}$'),
		add constraint sig_meaning check (length(btrim(meaning)) > 0)`);
	await knex.raw(`create trigger signatures_immutable before update or delete on signatures
		for each row execute function lw_refuse_change()`);

	await knex.schema.alterTable('evidence_reviews', (t) => {
		t.bigInteger('signature_id').references('signatures.id').onDelete('RESTRICT');
	});

	// The review state of the current revision, and the revision in force (the latest approved one).
	await knex.schema.alterTable('requirements', (t) => {
		t.text('review_state').notNullable().defaultTo('draft');
		t.integer('approved_revision');
	});
	await knex.raw(`alter table requirements add constraint req_review_state
		check (review_state in ('draft','in-review','approved','returned','retired'))`);
	await knex.raw(`update requirements r set review_state = v.status,
		approved_revision = case when v.status = 'approved' then v.revision end
		from requirement_revisions v where v.requirement_id = r.id and v.revision = r.current_revision`);
	// A new revision starts in the state it was written with (draft, or retired; data loaded directly may
	// carry any state): the review state always belongs to the current revision.
	await knex.raw(`
		create or replace function lw_revision_review_state() returns trigger language plpgsql as $$
		begin
			update requirements set review_state = new.status,
				approved_revision = case when new.status = 'approved' then new.revision else approved_revision end
			where id = new.requirement_id and current_revision <= new.revision;
			return new;
		end $$;
	`);
	await knex.raw(`create trigger requirement_revisions_review_state after insert on requirement_revisions
		for each row execute function lw_revision_review_state()`);

	await knex.schema.createTable('requirement_reviewers', (t) => {
		t.bigInteger('requirement_id').notNullable().references('requirements.id').onDelete('RESTRICT');
		t.integer('revision').notNullable();
		t.bigInteger('user_id').notNullable().references('users.id').onDelete('RESTRICT');
		t.bigInteger('named_by').references('users.id').onDelete('RESTRICT');
		t.timestamp('named_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.primary(['requirement_id', 'revision', 'user_id']);
	});

	await knex.schema.createTable('review_comments', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('requirement_id').notNullable().references('requirements.id').onDelete('RESTRICT');
		t.integer('revision').notNullable();
		t.bigInteger('parent_id').references('review_comments.id').onDelete('RESTRICT');
		t.bigInteger('author_id').references('users.id').onDelete('RESTRICT');
		t.text('author_label').notNullable();
		t.text('body').notNullable();
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.index(['requirement_id', 'revision']);
	});
	await knex.raw(`alter table review_comments add constraint rc_body check (length(btrim(body)) > 0)`);
	await knex.raw(`create trigger review_comments_immutable before update or delete on review_comments
		for each row execute function lw_refuse_change()`);

	// How strict independence of review is: 'a-b' (levels A and B need an approver who is neither the
	// owner nor the model's analyst) or 'all' (every level); and how many such approvers.
	await knex.schema.alterTable('projects', (t) => {
		t.text('review_independence').notNullable().defaultTo('a-b');
		t.integer('independent_approvals').notNullable().defaultTo(1);
	});
	await knex.raw(`alter table projects
		add constraint proj_independence check (review_independence in ('a-b','all')),
		add constraint proj_independent_approvals check (independent_approvals between 1 and 3)`);

	await knex.schema.createTable('findings', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('project_id').notNullable().references('projects.id').onDelete('RESTRICT');
		t.integer('number').notNullable();
		t.bigInteger('requirement_id').notNullable().references('requirements.id').onDelete('RESTRICT');
		// analysis | evidence | model-mismatch | manual
		t.text('cause').notNullable();
		t.bigInteger('run_id').references('analysis_runs.id').onDelete('RESTRICT');
		t.bigInteger('evidence_id').references('evidence.id').onDelete('RESTRICT');
		t.integer('evidence_revision');
		t.bigInteger('model_version_id').references('model_versions.id').onDelete('RESTRICT');
		t.text('assurance_level').notNullable();
		t.text('title').notNullable();
		t.text('description').notNullable().defaultTo('');
		t.text('state').notNullable().defaultTo('open');
		t.bigInteger('assignee_id').references('users.id').onDelete('RESTRICT');
		t.bigInteger('opened_by').references('users.id').onDelete('RESTRICT');
		t.text('opened_by_label').notNullable();
		t.timestamp('opened_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.timestamp('updated_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		// Optimistic concurrency: every change raises it; a PATCH with an older one is a 409.
		t.integer('version').notNullable().defaultTo(1);
		// What cleared the cause, when it closed by itself.
		t.bigInteger('cleared_by_run_id').references('analysis_runs.id').onDelete('RESTRICT');
		t.integer('cleared_by_evidence_revision');
		t.text('justification');
		t.date('target_date');
		t.bigInteger('signature_id').references('signatures.id').onDelete('RESTRICT');
		t.unique(['project_id', 'number']);
		t.index(['project_id', 'state']);
		t.index(['requirement_id']);
	});
	await knex.raw(`alter table findings
		add constraint fi_cause check (cause in ('analysis','evidence','model-mismatch','manual')),
		add constraint fi_state check (state in ('open','in-work','resolved','closed','deferred','not-a-defect')),
		add constraint fi_dal check (assurance_level in ('A','B','C','D','E')),
		add constraint fi_deferred check (state <> 'deferred' or (target_date is not null and length(btrim(coalesce(justification, ''))) > 0))`);
	await knex.schema.alterTable('projects', (t) => {
		t.integer('next_finding_number').notNullable().defaultTo(1);
	});
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.alterTable('projects', (t) => {
		t.dropColumn('next_finding_number');
		t.dropColumn('independent_approvals');
		t.dropColumn('review_independence');
	});
	await knex.schema.dropTableIfExists('findings');
	await knex.schema.dropTableIfExists('review_comments');
	await knex.schema.dropTableIfExists('requirement_reviewers');
	await knex.raw('drop trigger if exists requirement_revisions_review_state on requirement_revisions');
	await knex.raw('drop function if exists lw_revision_review_state()');
	await knex.schema.alterTable('requirements', (t) => {
		t.dropColumn('approved_revision');
		t.dropColumn('review_state');
	});
	await knex.schema.alterTable('evidence_reviews', (t) => {
		t.dropColumn('signature_id');
	});
	await knex.schema.dropTableIfExists('signatures');
}
