import type { Knex } from 'knex';

// Analysis workers report that they are alive: one row per worker process, its last heartbeat, and when it
// stopped (a graceful stop; a killed worker simply stops beating). The health check reads it to tell
// "runs wait because no worker is alive" from "runs wait behind a busy worker".
export async function up(knex: Knex): Promise<void> {
	await knex.raw(`
		create table worker_heartbeats (
			worker_id text primary key,
			host text not null,
			pid integer not null,
			started_at timestamptz not null default now(),
			beat_at timestamptz not null default now(),
			stopped_at timestamptz
		)`);
	await knex.raw(`create index worker_heartbeats_beat_at on worker_heartbeats (beat_at desc)`);
}

export async function down(knex: Knex): Promise<void> {
	await knex.raw(`drop table if exists worker_heartbeats`);
}
