import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { FAKE_OIDC_PASSWORD, FAKE_OIDC_USERS } from '../../../fakes/oidc-users';
import {
	addMember,
	closeTestDb,
	createEvidence,
	createRequirement,
	createTeam,
	testDb
} from '../../factories';
import { Client, signedIn } from '../../helpers/http';
import { followThroughProvider, issuer, signInThroughProvider } from '../../helpers/oidc';

// Signing by an account that signs in only through the identity provider (no Loopwarden password):
// the decision form sends the reviewer to the stand-in (fakes/oidc.ts) with prompt=login and
// max_age=0, the answer comes back to /signin/sign/callback over real HTTP redirects, and the app
// records the signature only when the ID token's auth_time is after the request and recent, its nonce
// and state name this pending signature, and its subject is the signer. Refused: a login the provider
// did not repeat (an old auth_time), a replayed answer, a login as another person.

afterAll(closeTestDb);
const person = (email: string) => FAKE_OIDC_USERS.find((u) => u.email.startsWith(email))!;
const mirela = person('mirela.stanek');
const hanne = person('hanne.quist');

let team: Awaited<ReturnType<typeof createTeam>>;
let eng: Client;
let app: Client;
let idp: Client;
let reviewerId: number;
let signedInAt: number;

const page = (id: number) => `/p/${team.project.key}/requirements/${id}`;

/** A requirement by the engineer, in review with Mirela named (level C: no independence rule). */
async function inReview(title: string, reviewer = reviewerId): Promise<number> {
	const res = await eng.json(`/api/v1/projects/${team.project.key}/requirements`, 'POST', {
		title,
		statement: 'The roll loop gain schedule shall be inspected against the sector [0, 2].',
		level: 'loop',
		assuranceLevel: 'C',
		methods: ['inspection']
	});
	expect(res.status, await res.clone().text()).toBe(201);
	const id = (await res.json()).requirement.id as number;
	const r = await eng.action(`${page(id)}?/requestReview`, { revision: '1', reviewers: String(reviewer) });
	expect(r.type, JSON.stringify(r)).toBe('success');
	return id;
}

/** Mirela presses "Sign the decision": the app answers with the provider's URL for this signature. */
async function startDecision(id: number, decision: 'approve' | 'return', comment = ''): Promise<URL> {
	const r = await app.action(`${page(id)}?/decide`, { revision: '1', decision, comment });
	expect(r.type, JSON.stringify(r)).toBe('success');
	expect(r.data?.next, JSON.stringify(r.data)).toBeTypeOf('string');
	return new URL(r.data!.next as string);
}

/** Go to the provider with `url`, log in as `email` when asked, and stop where it sends back to the app. */
async function atProvider(url: URL, email: string, at = idp) {
	const first = await at.get(url.pathname + url.search, { accept: 'text/html' });
	return followThroughProvider(app, at, first, email, FAKE_OIDC_PASSWORD);
}

const signaturesOf = (id: number) =>
	testDb()('signatures').where({ target_type: 'requirement', target_id: id }).orderBy('id');
const reviewState = async (id: number) =>
	(await testDb()('requirements').where({ id }).first('review_state')).review_state as string;

beforeAll(async () => {
	team = await createTeam();
	eng = await signedIn(team.users.engineer.email, team.users.engineer.password);
	({ app, idp } = await signInThroughProvider(mirela.email, FAKE_OIDC_PASSWORD));
	signedInAt = Date.now();
	const user = await testDb()('users').where({ email: mirela.email }).first();
	expect(user.password_hash).toBeNull();
	reviewerId = Number(user.id);
	await addMember(reviewerId, team.project.id, 'certifier');
});

