import { spawn, type ChildProcess } from 'node:child_process';
import { request as httpRequest } from 'node:http';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeTestDb, createTeam, testDb, unique } from '../../factories';
import { env } from '../../helpers/env';
import { Client, signedIn } from '../../helpers/http';
import {
	createRequirement,
	evidenceForm,
	evidenceRowsTitled,
	eventually,
	objectsUnder,
	postForm,
	sha256,
	textOfSize,
	tinyPng
} from './fixtures';

// Evidence upload against the running app and the object-storage stand-in. The app runs with
// EVIDENCE_MAX_BYTES = 12 MiB (scripts/test.sh), so an 11 MiB file goes up as a multipart upload
// (5 MiB parts, so three of them) and 12 MiB + 1 byte is over the limit. Every expected SHA-256 is computed here, in the
// test, from the bytes sent (FIPS 180-4 through node:crypto), never taken from the app.

const LIMIT = Number(process.env.EVIDENCE_MAX_BYTES);

let team: Awaited<ReturnType<typeof createTeam>>;
let engineer: Client;
let certifier: Client;
let req: { id: number; identifier: string };
let prefix: string;

beforeAll(async () => {
	expect(LIMIT, 'scripts/test.sh sets EVIDENCE_MAX_BYTES').toBe(12 * 1024 * 1024);
	team = await createTeam();
	req = await createRequirement(team.project.id);
	prefix = `projects/${team.project.key}/`;
	engineer = await signedIn(team.users.engineer.email, team.users.engineer.password);
	certifier = await signedIn(team.users.certifier.email, team.users.certifier.password);
});
afterAll(closeTestDb);

const url = () => `/api/v1/projects/${team.project.key}/evidence`;
const fields = (title: string, extra: Record<string, string> = {}) => ({
	title,
	kind: 'log',
	requirementIds: req.identifier,
	...extra
});

