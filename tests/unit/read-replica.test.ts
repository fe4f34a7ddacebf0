import { afterEach, describe, expect, it } from 'vitest';
import { closeDb, db, readDb } from '../../src/lib/server/db';

// DATABASE_READ_URL picks the connection of the trace-matrix and export reads (README, deployment).
// Knex connects lazily, so no server is needed to see which address each instance would use.
const connectionOf = (k: ReturnType<typeof db>) =>
	(k.client.config.connection as { connectionString: string }).connectionString;

describe('read replica selection', () => {
	const saved = { url: process.env.DATABASE_URL, read: process.env.DATABASE_READ_URL };
	afterEach(async () => {
		await closeDb();
		process.env.DATABASE_URL = saved.url;
		if (saved.read === undefined) delete process.env.DATABASE_READ_URL;
		else process.env.DATABASE_READ_URL = saved.read;
	});

	it('reads the primary when DATABASE_READ_URL is unset', () => {
		process.env.DATABASE_URL = 'postgres://app:pw@primary.example.test:5432/lw';
		delete process.env.DATABASE_READ_URL;
		expect(readDb()).toBe(db());
		expect(connectionOf(readDb())).toBe('postgres://app:pw@primary.example.test:5432/lw');
	});

	it('reads the replica when DATABASE_READ_URL is set, and writes still go to the primary', () => {
		process.env.DATABASE_URL = 'postgres://app:pw@primary.example.test:5432/lw';
		process.env.DATABASE_READ_URL = 'postgres://app:pw@replica.example.test:5432/lw';
		expect(readDb()).not.toBe(db());
		expect(connectionOf(readDb())).toBe('postgres://app:pw@replica.example.test:5432/lw');
		expect(connectionOf(db())).toBe('postgres://app:pw@primary.example.test:5432/lw');
	});
});
