import { createHash } from 'node:crypto';
import knexFactory, { type Knex } from 'knex';
import pg from 'pg';
import { config } from './config';

// bigint ids and counts come back as strings by default; they fit in a double for our sizes.
pg.types.setTypeParser(20, (v) => Number(v));
// numeric (1700) stays a string: exact values are kept exact.

// Statements that recur are sent as named prepared statements, so that PostgreSQL parses and plans
// them once per connection (and settles on a generic plan after a few runs) instead of on every
// request: planning the trace-matrix query costs more than running it, and most requests are a handful
// of small queries whose planning dominates. The same policy as pgjdbc's prepareThreshold: a text is
// prepared from its third use; each connection keeps at most PREPARED_PER_CONNECTION of them (beyond
// that, statements run unnamed as before). Only parameterised statements (extended protocol, one
// command) are eligible.
const PREPARE_THRESHOLD = 3;
const PREPARED_PER_CONNECTION = 256;
const uses = new Map<string, number>();

function statementName(text: string): string | undefined {
	const key = createHash('sha1').update(text).digest('base64url').slice(0, 22);
	const n = (uses.get(key) ?? 0) + 1;
	if (uses.size >= 5_000) uses.clear();
	uses.set(key, n);
	return n >= PREPARE_THRESHOLD ? `lw_${key}` : undefined;
}

function autoPrepare(conn: pg.Client): void {
	const named = new Set<string>();
	const query = conn.query.bind(conn) as (...args: unknown[]) => unknown;
	(conn as { query: unknown }).query = (config: unknown, ...rest: unknown[]) => {
		const c = config as { text?: unknown; values?: unknown; name?: unknown } | null;
		if (
			c &&
			Object.getPrototypeOf(c) === Object.prototype && // not a Submittable (cursor, stream)
			typeof c.text === 'string' &&
			c.name === undefined &&
			Array.isArray(c.values) &&
			c.values.length > 0
		) {
			const name = statementName(c.text);
			if (name && (named.has(name) || named.size < PREPARED_PER_CONNECTION)) {
				named.add(name);
				return query({ ...c, name }, ...rest);
			}
		}
		return query(config, ...rest);
	};
}

let instance: Knex | undefined;
let readInstance: Knex | undefined;

/** The one Knex instance of the process. */
export function db(): Knex {
	instance ??= connect(config.databaseUrl);
	return instance;
}

/**
 * The connection for the trace-matrix and export reads: a read replica when DATABASE_READ_URL is set,
 * else the same instance as db(). Only reads go here; anything that writes uses db().
 */
export function readDb(): Knex {
	if (config.databaseReadUrl === config.databaseUrl) return db();
	readInstance ??= connect(config.databaseReadUrl);
	return readInstance;
}

function connect(connectionString: string): Knex {
	return knexFactory({
		client: 'pg',
		// JIT compilation is for long analytical queries; ours are short, and the planner's row
		// estimates for the grouped trace-matrix sub-queries would switch it on for nothing.
		connection: { connectionString, options: '-c jit=off' },
		pool: {
			min: 0,
			max: config.dbPoolMax,
			afterCreate: (conn: pg.Client, done: (err: Error | null, conn: pg.Client) => void) => {
				autoPrepare(conn);
				done(null, conn);
			}
		},
		acquireConnectionTimeout: 5_000
	});
}

export type Db = Knex | Knex.Transaction;

/**
 * Several independent reads in one round trip (each round trip costs more here than the small queries
 * themselves). Each query's rows come back through json_agg with their columns; timestamps (columns
 * named `at` or `*_at`) are turned back into Dates. json_agg does not promise the sub-query's order:
 * `orderBy` gives each result's sort key, applied here.
 */
export async function readTogether<K extends string>(
	conn: Db,
	parts: Record<K, { query: Knex.QueryBuilder; orderBy?: { column: string; desc?: boolean } }>
): Promise<Record<K, Record<string, unknown>[]>> {
	const keys = Object.keys(parts) as K[];
	const sql = keys.map(() => `(select coalesce(json_agg(t), '[]'::json) from ? t) as ??`).join(', ');
	const { rows } = await conn.raw(`select ${sql}`, keys.flatMap((k) => [parts[k].query, k]) as never[]);
	const out = {} as Record<K, Record<string, unknown>[]>;
	for (const k of keys) {
		const list = (rows[0][k] as Record<string, unknown>[]).map(revive);
		const o = parts[k].orderBy;
		if (o) {
			const sign = o.desc ? -1 : 1;
			list.sort((a, b) => sign * compare(a[o.column], b[o.column]));
		}
		out[k] = list;
	}
	return out;
}

function revive(row: Record<string, unknown>): Record<string, unknown> {
	for (const [key, v] of Object.entries(row)) {
		if (typeof v === 'string' && (key === 'at' || key.endsWith('_at'))) row[key] = new Date(v);
	}
	return row;
}

function compare(a: unknown, b: unknown): number {
	const x = a instanceof Date ? a.getTime() : a;
	const y = b instanceof Date ? b.getTime() : b;
	return x === y ? 0 : (x as number) < (y as number) ? -1 : 1;
}

export async function closeDb(): Promise<void> {
	if (readInstance) {
		await readInstance.destroy();
		readInstance = undefined;
	}
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
