import type { Db } from '../db';

// SQL of the live change stamp (see service.ts).

/** Audit actions that change nothing a page shows (reads and exports): they do not move the stamp. */
const QUIET_ACTIONS = ['trace.export', 'baseline.export', 'api-token.use'];

export async function projectChange(db: Db, projectId: number): Promise<{ seq: number; pending: number }> {
	const r = await db.raw(
		`select
			(select coalesce(max(seq), 0) from audit_events
				where project_id = ? and action <> all(?::text[])) as seq,
			(select count(*)::int from analysis_runs
				where project_id = ? and status in ('queued', 'running')) as pending`,
		[projectId, QUIET_ACTIONS, projectId] as never[]
	);
	const row = r.rows[0] as { seq: string | number; pending: number };
	return { seq: Number(row.seq), pending: Number(row.pending) };
}