describe('evidence upload', () => {
	it('round-trips an 11 MiB file through a multipart upload with the same SHA-256', async () => {
		const bytes = textOfSize(11 * 1024 * 1024);
		const expected = sha256(bytes);
		const title = unique('round-trip ');
		const res = await postForm(
			engineer,
			url(),
			evidenceForm(fields(title), { name: 'rig log Ω 7.txt', bytes })
		);
		expect(res.status, await res.clone().text()).toBe(201);
		const rec = await res.json();
		expect(rec.sha256).toBe(expected);
		expect(rec.size).toBe(bytes.length);
		expect(rec.originalName).toBe('rig log Ω 7.txt');
		expect(rec.requirements).toEqual([{ id: req.id, identifier: req.identifier }]);

		const dl = await engineer.get(`/api/v1/evidence/${rec.id}/download`);
		expect(dl.status).toBe(200);
		expect(dl.headers.get('content-disposition')).toMatch(
			/^attachment; filename="rig log _ 7.txt"; filename\*=UTF-8''rig%20log%20%CE%A9%207.txt$/
		);
		const back = Buffer.from(await dl.arrayBuffer());
		expect(back.length).toBe(bytes.length);
		expect(sha256(back)).toBe(expected);

		// Stored under a sanitised key; the row keeps the name as given.
		const row = await testDb()('evidence_files').where({ evidence_id: rec.id }).first();
		expect(row.storage_key).toMatch(
			new RegExp(`^projects/${team.project.key}/evidence/[0-9a-f-]{36}/rig_log_7\\.txt$`)
		);
		expect(row.original_name).toBe('rig log Ω 7.txt');
		// The audit event was written with the upload.
		const ev = await testDb()('audit_events')
			.where({ subject_type: 'evidence', subject_id: String(rec.id) })
			.first();
		expect(ev.action).toBe('evidence.upload');
		expect(ev.after.sha256).toBe(expected);
	}, 60_000);

	it('round-trips a PNG and shows it inline; text files are not shown inline', async () => {
		const png = tinyPng();
		const res = await postForm(
			engineer,
			url(),
			evidenceForm(fields(unique('png ')), { name: 'bode.png', bytes: png })
		);
		expect(res.status).toBe(201);
		const rec = await res.json();
		expect(rec.contentType).toBe('image/png');
		expect(rec.sha256).toBe(sha256(png));
		const inline = await engineer.get(`/p/${team.project.key}/evidence/${rec.id}/inline`);
		expect(inline.status).toBe(200);
		expect(inline.headers.get('content-disposition')).toMatch(/^inline;/);
		expect(sha256(Buffer.from(await inline.arrayBuffer()))).toBe(sha256(png));

		const txt = await postForm(
			engineer,
			url(),
			evidenceForm(fields(unique('t ')), { name: 'a.txt', bytes: Buffer.from('hello\n') })
		);
		const t = await txt.json();
		const notInline = await engineer.get(`/p/${team.project.key}/evidence/${t.id}/inline`, {
			accept: 'text/html'
		});
		expect(notInline.status).toBe(415);
	});

	it('answers 413 naming the limit for a file one byte over it, and stores nothing', async () => {
		const before = await objectsUnder(prefix);
		const title = unique('too big ');
		const res = await postForm(
			engineer,
			url(),
			evidenceForm(fields(title), { name: 'big.txt', bytes: textOfSize(LIMIT + 1) })
		);
		expect(res.status).toBe(413);
		const body = await res.json();
		expect(body.error.message).toContain('12 MiB (12582912 bytes)');
		expect(await evidenceRowsTitled(title)).toBe(0);
		expect(await eventually(async () => (await objectsUnder(prefix)).length === before.length)).toBe(true);
	}, 60_000);

	it('accepts a file of exactly the limit', async () => {
		const bytes = textOfSize(LIMIT);
		const res = await postForm(
			engineer,
			url(),
			evidenceForm(fields(unique('at limit ')), { name: 'edge.txt', bytes })
		);
		expect(res.status).toBe(201);
		expect((await res.json()).sha256).toBe(sha256(bytes));
	}, 60_000);

	it('answers 415 for a type we do not keep, or content that contradicts the name, and stores nothing', async () => {
		const before = await objectsUnder(prefix);
		const cases = [
			{ name: 'tool.exe', bytes: Buffer.from('MZ\x90\x00 not evidence') },
			{ name: 'plot.png', bytes: Buffer.from('just text, not a PNG\n') },
			{ name: 'data.csv', bytes: tinyPng() },
			{ name: 'notes.txt', bytes: Buffer.from([0x68, 0x69, 0x00, 0x01, 0x02]) },
			{ name: 'latin1.txt', bytes: Buffer.from([0x63, 0x61, 0x66, 0xe9, 0x0a]) }
		];
		for (const c of cases) {
			const title = unique('wrong type ');
			const res = await postForm(engineer, url(), evidenceForm(fields(title), c));
			expect(res.status, c.name).toBe(415);
			expect((await res.json()).error.message.length).toBeGreaterThan(10);
			expect(await evidenceRowsTitled(title)).toBe(0);
		}
		expect(await eventually(async () => (await objectsUnder(prefix)).length === before.length)).toBe(true);
	});

	it('refuses bad fields with 400 naming them, and removes the stored object', async () => {
		const before = await objectsUnder(prefix);
		const res = await postForm(
			engineer,
			url(),
			evidenceForm(
				{ title: '', kind: 'poem', requirementIds: 'NOPE-1' },
				{ name: 'x.txt', bytes: Buffer.from('data\n') }
			)
		);
		expect(res.status).toBe(400);
		const body = await res.json();
		expect(Object.keys(body.error.fields)).toEqual(expect.arrayContaining(['title', 'kind']));
		const unknownReq = await postForm(
			engineer,
			url(),
			evidenceForm(fields(unique('u '), { requirementIds: 'NOPE-1' }), {
				name: 'x.txt',
				bytes: Buffer.from('data\n')
			})
		);
		expect(unknownReq.status).toBe(400);
		expect((await unknownReq.json()).error.fields.requirementIds).toContain('NOPE-1');
		expect(await eventually(async () => (await objectsUnder(prefix)).length === before.length)).toBe(true);
	});

	it('a request cut off mid-body leaves no object and no row', async () => {
		const before = await objectsUnder(prefix);
		const title = unique('truncated ');
		const boundary = '----lw' + unique('b');
		const head =
			Object.entries(fields(title))
				.map(([k, v]) => `--${boundary}\r\ncontent-disposition: form-data; name="${k}"\r\n\r\n${v}\r\n`)
				.join('') +
			`--${boundary}\r\ncontent-disposition: form-data; name="file"; filename="cut.txt"\r\ncontent-type: text/plain\r\n\r\n`;
		const declared = 11 * 1024 * 1024;
		const sent = 9 * 1024 * 1024; // more than one 5 MiB part: a multipart upload is under way when the client goes
		await new Promise<void>((resolve) => {
			const u = new URL(env.baseUrl + url());
			const r = httpRequest({
				host: u.hostname,
				port: u.port,
				path: u.pathname,
				method: 'POST',
				headers: {
					'content-type': `multipart/form-data; boundary=${boundary}`,
					'content-length': String(Buffer.byteLength(head) + declared + 100),
					cookie: [...engineer.cookies].map(([k, v]) => `${k}=${v}`).join('; '),
					origin: env.baseUrl
				}
			});
			r.on('error', () => resolve());
			r.write(head);
			r.write(textOfSize(sent), () => {
				setTimeout(() => {
					r.destroy();
					resolve();
				}, 500);
			});
		});
		expect(await eventually(async () => (await objectsUnder(prefix)).length === before.length)).toBe(true);
		// Give the server time to finish whatever it would have written.
		await new Promise((r) => setTimeout(r, 1000));
		expect(await evidenceRowsTitled(title)).toBe(0);
		expect((await objectsUnder(prefix)).length).toBe(before.length);
	}, 60_000);

	it('a database failure after the object is stored removes the object', async () => {
		const title = unique('db failure ');
		const db = testDb();
		// Provoke a failure in the app's transaction for this one title only: a trigger that refuses it.
		const fn = `lw_test_refuse_${unique('f').toLowerCase()}`;
		await db.raw(`create function ${fn}() returns trigger language plpgsql as $$
			begin if new.title = '${title}' then raise exception 'provoked failure' using errcode = 'check_violation'; end if; return new; end $$`);
		await db.raw(
			`create trigger ${fn} before insert on evidence_files for each row execute function ${fn}()`
		);
		try {
			const before = await objectsUnder(prefix);
			const res = await postForm(
				engineer,
				url(),
				evidenceForm(fields(title), { name: 'db.txt', bytes: Buffer.from('abc\n') })
			);
			// PostgreSQL's refusal is answered as a refused request (src/lib/server/api.ts pgRefusal).
			expect(res.status).toBe(400);
			expect((await res.json()).error.message).toMatch(/nothing was changed/);
			expect(await evidenceRowsTitled(title)).toBe(0);
			expect(await eventually(async () => (await objectsUnder(prefix)).length === before.length)).toBe(true);
			expect(
				await db('evidence')
					.where({ project_id: team.project.id })
					.whereNotExists(function () {
						this.select(db.raw('1')).from('evidence_files as f').whereRaw('f.evidence_id = evidence.id');
					})
			).toEqual([]);
		} finally {
			await db.raw(`drop trigger if exists ${fn} on evidence_files`);
			await db.raw(`drop function if exists ${fn}()`);
		}
	});

	it('viewers may not upload; only members may download', async () => {
		const viewer = await signedIn(team.users.viewer.email, team.users.viewer.password);
		const outsider = await signedIn(team.users.outsider.email, team.users.outsider.password);
		const denied = await postForm(
			viewer,
			url(),
			evidenceForm(fields(unique('v ')), { name: 'v.txt', bytes: Buffer.from('v\n') })
		);
		expect(denied.status).toBe(403);

		const bytes = Buffer.from('members only\n');
		const res = await postForm(engineer, url(), evidenceForm(fields(unique('m ')), { name: 'm.txt', bytes }));
		const rec = await res.json();
		const path = `/api/v1/evidence/${rec.id}/download`;
		expect((await new Client().get(path)).status).toBe(401);
		expect((await outsider.get(path)).status).toBe(403);
		const ok = await viewer.get(path);
		expect(ok.status).toBe(200);
		expect(ok.headers.get('content-disposition')).toMatch(/^attachment;/);
		expect(sha256(Buffer.from(await ok.arrayBuffer()))).toBe(sha256(bytes));
		expect((await outsider.get(`/p/${team.project.key}/evidence/${rec.id}/inline`)).status).toBe(403);
	});
});

