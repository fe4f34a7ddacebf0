import { spawnSync } from 'node:child_process';
import knexFactory from 'knex';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { env } from '../../helpers/env';

// npm start's seed (scripts/seed.ts) in a scratch database of the test cluster, with the test run's
// object-storage stand-in: the demo gets its evidence, uploaded and reviewed through the services.
const scratch = 'loopwarden_demo_evidence_test';
const url = (db: string) => {
	const u = new URL(env.databaseUrl);
	u.pathname = '/' + db;
	return u.toString();
};
const admin = knexFactory({ client: 'pg', connection: url('postgres') });
beforeAll(async () => {
	await admin.raw(`drop database if exists ${scratch} with (force)`);
	await admin.raw(`create database ${scratch}`);
});
afterAll(async () => {
	await admin.raw(`drop database if exists ${scratch} with (force)`);
	await admin.destroy();
});

describe('demo evidence', () => {
	it('is seeded with the demo: a measured sweep on the wing-tilt loop and an accepted elevon report', async () => {
		const run = (args: string[]) =>
			spawnSync('node_modules/.bin/tsx', args, {
				env: { ...process.env, DATABASE_URL: url(scratch), SMTP_URL: '' },
				encoding: 'utf8',
				timeout: 120_000
			});
		const m = run(['node_modules/knex/bin/cli.js', '--knexfile', 'knexfile.ts', 'migrate:latest']);
		expect(m.status, m.stderr).toBe(0);
		const s = run(['scripts/seed.ts']);
		expect(s.status, s.stderr).toBe(0);
		expect(s.stdout).toContain('2 demo evidence items uploaded');
		const db = knexFactory({ client: 'pg', connection: url(scratch) });
		try {
			const files = await db('evidence_files').orderBy('id');
			expect(files.map((f) => f.kind)).toEqual(['frequency-response', 'test-report']);
			expect(files[0].response.points.length).toBe(90);
			expect(files[0].response.units).toEqual({ frequency: 'Hz', magnitude: 'dB', phase: 'deg' });
			expect(files[1].content_type).toBe('application/pdf');
			const review = await db('evidence_reviews').where({ evidence_file_id: files[1].id }).first();
			expect(review.decision).toBe('accepted');
			// Seeding again adds nothing.
			const again = run(['scripts/seed.ts']);
			expect(again.status).toBe(0);
			expect(again.stdout).not.toContain('demo evidence items uploaded');
			expect((await db('evidence_files')).length).toBe(2);
		} finally {
			await db.destroy();
		}
	}, 240_000);
});
