import { db } from '../db';
import { registerHealthCheck } from '../health';
import { BOSS_SCHEMA, RUN_QUEUE, getBoss } from './boss';

// Health of the job queue: reachable, and no job waiting longer than a worker would leave it.
const STALE_SECONDS = 300;

export async function checkQueue(): Promise<'ok' | string> {
	try {
		await getBoss();
		const r = await db().raw(
			`select count(*)::int as waiting, coalesce(extract(epoch from now() - min(created_on)), 0)::int as oldest
			from ${BOSS_SCHEMA}.job where name = ? and state in ('created', 'retry') and start_after <= now()`,
			[RUN_QUEUE]
		);
		const { waiting, oldest } = r.rows[0] as { waiting: number; oldest: number };
		if (waiting > 0 && oldest > STALE_SECONDS)
			return `stalled: ${waiting} analysis jobs waiting, the oldest for ${oldest} s (is a worker running?)`;
		return 'ok';
	} catch (e) {
		return `unreachable: ${(e as Error).message}`;
	}
}

registerHealthCheck('queue', checkQueue);