describe('upload with an API token', () => {
	it('works with a project-scoped token (and the Origin header SvelteKit requires for multipart posts)', async () => {
		const t = await engineer.action('/account?/createToken', {
			projectKey: team.project.key,
			role: 'engineer',
			label: 'rig pipeline'
		});
		expect(t.type, JSON.stringify(t)).toBe('success');
		const token = String(t.data?.token);
		const bytes = Buffer.from('pipeline log\n');
		const fd = () => evidenceForm(fields(unique('token ')), { name: 'p.txt', bytes });
		const api = new Client();
		api.cookies.clear();
		const ok = await api.request(url(), {
			method: 'POST',
			headers: { authorization: `Bearer ${token}`, accept: 'application/json' },
			body: fd()
		});
		expect(ok.status).toBe(201);
		const rec = await ok.json();
		expect(rec.sha256).toBe(sha256(bytes));
		const row = await testDb()('audit_events')
			.where({ action: 'evidence.upload', subject_id: String(rec.id) })
			.first();
		expect(row.actor_token_id).not.toBeNull();
		// Without the Origin header the framework's cross-site form check refuses the post before our code runs.
		const noOrigin = await fetch(env.baseUrl + url(), {
			method: 'POST',
			headers: { authorization: `Bearer ${token}` },
			body: fd()
		});
		expect(noOrigin.status).toBe(403);
	});
});

