import type { Knex } from 'knex';

// Reads only the environment: scripts/start.sh and scripts/test.sh set DATABASE_URL for their own cluster.
const connection = process.env.DATABASE_URL;
if (!connection) throw new Error('DATABASE_URL is not set (scripts/start.sh and scripts/test.sh set it)');

const config: Knex.Config = {
	client: 'pg',
	connection,
	pool: { min: 0, max: 10 },
	migrations: { directory: './migrations', extension: 'ts', tableName: 'knex_migrations' }
};

export default config;
