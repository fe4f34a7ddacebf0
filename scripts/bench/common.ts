// What the bench sections share: the result shape, a scratch database (created in the cluster of
// DATABASE_URL, npm start's cluster when unset, migrated, dropped afterwards), signing in over HTTP and
// a process's resident memory.
import { execFileSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import knexFactory from 'knex';
import { ROOT, useLocalEnv } from '../lib/local-env';

export { ROOT };

export interface BenchResult {
	name: string;
	figure: string;
	target: string;
	ok: boolean;
	details: Record<string, number | string>;
}

function clusterUrl(): string {
	useLocalEnv('start');
	return process.env.DATABASE_URL!;
}

/** A new, migrated database named `name`; drop() removes it (connections or not). */
export async function scratchDatabase(name: string): Promise<{ url: string; drop: () => Promise<void> }> {
	const cluster = clusterUrl();
	const admin = knexFactory({ client: 'pg', connection: cluster });
	await admin.raw(`create database ${name}`);
	const url = new URL(cluster);
	url.pathname = `/${name}`;
	const drop = async () => {
		await admin.raw(`drop database if exists ${name} with (force)`).catch(() => {});
		await admin.destroy();
	};
	try {
		execFileSync(
			'node_modules/.bin/tsx',
			['node_modules/knex/bin/cli.js', '--knexfile', 'knexfile.ts', 'migrate:latest'],
			{ cwd: ROOT, env: { ...process.env, DATABASE_URL: url.toString() }, stdio: 'ignore' }
		);
	} catch (e) {
		await drop();
		throw e;
	}
	return { url: url.toString(), drop };
}

/** Sign in through the app's form; returns the Cookie header value. */
export async function signIn(base: string, email: string, password: string): Promise<string> {
	const res = await fetch(`${base}/signin`, {
		method: 'POST',
		redirect: 'manual',
		headers: { 'content-type': 'application/x-www-form-urlencoded', origin: base, accept: 'text/html' },
		body: new URLSearchParams({ email, password, redirectTo: '/' })
	});
	const cookies = res.headers
		.getSetCookie()
		.map((c) => c.split(';')[0])
		.filter((c) => !c.endsWith('='));
	if (!cookies.some((c) => c.includes('session-token')))
		throw new Error(`bench sign-in failed: HTTP ${res.status}`);
	return cookies.join('; ');
}

/** Resident memory of a process (VmRSS from /proc/<pid>/status), in bytes. */
export function rssBytes(pid: number): number {
	const m = /VmRSS:\s+(\d+) kB/.exec(readFileSync(`/proc/${pid}/status`, 'utf8'));
	return m ? Number(m[1]) * 1024 : 0;
}
