import { randomUUID } from 'node:crypto';
import { hostname } from 'node:os';
import { config } from '../config';
import { db } from '../db';
import { heartbeats, waitingRuns } from './repo';

// Analysis workers are watched: each worker writes a heartbeat every LW_WORKER_HEARTBEAT_SECONDS; one
// that has not beaten for three intervals (or that stopped) is not alive. Whatever runs the workers
// restarts one that exits (scripts/keep-running.sh under npm start, a process manager in a deployment);
// the health check tells the operator when runs wait and nobody is there to take them.

/** Start beating for this process; returns a function that stops the beat and records the stop. */
export async function startHeartbeat(label: string): Promise<() => Promise<void>> {
	const w = {
		workerId: `${hostname()}:${process.pid}:${randomUUID().slice(0, 8)}`,
		host: hostname(),
		pid: process.pid
	};
	await heartbeats.prune(db()).catch(() => {});
	await heartbeats.beat(db(), w);
	const timer = setInterval(() => {
		heartbeats
			.beat(db(), w)
			.catch((e) => console.error(`[worker ${label}] heartbeat failed: ${(e as Error).message}`));
	}, config.runs.workerHeartbeatSeconds * 1000);
	timer.unref?.();
	return async () => {
		clearInterval(timer);
		await heartbeats.stopped(db(), w.workerId).catch(() => {});
	};
}

export interface WorkerStatus {
	/** Workers whose heartbeat is younger than the live window and that have not stopped. */
	live: number;
	liveWindowSeconds: number;
	/** The newest heartbeat of any worker (ISO time), or null when no worker ever beat. */
	lastHeartbeat: string | null;
	workers: {
		host: string;
		pid: number;
		lastHeartbeat: string;
		ageSeconds: number;
		live: boolean;
		stopped: boolean;
	}[];
	waiting: number;
	/** Age of the oldest queued run in seconds (0 when none waits). */
	oldestQueuedSeconds: number;
	staleAfterSeconds: number;
}

export async function workerStatus(): Promise<WorkerStatus> {
	const window = 3 * config.runs.workerHeartbeatSeconds;
	const [rows, q] = await Promise.all([heartbeats.recent(db()), waitingRuns(db())]);
	const workers = rows.map((r) => {
		const ageSeconds = Math.max(0, Math.round(Number(r.age_seconds) * 10) / 10);
		return {
			host: r.host,
			pid: Number(r.pid),
			lastHeartbeat: new Date(r.beat_at).toISOString(),
			ageSeconds,
			stopped: r.stopped_at !== null,
			live: r.stopped_at === null && ageSeconds <= window
		};
	});
	return {
		live: workers.filter((w) => w.live).length,
		liveWindowSeconds: window,
		lastHeartbeat: workers[0]?.lastHeartbeat ?? null,
		workers,
		waiting: q.waiting,
		oldestQueuedSeconds: q.oldest,
		staleAfterSeconds: config.runs.queueStaleSeconds
	};
}
