import { db } from '../db';
import { registerHealthCheck } from '../health';
import { getBoss } from '../jobs/boss';
import { waitingRuns } from './repo';

// Health of the analysis queue: the queue is reachable, and no run has waited for a worker longer than a
// running worker would leave it. Read from analysis_runs, the one record of a run's status.
const STALE_SECONDS = 300;

export async function checkQueue(): Promise<'ok' | string> {
	try {
		await getBoss();
		const { waiting, oldest } = await waitingRuns(db());
		if (waiting > 0 && oldest > STALE_SECONDS)
			return `stalled: ${waiting} analysis runs waiting, the oldest for ${oldest} s (is a worker running?)`;
		return 'ok';
	} catch (e) {
		return `unreachable: ${(e as Error).message}`;
	}
}

registerHealthCheck('queue', checkQueue);