describe('accepted evidence is frozen', () => {
	it('refuses a new revision through the API and every change at the database', async () => {
		const res = await postForm(
			engineer,
			url(),
			evidenceForm(fields(unique('frozen ')), { name: 'r1.txt', bytes: Buffer.from('rev 1\n') })
		);
		const rec = await res.json();
		// Before review a new revision supersedes the first.
		const r2 = await postForm(
			engineer,
			`/api/v1/evidence/${rec.id}/revisions`,
			evidenceForm({ note: 'corrected channel map' }, { name: 'r2.txt', bytes: Buffer.from('rev 2\n') })
		);
		expect(r2.status).toBe(201);
		expect((await r2.json()).revision).toBe(2);

		// The uploader cannot sign off their own upload; a stale revision cannot be reviewed.
		expect(
			(
				await engineer.json(`/api/v1/evidence/${rec.id}/review`, 'POST', {
					decision: 'accepted',
					comment: 'ok',
					revision: 2
				})
			).status
		).toBe(403);
		const stale = await certifier.json(`/api/v1/evidence/${rec.id}/review`, 'POST', {
			password: team.users.certifier.password,
			decision: 'accepted',
			comment: 'ok',
			revision: 1
		});
		expect(stale.status).toBe(409);
		const noComment = await certifier.json(`/api/v1/evidence/${rec.id}/review`, 'POST', {
			password: team.users.certifier.password,
			decision: 'accepted',
			comment: ' ',
			revision: 2
		});
		expect(noComment.status).toBe(400);
		const accept = await certifier.json(`/api/v1/evidence/${rec.id}/review`, 'POST', {
			password: team.users.certifier.password,
			decision: 'accepted',
			comment: 'Matches the rig configuration sheet.',
			revision: 2
		});
		expect(accept.status).toBe(201);
		expect((await accept.json()).meaning).toMatch(/I confirm this evidence shows the requirement is met/);

		const again = await certifier.json(`/api/v1/evidence/${rec.id}/review`, 'POST', {
			password: team.users.certifier.password,
			decision: 'rejected',
			comment: 'no',
			revision: 2
		});
		expect(again.status).toBe(409);
		const r3 = await postForm(
			engineer,
			`/api/v1/evidence/${rec.id}/revisions`,
			evidenceForm({}, { name: 'r3.txt', bytes: Buffer.from('rev 3\n') })
		);
		expect(r3.status).toBe(409);
		expect((await r3.json()).error.message).toMatch(/frozen/);

		const db = testDb();
		const file = await db('evidence_files').where({ evidence_id: rec.id, revision: 2 }).first();
		await expect(
			db('evidence_files')
				.where({ id: file.id })
				.update({ sha256: '0'.repeat(64) })
		).rejects.toThrow(/immutable/);
		await expect(db('evidence_files').where({ id: file.id }).delete()).rejects.toThrow(/immutable/);
		await expect(db('evidence_reviews').where({ evidence_file_id: file.id }).delete()).rejects.toThrow(
			/immutable/
		);
		await expect(db('evidence_links').where({ evidence_file_id: file.id }).delete()).rejects.toThrow(
			/immutable/
		);
		await expect(db('evidence').where({ id: rec.id }).update({ current_revision: 1 })).rejects.toThrow(
			/frozen/
		);
		await expect(db('evidence').where({ id: rec.id }).delete()).rejects.toThrow(/cannot be deleted/);
		await expect(
			db('evidence_files').insert({
				...file,
				id: undefined,
				revision: 3,
				storage_key: file.storage_key + '-x'
			})
		).rejects.toThrow(/frozen/);
		// Superseded revision 1 is kept as it was.
		const r1 = await db('evidence_files').where({ evidence_id: rec.id, revision: 1 }).first();
		expect(r1.sha256).toBe(sha256('rev 1\n'));
	});
});

