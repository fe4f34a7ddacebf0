import { registerHealthCheck } from '../health';
import { getBoss } from '../jobs/boss';
import { workerStatus } from './workers';

// Health of the analysis queue and its workers, from analysis_runs (the one record of a run's status) and
// the workers' heartbeats. Runs waiting longer than a running worker would leave them
// (LW_QUEUE_STALE_SECONDS, 300 s) fail one check: "workers" when no worker is alive (nobody will take
// them: a worker died and was not restarted), "queue" when workers are alive (they are stuck or far
// behind). Both report the last heartbeat and the age of the oldest queued run.

const runsWaiting = (n: number) => `${n} analysis run${n === 1 ? '' : 's'} waiting`;

export async function checkQueue(): Promise<'ok' | string> {
	try {
		await getBoss();
		const s = await workerStatus();
		if (s.waiting > 0 && s.oldestQueuedSeconds > s.staleAfterSeconds && s.live > 0)
			return `stalled: ${runsWaiting(s.waiting)}, the oldest for ${s.oldestQueuedSeconds} s, although ${s.live} analysis worker${s.live === 1 ? ' is' : 's are'} alive`;
		return 'ok';
	} catch (e) {
		return `unreachable: ${(e as Error).message}`;
	}
}

export async function checkWorkers(): Promise<'ok' | string> {
	try {
		const s = await workerStatus();
		if (s.waiting > 0 && s.oldestQueuedSeconds > s.staleAfterSeconds && s.live === 0)
			return `no live analysis worker: ${runsWaiting(s.waiting)}, the oldest for ${s.oldestQueuedSeconds} s; last heartbeat ${s.lastHeartbeat ?? 'never'}`;
		return 'ok';
	} catch (e) {
		return `unreachable: ${(e as Error).message}`;
	}
}

registerHealthCheck('queue', checkQueue);
registerHealthCheck('workers', checkWorkers, async () => {
	const s = await workerStatus();
	return {
		live: s.live,
		lastHeartbeat: s.lastHeartbeat,
		liveWindowSeconds: s.liveWindowSeconds,
		waitingRuns: s.waiting,
		oldestQueuedSeconds: s.oldestQueuedSeconds,
		staleAfterSeconds: s.staleAfterSeconds,
		// Public (load balancers read it): times and ages only, no host names or process ids.
		workers: s.workers.map((w) => ({
			lastHeartbeat: w.lastHeartbeat,
			ageSeconds: w.ageSeconds,
			live: w.live,
			stopped: w.stopped
		}))
	};
});
