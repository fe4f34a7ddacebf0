import type { Knex } from 'knex';
import { useLocalEnv } from './scripts/lib/local-env';

// scripts/start.sh and scripts/test.sh set DATABASE_URL for their own cluster; `npm run migrate` in a
// second terminal beside npm start finds npm start's cluster through the shared helper.
useLocalEnv();
const connection = process.env.DATABASE_URL!;

const config: Knex.Config = {
	client: 'pg',
	connection,
	pool: { min: 0, max: 10 },
	migrations: { directory: './migrations', extension: 'ts', tableName: 'knex_migrations' }
};

export default config;
