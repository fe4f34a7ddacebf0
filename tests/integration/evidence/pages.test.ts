import { PutObjectCommand } from '@aws-sdk/client-s3';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeTestDb, createTeam, testDb, unique } from '../../factories';
import { type Client, signedIn } from '../../helpers/http';
import { attachSpec, createRequirement, evidenceForm, postForm, sha256, testS3 } from './fixtures';

// The evidence pages and the review / integrity / frequency-response flows over HTTP.

let team: Awaited<ReturnType<typeof createTeam>>;
let engineer: Client;
let certifier: Client;

beforeAll(async () => {
	team = await createTeam();
	engineer = await signedIn(team.users.engineer.email, team.users.engineer.password);
	certifier = await signedIn(team.users.certifier.email, team.users.certifier.password);
});
afterAll(closeTestDb);

const api = () => `/api/v1/projects/${team.project.key}/evidence`;

// G(s) = 1/(s + 1) at w = 0.1, 1, 10 rad/s (values by hand: G = (1 - jw)/(1 + w^2)), as magnitude in dB
// (-10 log10(1 + w^2)) and phase in degrees (-atan w).
const CSV_NO_UNITS =
	'frequency,magnitude,phase\n0.1,-0.043214,-5.710593\n1,-3.010300,-45\n10,-20.043214,-84.289407\n';