describe('storage outage', () => {
	let app: ChildProcess | undefined;
	const port = Number(new URL(env.baseUrl).port) + 5;
	const base = `http://127.0.0.1:${port}`;

	beforeAll(async () => {
		// A second instance of the built app, pointed at an object store that is not there.
		app = spawn('node', [process.env.BUILD_DIR!], {
			env: { ...process.env, PORT: String(port), ORIGIN: base, S3_ENDPOINT: 'http://127.0.0.1:9' },
			stdio: 'ignore'
		});
		const ok = await eventually(async () => {
			try {
				return (await fetch(base + '/api/v1/health')).status > 0;
			} catch {
				return false;
			}
		}, 30_000);
		expect(ok).toBe(true);
	}, 60_000);
	afterAll(() => {
		app?.kill('SIGTERM');
	});

	it('answers 503 with a clear message and writes no row; health names storage', async () => {
		const c = new Client(base);
		await c.signIn(team.users.engineer.email, team.users.engineer.password);
		expect(c.signedIn).toBe(true);
		const title = unique('outage ');
		const res = await postForm(
			c,
			url(),
			evidenceForm(fields(title), { name: 'o.txt', bytes: textOfSize(200_000) })
		);
		expect(res.status).toBe(503);
		expect((await res.json()).error.message).toBe(
			'The evidence store is unavailable right now; nothing was stored. Try again shortly.'
		);
		expect(await evidenceRowsTitled(title)).toBe(0);
		const health = await fetch(base + '/api/v1/health');
		expect(health.status).toBe(503);
		const h = await health.json();
		expect(h.failing).toContain('storage');
		expect(h.checks.storage).toMatch(/unreachable/);
	}, 60_000);
});
