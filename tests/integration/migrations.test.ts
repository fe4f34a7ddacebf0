import { spawnSync } from 'node:child_process';
import { readdirSync } from 'node:fs';
import knexFactory from 'knex';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { env } from '../helpers/env';

// migrate -> rollback everything -> migrate again, in a scratch database of the test cluster.
const scratch = 'loopwarden_migrations_test';
const adminUrl = (() => {
	const u = new URL(env.databaseUrl);
	u.pathname = '/postgres';
	return u.toString();
})();
const scratchUrl = (() => {
	const u = new URL(env.databaseUrl);
	u.pathname = '/' + scratch;
	return u.toString();
})();

const admin = knexFactory({ client: 'pg', connection: adminUrl });
beforeAll(async () => {
	await admin.raw(`drop database if exists ${scratch}`);
	await admin.raw(`create database ${scratch}`);
});
afterAll(async () => {
	await admin.raw(`drop database if exists ${scratch} with (force)`);
	await admin.destroy();
});

describe('migrations', () => {
	it('apply, roll back completely and apply again', async () => {
		// Through the same CLI that npm run migrate uses (tsx loads the TypeScript migrations).
		const cli = (...args: string[]) => {
			const r = spawnSync(
				'node_modules/.bin/tsx',
				['node_modules/knex/bin/cli.js', '--knexfile', 'knexfile.ts', ...args],
				{
					env: { ...process.env, DATABASE_URL: scratchUrl },
					encoding: 'utf8',
					timeout: 60_000
				}
			);
			expect(r.status, r.stderr).toBe(0);
			return r.stdout;
		};
		const db = knexFactory({ client: 'pg', connection: scratchUrl });
		try {
			const files = readdirSync('migrations').filter((f) => f.endsWith('.ts'));
			expect(cli('migrate:latest')).toMatch(new RegExp(`${files.length} migrations`));
			expect(await db.schema.hasTable('users')).toBe(true);
			expect(await db.schema.hasTable('analysis_runs')).toBe(true);
			expect(cli('migrate:rollback', '--all')).toMatch(new RegExp(`${files.length} migrations`));
			expect(await db.schema.hasTable('users')).toBe(false);
			expect(await db.schema.hasTable('analysis_runs')).toBe(false);
			expect(cli('migrate:latest')).toMatch(new RegExp(`${files.length} migrations`));
			expect(await db.schema.hasTable('analysis_runs')).toBe(true);
		} finally {
			await db.destroy();
		}
	}, 120_000);

	it('immutable tables refuse UPDATE and DELETE', async () => {
		const db = knexFactory({ client: 'pg', connection: env.databaseUrl });
		try {
			const [u] = await db('users')
				.insert({ email: `imm${Date.now()}@example.test`, display_name: 'I' })
				.returning('*');
			const [p] = await db('projects')
				.insert({ key: 'IM' + Math.floor(Math.random() * 1e6), name: 'Imm' })
				.returning('*');
			const [m] = await db('models').insert({ project_id: p.id, name: 'm', owner_id: u.id }).returning('*');
			const [v] = await db('model_versions')
				.insert({
					model_id: m.id,
					version: 1,
					content: { operatingPoints: [] },
					content_hash: 'x',
					author_id: u.id
				})
				.returning('*');
			await expect(db('model_versions').where({ id: v.id }).update({ note: 'changed' })).rejects.toThrow(
				/immutable/
			);
			await expect(db('model_versions').where({ id: v.id }).delete()).rejects.toThrow(/immutable/);
		} finally {
			await db.destroy();
		}
	});
});
