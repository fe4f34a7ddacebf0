import { ENGINE_VERSION } from '../../stability/index';
import { enqueueAll } from '../analyses/queue';
import { lockChain, recordEvent } from '../audit';
import { db } from '../db';

// A verdict is stale once the engine version changes (DOMAIN.md section 6). At start-up the worker
// records the engine version it runs; a version not seen before queues a run for every requirement.
const ENGINE_LOCK = 7_431_004;

export async function queueForEngineVersion(
	version = ENGINE_VERSION
): Promise<{ newVersion: boolean; queued: number }> {
	return db().transaction(async (trx) => {
		await trx.raw('select pg_advisory_xact_lock(?)', [ENGINE_LOCK]);
		const seen = await trx('engine_versions_seen').where({ engine_version: version }).first();
		if (seen) return { newVersion: false, queued: 0 };
		// Queuing inserts runs (and may wait for a finishing worker's row): the chain's lock first, as
		// the worker takes it.
		await lockChain(trx);
		const queued =
			version === ENGINE_VERSION
				? await enqueueAll(trx, { kind: 'engine-version', ref: `engine:${version}` })
				: 0;
		await trx('engine_versions_seen').insert({ engine_version: version, runs_queued: queued });
		await recordEvent(
			trx,
			{ label: 'worker' },
			{
				action: 'engine.new-version',
				subjectType: 'engine-version',
				subjectId: version,
				after: { engineVersion: version, runsQueued: queued }
			}
		);
		return { newVersion: true, queued };
	});
}
