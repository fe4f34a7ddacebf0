import knexFactory, { type Knex } from 'knex';
import pg from 'pg';
import { config } from './config';

// bigint ids and counts come back as strings by default; they fit in a double for our sizes.
pg.types.setTypeParser(20, (v) => Number(v));
// numeric (1700) stays a string: exact values are kept exact.

let instance: Knex | undefined;

/** The one Knex instance of the process. */
export function db(): Knex {
	instance ??= knexFactory({
		client: 'pg',
		connection: config.databaseUrl,
		pool: { min: 0, max: 10 },
		acquireConnectionTimeout: 5_000
	});
	return instance;
}

export type Db = Knex | Knex.Transaction;

export async function closeDb(): Promise<void> {
	if (instance) {
		await instance.destroy();
		instance = undefined;
	}
}

/** True when the error means PostgreSQL cannot be reached (down, restarting, refusing). */
export function isDatabaseUnavailable(e: unknown): boolean {
	const err = e as { code?: string; message?: string } | undefined;
	const code = err?.code ?? '';
	const msg = err?.message ?? '';
	return (
		[
			'ECONNREFUSED',
			'ECONNRESET',
			'ETIMEDOUT',
			'EPIPE',
			'57P01',
			'57P02',
			'57P03',
			'08006',
			'08001',
			'08003'
		].includes(code) ||
		/Knex: Timeout acquiring a connection|Connection terminated|the database system is (starting up|shutting down)/i.test(
			msg
		)
	);
}
