import { spawn, type ChildProcess } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { testDb } from '../../factories';
import { env } from '../../helpers/env';

// Shared by the re-verification tests.

/** G(s) = 1/(s+1): Re G(jw) = 1/(1+w^2) > 0, so the circle criterion proves every sector [0, k]. */
export const LAG = { kind: 'tf', num: [1], den: [1, 1] } as const;
/**
 * G(s) = 1/(s+1)^3. With c = cos(atan w): Re G(jw) = c^3 cos(3 atan w) = 4c^6 - 3c^4, smallest at c^2 = 1/2
 * (w = 1 rad/s) where it is -1/4. Circle criterion with k1 = 0 (Khalil, Nonlinear Systems, 3rd ed.,
 * Theorem 7.1): 1 + k2 Re G(jw) > 0 for all w, i.e. k2 < 4. So [0, 3] passes, [0, 5] fails, and the
 * largest proved upper bound is 4, at the critical frequency 1 rad/s.
 */
export const CUBE = { kind: 'tf', num: [1], den: [1, 3, 3, 1] } as const;

export const points = (model: unknown, label = 'nominal') => [{ label, model }];

export async function waitFor<T>(
	what: string,
	fn: () => Promise<T | null | undefined | false>,
	timeoutMs = 20_000
): Promise<T> {
	const deadline = Date.now() + timeoutMs;
	let last: unknown;
	while (Date.now() < deadline) {
		try {
			const v = await fn();
			if (v) return v;
		} catch (e) {
			last = e;
		}
		await new Promise((r) => setTimeout(r, 150));
	}
	throw new Error(`timed out waiting for ${what}${last ? `: ${(last as Error).message}` : ''}`);
}

/** Wait until no run of these requirements is queued or running; returns their newest runs. */
export async function settled(requirementIds: number[], timeoutMs = 20_000) {
	return waitFor(
		`runs of requirements ${requirementIds.join(', ')} to finish`,
		async () => {
			const open = await testDb()('analysis_runs')
				.whereIn('requirement_id', requirementIds)
				.whereIn('status', ['queued', 'running'])
				.count('* as n');
			if (Number(open[0].n) > 0) return null;
			return true;
		},
		timeoutMs
	);
}

/** The harness's worker (scripts/test.sh): paused so a test decides which worker takes a job. */
function harnessWorkerGroup(): number | null {
	try {
		const pid = Number(readFileSync(join(env.testData, 'worker.pid'), 'utf8').trim());
		return Number.isInteger(pid) && pid > 0 ? pid : null;
	} catch {
		return null;
	}
}
export function pauseHarnessWorker(): void {
	const pid = harnessWorkerGroup();
	if (pid) process.kill(-pid, 'SIGSTOP');
}
export function resumeHarnessWorker(): void {
	const pid = harnessWorkerGroup();
	if (pid) process.kill(-pid, 'SIGCONT');
}

/** A worker process of our own (its own process group, so kill -9 reaches tsx and node). */
export function spawnWorker(extraEnv: Record<string, string> = {}): ChildProcess & { log: () => string } {
	let out = '';
	const child = spawn('node_modules/.bin/tsx', ['scripts/worker.ts'], {
		cwd: process.cwd(),
		env: { ...process.env, ...extraEnv },
		detached: true,
		stdio: ['ignore', 'pipe', 'pipe']
	});
	child.stdout?.on('data', (d) => (out += d));
	child.stderr?.on('data', (d) => (out += d));
	return Object.assign(child, { log: () => out });
}

export function killGroup(child: ChildProcess, signal: NodeJS.Signals): void {
	if (child.pid && child.exitCode === null) {
		try {
			process.kill(-child.pid, signal);
		} catch {
			// already gone
		}
	}
}
