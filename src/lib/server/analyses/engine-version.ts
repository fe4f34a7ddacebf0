import { ENGINE_VERSION } from '../../stability/index';
import { lockChain, recordEvent } from '../audit';
import { db } from '../db';
import { enqueueAll } from './queue';
import { engineVersionSeen, lockEngineVersions, recordEngineVersion } from './repo';

// A verdict is stale once the engine version changes: the tool version behind a verdict is one of its
// inputs (the tool environment a DO-178C configuration index records). At start-up the worker records
// the engine version it runs; a version not seen before queues a run for every requirement.

export async function queueForEngineVersion(
	version = ENGINE_VERSION
): Promise<{ newVersion: boolean; queued: number }> {
	return db().transaction(async (trx) => {
		await lockEngineVersions(trx);
		if (await engineVersionSeen(trx, version)) return { newVersion: false, queued: 0 };
		// Queuing inserts runs (and may wait for a finishing worker's row): the chain's lock first, as
		// the worker takes it.
		await lockChain(trx);
		const queued =
			version === ENGINE_VERSION
				? await enqueueAll(trx, { kind: 'engine-version', ref: `engine:${version}` })
				: 0;
		await recordEngineVersion(trx, version, queued);
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
