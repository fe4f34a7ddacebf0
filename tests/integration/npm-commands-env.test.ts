import { spawn, spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';

// Issue 13: `npm run audit:verify` beside a running `npm start` said "DATABASE_URL is not set". Every
// npm command meant for users finds the private cluster through scripts/lib/local-env.ts, the way npm
// start does. Here the commands run with no DATABASE_URL (nor mail/storage settings) against a cluster
// of their own (PG_NAME / PG_PORT choose it, as they choose npm start's), so the suite's is untouched.
const slot = Number(process.env.LW_TEST_SLOT ?? 0);
const env: NodeJS.ProcessEnv = {
	...process.env,
	PG_NAME: `pg-envhelper-${slot}`,
	PG_PORT: String(54337 + slot * 10),
	PG_DB: 'loopwarden'
};
for (const k of [
	'DATABASE_URL',
	'SMTP_URL',
	'MAIL_FAKE_DIR',
	'S3_ENDPOINT',
	'S3_ACCESS_KEY_ID',
	'S3_SECRET_ACCESS_KEY'
])
	delete env[k];
const npm = (...args: string[]) =>
	spawnSync('npm', ['run', '--silent', ...args], { env, encoding: 'utf8', timeout: 180_000 });
const db = (cmd: string) =>
	spawnSync('bash', ['scripts/db.sh', cmd], { env, encoding: 'utf8', timeout: 120_000 });

afterAll(() => {
	db('stop');
});

describe('npm commands beside npm start (no DATABASE_URL)', () => {
	it('with the cluster stopped, a database command says how to start it instead of "DATABASE_URL is not set"', () => {
		db('stop');
		const r = npm('audit:verify');
		expect(r.status).toBe(1);
		expect(r.stderr).toMatch(/private database .* is not running: start the app with `npm start`/);
		expect(r.stderr).toContain(`127.0.0.1:${env.PG_PORT}`);
	}, 120_000);

	it('migrate, audit:verify, seed and worker find the running cluster', async () => {
		expect(db('start').status).toBe(0);
		const migrate = npm('migrate');
		expect(migrate.status, migrate.stderr).toBe(0);
		const audit = npm('audit:verify');
		expect(audit.status, audit.stderr).toBe(0);
		expect(audit.stdout).toMatch(/^audit trail intact: \d+ events/);

		const seed = npm('seed');
		expect(seed.status, seed.stderr).toBe(0);
		expect(seed.stdout).toMatch(/\[seed\] (demo scenario VX7 seeded|database not empty)/);
		// The seed wrote audit events into this cluster: audit:verify reads the same database.
		const after = npm('audit:verify');
		expect(after.status, after.stderr).toBe(0);
		expect(Number(/intact: (\d+) events/.exec(after.stdout)?.[1])).toBeGreaterThan(0);

		const worker = spawn('npm', ['run', '--silent', 'worker'], { env, detached: true });
		let out = '';
		worker.stdout.on('data', (b) => (out += b));
		worker.stderr.on('data', (b) => (out += b));
		try {
			for (let i = 0; i < 300 && !/running analyses/.test(out) && worker.exitCode === null; i++)
				await new Promise((r) => setTimeout(r, 100));
			expect(out).toMatch(/\[worker pid \d+\] running analyses/);
		} finally {
			process.kill(-worker.pid!, 'SIGTERM');
			await new Promise((r) => worker.once('exit', r));
		}
	}, 240_000);

	it('analyze needs no database and runs with the cluster stopped', () => {
		db('stop');
		const dir = mkdtempSync(join(tmpdir(), 'lw-analyze-'));
		const file = join(dir, 'case.json');
		// G(s) = 1 / (s + 1): Re G > 0 for every frequency, so the circle criterion holds for [0, inf)
		// (Khalil, Nonlinear Systems, 3rd ed., Theorem 7.1 with k1 = 0: G strictly positive real).
		writeFileSync(
			file,
			JSON.stringify({
				model: { kind: 'tf', num: [1], den: [1, 1] },
				checks: [{ type: 'circle', sector: [0, null] }]
			})
		);
		const r = npm('analyze', '--', file);
		expect(r.status, r.stderr).toBe(0);
		expect(JSON.parse(r.stdout).results[0].verdict).toBe('pass');
	}, 120_000);
});
