// Tests only: empty the test database (refuses any database whose name does not end in _test).
import knex from 'knex';

const url = process.env.DATABASE_URL ?? '';
const name = new URL(url).pathname.slice(1);
if (!name.endsWith('_test')) {
	console.error(`refusing to reset "${name}": not a test database`);
	process.exit(2);
}
const db = knex({ client: 'pg', connection: url });
await db.raw('drop schema if exists public cascade');
await db.raw('drop schema if exists pgboss cascade');
await db.raw('create schema public');
await db.destroy();
