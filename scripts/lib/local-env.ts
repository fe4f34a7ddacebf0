// The environment of the commands meant for users (npm run audit:verify, seed, worker, migrate, bench,
// analyze, load): the same private cluster and local stand-ins that npm start uses, so a command run in
// a second terminal beside npm start finds them without DATABASE_URL. The defaults are scripts/local.env
// (start.sh reads the same file); a variable already set wins, so npm test and deployments are unchanged.
import { spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

export const ROOT = fileURLToPath(new URL('../..', import.meta.url));

/** KEY=VALUE lines of scripts/local.env (comments and blank lines skipped). */
export function localDefaults(): Record<string, string> {
	const out: Record<string, string> = {};
	for (const line of readFileSync(join(ROOT, 'scripts/local.env'), 'utf8').split('\n')) {
		const m = /^\s*([A-Z][A-Z0-9_]*)=(.*)$/.exec(line);
		if (m) out[m[1]] = m[2].trim();
	}
	return out;
}

function db(cmd: 'status' | 'url' | 'start') {
	return spawnSync('bash', ['scripts/db.sh', cmd], { cwd: ROOT, env: process.env, encoding: 'utf8' });
}

export type DatabaseNeed =
	/** The command cannot work without the database: say how to start it and stop. */
	| 'required'
	/** Start the private cluster when it is not running (bench makes scratch databases in it). */
	| 'start'
	/** The command does not use the database (analyze, load). */
	| 'none';

/**
 * Fills in what npm start would have set. With `database: 'required'` and no DATABASE_URL, the private
 * cluster must be running (npm start or npm run db:start); otherwise the command ends with that advice
 * rather than failing later with "DATABASE_URL is not set".
 */
export function useLocalEnv(database: DatabaseNeed = 'required'): void {
	const env = process.env;
	for (const [k, v] of Object.entries(localDefaults())) env[k] ??= v;
	env.FAKE_DIR ??= join(ROOT, '.data/fakes');
	// As start.sh: without a mail server of its own, npm start uses the local stand-ins for mail and storage.
	if (env.SMTP_URL === undefined) {
		env.SMTP_URL = `smtp://127.0.0.1:${env.FAKE_SMTP_PORT}`;
		env.MAIL_FAKE_DIR ??= join(env.FAKE_DIR, 'mail');
		env.S3_ENDPOINT ??= `http://127.0.0.1:${env.FAKE_S3_PORT}`;
		env.S3_ACCESS_KEY_ID ??= 'S3RVER';
		env.S3_SECRET_ACCESS_KEY ??= 'S3RVER';
	}
	if (env.DATABASE_URL || database === 'none') return;
	if (db('status').status !== 0) {
		if (database === 'start') {
			const started = db('start');
			if (started.status !== 0) throw new Error(`the private database did not start: ${started.stderr}`);
		} else {
			console.error(
				`[loopwarden] DATABASE_URL is not set and the private database (${env.PG_NAME} on 127.0.0.1:${env.PG_PORT}) ` +
					'is not running: start the app with `npm start` (or only the database with `npm run db:start`) ' +
					'and run this command again, or set DATABASE_URL.'
			);
			process.exit(1);
		}
	}
	const url = db('url');
	if (url.status !== 0) throw new Error(`scripts/db.sh url failed: ${url.stderr}`);
	env.DATABASE_URL = url.stdout.trim();
}
