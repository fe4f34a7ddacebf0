import { execFileSync, spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';

// scripts/db.sh on a cluster of its own (its own name and port), so the suite's database is untouched.
const slot = Number(process.env.LW_TEST_SLOT ?? 0);
const env = {
	...process.env,
	PG_NAME: `pg-scripts-${slot}`,
	PG_PORT: String(54349 + slot * 10),
	PG_DB: 'scripts_test'
};
const run = (cmd: string) =>
	spawnSync('bash', ['scripts/db.sh', cmd], { env, encoding: 'utf8', timeout: 120_000 });

afterAll(() => {
	run('stop');
});

describe('scripts/db.sh', () => {
	it('starts, is idempotent when already running, and stops cleanly', () => {
		const first = run('start');
		expect(first.status, first.stderr).toBe(0);
		const second = run('start');
		expect(second.status, second.stderr).toBe(0);
		expect(second.stderr).toMatch(/already running/);
		expect(run('status').status).toBe(0);
		const url = run('url').stdout.trim();
		expect(url).toMatch(/^postgres:\/\/app:[A-Za-z0-9]+@127\.0\.0\.1:\d+\/scripts_test$/);
		const stop = run('stop');
		expect(stop.status).toBe(0);
		expect(run('status').status).toBe(3);
	}, 120_000);

	it('starts again after an unclean stop (the server killed, its pid file left behind)', () => {
		expect(run('start').status).toBe(0);
		const dir = run('dir').stdout.trim();
		const pid = Number(readFileSync(join(dir, 'data', 'postmaster.pid'), 'utf8').split('\n')[0]);
		expect(pid).toBeGreaterThan(0);
		execFileSync('kill', ['-9', String(pid)]);
		// wait for the postmaster to be gone (its children exit when it dies)
		for (let i = 0; i < 50; i++) {
			if (spawnSync('kill', ['-0', String(pid)]).status !== 0) break;
			execFileSync('sleep', ['0.1']);
		}
		const again = run('start');
		expect(again.status, again.stderr).toBe(0);
		expect(run('status').status).toBe(0);
	}, 120_000);
});
