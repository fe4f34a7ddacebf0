import type { Db } from '../db';

// SQL only: the daily coverage points of a project.

export interface CoveragePoint {
	day: string;
	counts: { total: number; states: Record<string, number> };
}

/** Write today's point (UTC day); a later call on the same day replaces it. */
export async function upsertToday(db: Db, projectId: number, counts: CoveragePoint['counts']): Promise<void> {
	await db.raw(
		`insert into coverage_snapshots (project_id, day, counts, updated_at)
		values (?, (now() at time zone 'utc')::date, ?::jsonb, now())
		on conflict (project_id, day) do update set counts = excluded.counts, updated_at = excluded.updated_at`,
		[projectId, JSON.stringify(counts)]
	);
}

export async function points(db: Db, projectId: number, days: number): Promise<CoveragePoint[]> {
	const r = await db.raw(
		`select to_char(day, 'YYYY-MM-DD') as day, counts from coverage_snapshots
		where project_id = ? and day > (now() at time zone 'utc')::date - ?::int
		order by day`,
		[projectId, days]
	);
	return r.rows;
}