describe('evidence pages', () => {
	it('the plain form (no JavaScript) uploads through the form action and redirects to the evidence page', async () => {
		const req = await createRequirement(team.project.id);
		const bytes = Buffer.from('time,angle\n0,0.1\n0.01,0.12\n');
		const res = await engineer.request(`/p/${team.project.key}/evidence?/upload`, {
			method: 'POST',
			headers: { accept: 'text/html' },
			body: evidenceForm(
				{ title: unique('form '), kind: 'log', requirementIds: req.identifier },
				{ name: 'step.csv', bytes }
			)
		});
		expect(res.status).toBe(303);
		const where = res.headers.get('location')!;
		expect(where).toMatch(new RegExp(`^/p/${team.project.key}/evidence/\\d+$`));
		const page = await engineer.get(where, { accept: 'text/html' });
		const html = await page.text();
		expect(page.status).toBe(200);
		expect(html).toContain(sha256(bytes));
		expect(html).toContain('step.csv');

		// A bad form shows the message in place, keeps the typed values, and stores nothing.
		const bad = await engineer.request(`/p/${team.project.key}/evidence?/upload`, {
			method: 'POST',
			headers: { accept: 'text/html' },
			body: evidenceForm(
				{ title: 'kept title', kind: 'log', requirementIds: 'NOPE-9' },
				{ name: 'x.txt', bytes: Buffer.from('x\n') }
			)
		});
		expect(bad.status).toBe(400);
		const badHtml = await bad.text();
		expect(badHtml).toContain('No requirement NOPE-9 in this project.');
		expect(badHtml).toContain('value="kept title"');

		const list = await engineer.get(`/p/${team.project.key}/evidence?requirement=${req.id}`, {
			accept: 'text/html'
		});
		expect(await list.text()).toContain('step.csv');
	});

	it('a measured response without units asks for them; with them it is plotted and checked as sampled', async () => {
		const req = await createRequirement(team.project.id);
		await attachSpec(team.project.id, req.id, { type: 'circle', sector: [0, 2] }, [
			{ label: 'nominal', model: { kind: 'tf', num: [1], den: [1, 1] } },
			{ label: 'heavy', model: { kind: 'tf', num: [1.3], den: [1, 1] } }
		]);
		const form = (extra: Record<string, string>) =>
			evidenceForm(
				{ title: unique('fr '), kind: 'frequency-response', requirementIds: String(req.id), ...extra },
				{ name: 'rig.csv', bytes: Buffer.from(CSV_NO_UNITS) }
			);
		const ask = await postForm(engineer, api(), form({}));
		expect(ask.status).toBe(422);
		const body = await ask.json();
		expect(body.error.fields.frequencyUnit).toMatch(/choose one/);
		expect(body.error.needs).toBe('frequencyUnit');
		expect(await testDb()('evidence_links').where({ requirement_id: req.id })).toEqual([]);

		const ok = await postForm(engineer, api(), form({ frequencyUnit: 'rad/s', magnitudeUnit: 'dB' }));
		expect(ok.status).toBe(201);
		const rec = await ok.json();
		expect(rec.measuredPoints).toBe(3);

		const page = await engineer.get(`/p/${team.project.key}/evidence/${rec.id}`, { accept: 'text/html' });
		const html = await page.text();
		expect(page.status).toBe(200);
		// Sector [0, 2]: Re G(jw) = 1/(1 + w^2) > 0 > -1/2 at every measured point, so the sampled check passes.
		expect(html).toContain('data-sampled="pass"');
		expect(html).toContain('sampled — not proved');
		expect(html).not.toMatch(/proved verdict: pass/i);
		// The response is the nominal model exactly: within tolerance; against 1.3 G the relative error is
		// |G - 1.3 G| / |1.3 G| = 0.3 / 1.3 = 23.08 % at every frequency.
		expect(html).toMatch(/nominal<\/td>.*?0\.00 %/s);
		expect(html).toMatch(/heavy<\/td>.*?23\.08 %/s);
		expect(html).toContain('data-agreement="within"');
		expect(html).toContain('data-agreement="outside"');
		expect(html).toContain('class="caution');

		// The tolerance can be widened per requirement by an engineer, and the change is audited.
		const t = await engineer.action(`/p/${team.project.key}/evidence/${rec.id}?/tolerance`, {
			requirementId: String(req.id),
			relativeErrorPct: '35',
			phaseDeg: '5'
		});
		expect(t.type).toBe('success');
		const page2 = await (
			await engineer.get(`/p/${team.project.key}/evidence/${rec.id}`, { accept: 'text/html' })
		).text();
		expect(page2).not.toContain('data-agreement="outside"');
		const ev = await testDb()('audit_events')
			.where({ action: 'requirement.evidence-tolerance', subject_id: String(req.id) })
			.first();
		expect(ev.after).toEqual({ relativeError: 0.35, phaseDeg: 5 });
	});

	it('review by a certifier freezes the evidence and makes the requirement verified by test', async () => {
		const req = await createRequirement(team.project.id, { methods: ['test'] });
		const res = await postForm(
			engineer,
			api(),
			evidenceForm(
				{ title: unique('report '), kind: 'test-report', requirementIds: req.identifier },
				{ name: 'r.txt', bytes: Buffer.from('report\n') }
			)
		);
		const rec = await res.json();
		const state = async () =>
			(await (await engineer.get(`${api()}?requirement=${req.id}`)).json()).requirement.state;
		expect(await state()).toBe('pending');

		const page = `/p/${team.project.key}/evidence/${rec.id}`;
		const missing = await certifier.action(`${page}?/review`, {
			password: team.users.certifier.password,
			decision: 'accepted',
			comment: '',
			revision: '1'
		});
		expect(missing.type).toBe('failure');
		expect((missing.data?.errors as Record<string, string>).comment).toMatch(/Say why/);
		const ok = await certifier.action(`${page}?/review`, {
			password: team.users.certifier.password,
			decision: 'accepted',
			comment: 'Rig 3 configuration as stated.',
			revision: '1'
		});
		expect(ok.type).toBe('success');
		expect(await state()).toBe('verified');
		const body = await (await engineer.get(`${api()}?requirement=${req.id}`)).json();
		expect(body.requirement).toMatchObject({ label: 'Verified by test', evidence: { test: 'accepted' } });

		const row = await testDb()('evidence_reviews as r')
			.join('evidence_files as f', 'f.id', 'r.evidence_file_id')
			.where('f.evidence_id', rec.id)
			.first('r.*');
		expect(row.reviewer_label).toBe(team.users.certifier.email);
		expect(row.meaning).toMatch(/I confirm this evidence shows the requirement is met/);
		expect(row.sha256).toBe(sha256('report\n'));
		const ev = await testDb()('audit_events')
			.where({ action: 'evidence.review', subject_id: String(rec.id) })
			.first();
		expect(ev.after.decision).toBe('accepted');

		const html = await (await engineer.get(page, { accept: 'text/html' })).text();
		expect(html).toContain('frozen');
		expect(html).not.toContain('Upload the new revision');
	});

	it('the integrity check recomputes the SHA-256 from storage and reports a changed object loudly', async () => {
		const req = await createRequirement(team.project.id);
		const bytes = Buffer.from('original content\n');
		const rec = await (
			await postForm(
				engineer,
				api(),
				evidenceForm(
					{ title: unique('int '), kind: 'log', requirementIds: req.identifier },
					{ name: 'i.txt', bytes }
				)
			)
		).json();
		const good = await engineer.request(`/api/v1/evidence/${rec.id}/integrity`, { method: 'POST' });
		expect(good.status).toBe(200);
		expect(await good.json()).toMatchObject({ match: true, expected: sha256(bytes), actual: sha256(bytes) });

		// Someone changes the object behind the application's back.
		const file = await testDb()('evidence_files').where({ evidence_id: rec.id }).first();
		await testS3().send(
			new PutObjectCommand({
				Bucket: process.env.S3_BUCKET!,
				Key: file.storage_key,
				Body: 'tampered content\n'
			})
		);
		const bad = await engineer.action(`/p/${team.project.key}/evidence/${rec.id}?/integrity`, {
			revision: '1'
		});
		expect(bad.type).toBe('success');
		const result = bad.data?.result as { match: boolean; actual: string; message: string };
		expect(result.match).toBe(false);
		expect(result.actual).toBe(sha256('tampered content\n'));
		expect(result.message).toMatch(/^MISMATCH/);
	});
});
