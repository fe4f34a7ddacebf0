import { spawn, spawnSync } from 'node:child_process';
import { closeSync, openSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { addMember, closeTestDb, createProject, createUser, testDb } from '../factories';
import { env } from '../helpers/env';
import { Client, signedIn } from '../helpers/http';
import { expectMailTo } from '../helpers/mail';
import { followThroughProvider, signInThroughProvider } from '../helpers/oidc';
import { FAKE_OIDC_PASSWORD, FAKE_OIDC_USERS } from '../../fakes/oidc-users';

// Faults while the app serves: the database restarted, the mail relay down, the identity provider
// restarted with a new signing key. Each dependency comes back without restarting the app, and
// nothing is lost.

afterAll(closeTestDb);

const db = (cmd: string) =>
	spawnSync('bash', ['scripts/db.sh', cmd], { encoding: 'utf8', env: process.env, timeout: 120_000 });
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

describe('PostgreSQL restarted while the app serves', () => {
	it('answers 503 (JSON for the API) during the outage and works again afterwards', async () => {
		const u = await createUser();
		const c = await signedIn(u.email, u.password);
		await closeTestDb();
		expect((await c.get('/account')).status).toBe(200);

		expect(db('stop').status).toBe(0);
		try {
			const health = await c.get('/api/v1/health');
			expect(health.status).toBe(503);
			const body = await health.json();
			expect(body.failing).toContain('database');
			const page = await c.get('/account', { accept: 'text/html' });
			expect(page.status).toBe(503);
			expect(await page.text()).toMatch(/database is unavailable/i);
			const api = await c.get('/api/v1/projects/NOPE', { accept: 'application/json' });
			expect(api.status).toBe(503);
			expect((await api.json()).error.message).toMatch(/database is unavailable/i);
			// Signed out, the request gets as far as the form action before it needs the database.
			const form = await new Client().action('/signin', { email: u.email, password: u.password });
			expect(form.httpStatus).toBe(503);
			expect(form.type).toBe('error');
			expect(form.error?.message).toMatch(/database is unavailable/i);
			const anonymousPage = await new Client().get('/signin?redirectTo=%2F', { accept: 'text/html' });
			expect(anonymousPage.status).toBeLessThan(500);
		} finally {
			expect(db('start').status).toBe(0);
		}
		// The pool reconnects by itself.
		let status = 0;
		for (let i = 0; i < 50 && status !== 200; i++) {
			status = (await c.get('/account')).status;
			if (status !== 200) await sleep(200);
		}
		expect(status).toBe(200);
		expect((await c.get('/api/v1/health')).status).toBe(200);
	}, 120_000);
});

async function stopStandIns(): Promise<void> {
	const pid = Number(readFileSync(join(env.testData, 'fakes.pid'), 'utf8'));
	process.kill(-pid, 'SIGTERM');
	for (let i = 0; i < 50; i++) {
		try {
			process.kill(pid, 0);
			await sleep(100);
		} catch {
			return;
		}
	}
}

/** Bring the stand-ins back (same ports and folders), as scripts/test.sh started them. */
async function startStandIns(): Promise<void> {
	const log = openSync(join(env.testData, 'fakes.log'), 'a');
	const child = spawn('node_modules/.bin/tsx', ['fakes/run.ts'], {
		detached: true,
		stdio: ['ignore', log, log],
		env: process.env
	});
	closeSync(log);
	writeFileSync(join(env.testData, 'fakes.pid'), String(child.pid));
	child.unref();
	const port = Number(process.env.FAKE_S3_PORT);
	for (let i = 0; i < 100; i++) {
		try {
			await fetch(`http://127.0.0.1:${port}/`);
			return;
		} catch {
			await sleep(100);
		}
	}
}

describe('object storage down', () => {
	it('answers 503 with no row while the store is down, and uploads work again once it is back', async () => {
		const u = await createUser();
		const p = await createProject();
		await addMember(u.id, p.id, 'engineer');
		const c = await signedIn(u.email, u.password);
		const created = await c.json(`/api/v1/projects/${p.key}/requirements`, 'POST', {
			title: 'Rig',
			statement: 'The loop shall remain absolutely stable for every gain in the sector [0, 2].',
			level: 'loop',
			assuranceLevel: 'C',
			methods: ['test']
		});
		const requirementId = String((await created.json()).requirement.id);
		const upload = () => {
			const form = new FormData();
			form.set('title', 'Rig log');
			form.set('kind', 'log');
			form.set('requirementIds', requirementId);
			form.set('file', new Blob(['time,value\n0,1\n1,2\n'], { type: 'text/csv' }), 'log.csv');
			return c.request(`/api/v1/projects/${p.key}/evidence`, {
				method: 'POST',
				body: form,
				headers: { accept: 'application/json' }
			});
		};
		const count = async () =>
			Number((await testDb()('evidence_files').count<{ n: string }[]>('* as n'))[0].n);
		const before = await count();
		await stopStandIns();
		try {
			const down = await upload();
			expect(down.status).toBe(503);
			expect((await down.json()).error.message).toMatch(/evidence store is unavailable/i);
			expect(await count()).toBe(before);
			const health = await c.get('/api/v1/health');
			expect(health.status).toBe(503);
			expect((await health.json()).failing).toContain('storage');
		} finally {
			await startStandIns();
		}
		const up = await upload();
		expect(up.status, await up.clone().text()).toBe(201);
		expect(await count()).toBe(before + 1);
	}, 90_000);
});

describe('mail relay down', () => {
	it('keeps the mail in the outbox, retries, and delivers once the relay is back', async () => {
		const pidFile = join(env.testData, 'fakes.pid');
		const pid = Number(readFileSync(pidFile, 'utf8'));
		process.kill(-pid, 'SIGTERM');
		for (let i = 0; i < 50; i++) {
			try {
				process.kill(pid, 0);
				await sleep(100);
			} catch {
				break;
			}
		}
		let restarted = false;
		try {
			const u = await createUser();
			const r = await new Client().action('/forgot', { email: u.email });
			expect(r.type).toBe('success');
			// The first delivery attempt fails and is recorded; the message stays queued.
			let row: { attempts: number; sent_at: Date | null; last_error: string | null } | undefined;
			for (let i = 0; i < 60; i++) {
				row = await testDb()('mail_outbox').where({ to_address: u.email }).first();
				if (row && row.attempts > 0) break;
				await sleep(250);
			}
			expect(row?.sent_at).toBeNull();
			expect(row?.attempts).toBeGreaterThan(0);
			expect(row?.last_error).toBeTruthy();

			// Bring the stand-ins back (same ports and folders), as scripts/test.sh started them.
			const log = openSync(join(env.testData, 'fakes.log'), 'a');
			const child = spawn('node_modules/.bin/tsx', ['fakes/run.ts'], {
				detached: true,
				stdio: ['ignore', log, log],
				env: process.env
			});
			closeSync(log);
			writeFileSync(pidFile, String(child.pid));
			child.unref();
			restarted = true;
			const mail = await expectMailTo(u.email, { subject: /Reset/, timeoutMs: 40_000 });
			expect(mail.text).toContain('/reset/');
			const sent = await testDb()('mail_outbox').where({ to_address: u.email }).first();
			expect(sent.sent_at).not.toBeNull();
		} finally {
			if (!restarted) {
				const child = spawn('node_modules/.bin/tsx', ['fakes/run.ts'], {
					detached: true,
					stdio: 'ignore',
					env: process.env
				});
				writeFileSync(pidFile, String(child.pid));
				child.unref();
			}
		}
	}, 90_000);
});

describe('identity provider restarted with a new signing key', () => {
	// The stand-in makes a new RSA key at each start, as a provider rotating its keys would; the app
	// has the old key set cached. A signature confirmed at the provider after the restart must still
	// verify (the app fetches the key set again), not be refused as an unverifiable answer.
	it('records a signature confirmed at the restarted provider', async () => {
		const pavel = FAKE_OIDC_USERS.find((u) => u.email.startsWith('pavel.ruud'))!;
		const p = await createProject({ name: 'Provider restarted' });
		const author = await createUser();
		await addMember(author.id, p.id, 'engineer');
		const eng = await signedIn(author.email, author.password);
		const { app, idp } = await signInThroughProvider(pavel.email, FAKE_OIDC_PASSWORD);
		const user = await testDb()('users').where({ email: pavel.email }).first();
		await addMember(Number(user.id), p.id, 'certifier');

		const signOnce = async (title: string) => {
			const res = await eng.json(`/api/v1/projects/${p.key}/requirements`, 'POST', {
				title,
				statement: 'The yaw damper gain schedule shall be inspected against the sector [0, 3].',
				level: 'loop',
				assuranceLevel: 'C',
				methods: ['inspection']
			});
			expect(res.status, await res.clone().text()).toBe(201);
			const id = (await res.json()).requirement.id as number;
			const page = `/p/${p.key}/requirements/${id}`;
			const named = await eng.action(`${page}?/requestReview`, { revision: '1', reviewers: String(user.id) });
			expect(named.type, JSON.stringify(named)).toBe('success');
			const r = await app.action(`${page}?/decide`, { revision: '1', decision: 'approve', comment: '' });
			expect(r.type, JSON.stringify(r)).toBe('success');
			const url = new URL(r.data!.next as string);
			const first = await idp.get(url.pathname + url.search, { accept: 'text/html' });
			const run = await followThroughProvider(app, idp, first, pavel.email, FAKE_OIDC_PASSWORD);
			const back = await app.get(run.landed, { accept: 'text/html' });
			expect(back.status, (await back.clone().text()).slice(0, 2000)).toBe(303);
			const sigs = await testDb()('signatures').where({ target_type: 'requirement', target_id: id });
			expect(sigs).toHaveLength(1);
			expect(sigs[0].confirmed_by).toBe('identity provider re-authentication');
		};

		// The app caches the provider's keys on this first signature.
		await signOnce('Before the restart');
		await stopStandIns();
		await startStandIns();
		const iss = process.env.OIDC_ISSUER!;
		for (let i = 0; i < 100; i++) {
			const ok = await fetch(`${iss}/.well-known/openid-configuration`).then(
				(r) => r.ok,
				() => false
			);
			if (ok) break;
			await sleep(100);
		}
		await signOnce('After the restart');
	}, 120_000);
});
