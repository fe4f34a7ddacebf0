import { config } from '../config';
import { db } from '../db';
import { registerHealthCheck } from '../health';
import { getBoss } from '../jobs/boss';
import { waitingRuns } from './repo';

// Health of the analysis queue: the queue is reachable, and no run has waited for a worker longer than a
// running worker would leave it (LW_QUEUE_STALE_SECONDS, 300 s). Read from analysis_runs, the one record of a run's status.

export async function checkQueue(): Promise<'ok' | string> {
	try {
		await getBoss();
		const { waiting, oldest } = await waitingRuns(db());
		if (waiting > 0 && oldest > config.runs.queueStaleSeconds)
			return `stalled: ${waiting} analysis runs waiting, the oldest for ${oldest} s (is a worker running?)`;
		return 'ok';
	} catch (e) {
		return `unreachable: ${(e as Error).message}`;
	}
}

registerHealthCheck('queue', checkQueue);