describe('signing at the identity provider', () => {
	it('refuses an old auth_time: a provider that did not ask for the credentials again', async () => {
		const id = await inReview('Stale login');
		// The rule: auth_time not before the signing request (30 s of clock difference allowed).
		await new Promise((r) => setTimeout(r, Math.max(0, signedInAt + 31_000 - Date.now())));
		const url = await startDecision(id, 'approve');
		// A provider that ignores prompt=login and max_age=0 answers from its session, whose login is old.
		url.searchParams.delete('prompt');
		url.searchParams.delete('max_age');
		const run = await atProvider(url, mirela.email);
		expect(run.loginForms).toBe(0);
		expect(run.landed).toMatch(/^\/signin\/sign\/callback\?/);
		const res = await app.get(run.landed, { accept: 'text/html' });
		expect(res.status).toBe(200);
		const html = await res.text();
		expect(html).toContain('Not signed');
		expect(html).toContain('its sign-in is older than this signature request, so nothing was signed');
		expect(await signaturesOf(id)).toEqual([]);
		expect(await reviewState(id)).toBe('in-review');
		const refused = await testDb()('audit_events')
			.where({ action: 'signature.refused', subject_type: 'requirement', subject_id: String(id) })
			.first();
		expect(refused.after.reason).toBe('identity provider: login-before-request');
	}, 90_000);

	it('records the approval after a fresh login, with the method in the signature and the audit trail', async () => {
		const id = await inReview('Fresh login');
		const url = await startDecision(id, 'approve', 'Checked against the gain schedule.');
		expect(url.origin).toBe(new URL(issuer()).origin);
		expect(url.searchParams.get('prompt')).toBe('login');
		expect(url.searchParams.get('max_age')).toBe('0');
		expect(url.searchParams.get('redirect_uri')).toBe(`${app.base}/signin/sign/callback`);
		expect(url.searchParams.get('code_challenge_method')).toBe('S256');
		expect(url.searchParams.get('nonce')).toMatch(/^[A-Za-z0-9_-]{43}$/);
		// Nothing is signed before the provider answers.
		expect(await signaturesOf(id)).toEqual([]);
		const run = await atProvider(url, mirela.email);
		// prompt=login: the provider asks again although its session is alive.
		expect(run.loginForms).toBe(1);
		const res = await app.get(run.landed, { accept: 'text/html' });
		expect(res.status).toBe(303);
		expect(res.headers.get('location')).toBe(page(id));
		const [sig] = await signaturesOf(id);
		expect(sig).toMatchObject({
			act: 'requirement.approve',
			target_revision: 1,
			signer_email: mirela.email,
			confirmed_by: 'identity provider re-authentication',
			comment: 'Checked against the gain schedule.',
			meaning: 'I approve this requirement revision as correct and verifiable.'
		});
		expect(await reviewState(id)).toBe('approved');
		const events = await testDb()('audit_events')
			.where({ subject_type: 'requirement', subject_id: String(id) })
			.whereIn('action', ['signature.reauthenticated', 'signature.requirement.approve'])
			.orderBy('seq');
		expect(events.map((e) => e.action)).toEqual([
			'signature.reauthenticated',
			'signature.requirement.approve'
		]);
		expect(events[0].after).toMatchObject({ act: 'requirement.approve', revision: 1, subject: mirela.sub });
		expect(Date.now() / 1000 - Date.parse(events[0].after.authTime) / 1000).toBeLessThan(60);
		expect(events[1].after.confirmedBy).toBe('identity provider re-authentication');
		const html = await (await app.get(page(id), { accept: 'text/html' })).text();
		expect(html).toContain('Signer confirmed by identity provider re-authentication');

		// The same answer again (a replayed state and code): refused, nothing more is signed.
		const again = await app.get(run.landed, { accept: 'text/html' });
		expect(again.status).toBe(200);
		expect(await again.text()).toContain('was used already');
		expect(await signaturesOf(id)).toHaveLength(1);
		expect(
			await testDb()('audit_events')
				.where({ action: 'signature.refused', subject_id: String(id) })
				.first()
		).toBeUndefined();
	}, 60_000);

	it('refuses a login at the provider as another person, and a state no signature is waiting for', async () => {
		const id = await inReview('Another person');
		// Another person logs in where the provider's answer is taken (a browser without Mirela's session).
		const run = await atProvider(await startDecision(id, 'approve'), hanne.email, new Client(issuer()));
		expect(run.loginForms).toBe(1);
		const html = await (await app.get(run.landed, { accept: 'text/html' })).text();
		expect(html).toContain('as another person than the signer');
		expect(await signaturesOf(id)).toEqual([]);
		const unknown = await app.get('/signin/sign/callback?state=made-up&code=x', { accept: 'text/html' });
		expect(await unknown.text()).toContain('belongs to no signature that is waiting');
	}, 60_000);

	it('accepts evidence after a fresh login at the provider', async () => {
		const req = await createRequirement(team.project.id, { title: 'Roll rig check', methods: ['test'] });
		const e = await createEvidence(team.project.id, [req.id], { title: 'Roll rig sweep' });
		const path = `/p/${team.project.key}/evidence/${e.id}`;
		const r = await app.action(`${path}?/review`, {
			decision: 'accepted',
			comment: 'The sweep matches the rig configuration.',
			revision: '1'
		});
		expect(r.type, JSON.stringify(r)).toBe('success');
		const url = new URL(r.data!.next as string);
		expect(url.searchParams.get('prompt')).toBe('login');
		const run = await atProvider(url, mirela.email);
		expect(run.loginForms).toBe(1);
		const res = await app.get(run.landed, { accept: 'text/html' });
		expect(res.status, (await res.clone().text()).slice(0, 300)).toBe(303);
		expect(res.headers.get('location')).toBe(path);
		const sig = await testDb()('signatures').where({ target_type: 'evidence', target_id: e.id }).first();
		expect(sig).toMatchObject({
			act: 'evidence.accept',
			target_revision: 1,
			signer_email: mirela.email,
			confirmed_by: 'identity provider re-authentication'
		});
		const review = await testDb()('evidence_reviews').where({ signature_id: sig.id }).first();
		expect(review.decision).toBe('accepted');
	}, 60_000);

	it('defers a finding after a fresh login at the provider', async () => {
		const req = await createRequirement(team.project.id, { title: 'Pitch rig check', methods: ['test'] });
		const raised = await eng.action(`/p/${team.project.key}/findings?/raise`, {
			requirementId: String(req.id),
			title: 'Rig gain drift',
			description: 'seen on the rig'
		});
		expect(raised.type, JSON.stringify(raised)).toBe('redirect');
		const f = await testDb()('findings').where({ requirement_id: req.id }).first();
		const path = `/p/${team.project.key}/findings/${f.id}`;
		const r = await app.action(`${path}?/decide`, {
			version: String(f.version),
			state: 'deferred',
			justification: 'The rig is rebuilt next quarter.',
			targetDate: '2027-06-30'
		});
		expect(r.type, JSON.stringify(r)).toBe('success');
		const run = await atProvider(new URL(r.data!.next as string), mirela.email);
		expect(run.loginForms).toBe(1);
		const res = await app.get(run.landed, { accept: 'text/html' });
		expect(res.status, (await res.clone().text()).slice(0, 300)).toBe(303);
		expect(res.headers.get('location')).toBe(path);
		const sig = await testDb()('signatures').where({ target_type: 'finding', target_id: f.id }).first();
		expect(sig).toMatchObject({
			act: 'finding.defer',
			target_revision: f.version,
			confirmed_by: 'identity provider re-authentication'
		});
		expect((await testDb()('findings').where({ id: f.id }).first()).state).toBe('deferred');
	}, 60_000);

	it('a password account keeps re-entering its password', async () => {
		const id = await inReview('Password reviewer', team.users.certifier.id);
		const cert = await signedIn(team.users.certifier.email, team.users.certifier.password);
		const r = await cert.action(`${page(id)}?/decide`, { revision: '1', decision: 'approve', comment: '' });
		expect(r.status).toBe(400);
		expect((r.data!.errors as Record<string, string>).password).toBe('Enter your password to sign.');
		expect(r.data!.next).toBeUndefined();
		expect(await signaturesOf(id)).toEqual([]);
		const ok = await cert.action(`${page(id)}?/decide`, {
			revision: '1',
			decision: 'approve',
			comment: '',
			password: team.users.certifier.password
		});
		expect(ok.type, JSON.stringify(ok)).toBe('success');
		expect((await signaturesOf(id))[0].confirmed_by).toBe('password');
	});
});
