import { encode } from '@auth/core/jwt';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { FAKE_OIDC_PASSWORD, FAKE_OIDC_USERS } from '../../../fakes/oidc-users';
import { checkIdentityProvider } from '../../../src/lib/server/identity/sso-health';
import { addMember, closeTestDb, createProject, createTeam, testDb } from '../../factories';
import { Client, signedIn } from '../../helpers/http';
import { freshProviderLogin, issuer, signInThroughProvider } from '../../helpers/oidc';

// Single sign-on against the identity-provider stand-in (fakes/oidc.ts), over real HTTP redirects:
// the group mapping's admin actions, just-in-time accounts, roles from groups at each sign-in, the
// fresh login's auth_time check and the health check. Each test uses its own person of the stand-in
// (the accounts they get live for the whole run); the e2e test uses Rhea Ostrander.

afterAll(closeTestDb);
const person = (email: string) => FAKE_OIDC_USERS.find((u) => u.email.startsWith(email))!;
const events = (action: string, subjectId: string | number) =>
	testDb()('audit_events')
		.where({ action, subject_id: String(subjectId) })
		.orderBy('seq');

let team: Awaited<ReturnType<typeof createTeam>>;
let admin: Client;
beforeAll(async () => {
	team = await createTeam();
	admin = await signedIn(team.users.admin.email, team.users.admin.password);
});

const mappings = (projectId: number) =>
	testDb()('sso_group_roles')
		.where({ project_id: projectId })
		.orderBy('group_name')
		.select('id', 'group_name', 'role');

describe('the group-to-role mapping (admin actions)', () => {
	it('adds, changes and removes a mapping, each audited', async () => {
		const p = await createProject();
		const path = `/admin/projects/${p.key}/groups`;
		let r = await admin.action(`${path}?/add`, { group: ' flight-controls ', role: 'analyst' });
		expect(r.type, JSON.stringify(r)).toBe('success');
		const [row] = await mappings(p.id);
		expect(row).toMatchObject({ group_name: 'flight-controls', role: 'analyst' });
		r = await admin.action(`${path}?/setRole`, { id: String(row.id), role: 'certifier' });
		expect(r.type).toBe('success');
		expect((await mappings(p.id))[0].role).toBe('certifier');
		const page = await admin.get(path, { accept: 'text/html' });
		expect(await page.text()).toContain('flight-controls');
		r = await admin.action(`${path}?/remove`, { id: String(row.id) });
		expect(r.type).toBe('success');
		expect(await mappings(p.id)).toEqual([]);
		for (const action of ['sso.group-role-add', 'sso.group-role-change', 'sso.group-role-remove'])
			expect((await events(action, row.id)).length, action).toBe(1);
		const change = (await events('sso.group-role-change', row.id))[0];
		expect(change.before).toEqual({ group: 'flight-controls', role: 'analyst' });
		expect(change.after).toEqual({ group: 'flight-controls', role: 'certifier' });
	});

	it('refuses bad input with the field and the reason, and unknown fields, changing nothing', async () => {
		const p = await createProject();
		const path = `/admin/projects/${p.key}/groups`;
		let r = await admin.action(`${path}?/add`, { group: 'g1', role: 'engineer', priority: '1' });
		expect(r.type).toBe('failure');
		expect(r.status).toBe(400);
		expect((r.data!.errors as Record<string, string>)._).toBe('Unknown field: priority.');
		r = await admin.action(`${path}?/add`, { group: '', role: 'boss' });
		expect(r.status).toBe(400);
		expect(r.data!.errors).toMatchObject({
			group: 'Enter the group as the identity provider names it.',
			role: 'Choose one of engineer, analyst, certifier, viewer.'
		});
		r = await admin.action(`${path}?/add`, { group: 'a\u0001b', role: 'viewer' });
		expect((r.data!.errors as Record<string, string>).group).toMatch(/control characters/);
		r = await admin.action(`${path}?/add`, { group: 'x'.repeat(201), role: 'viewer' });
		expect((r.data!.errors as Record<string, string>).group).toMatch(/at most 200/);
		expect(await mappings(p.id)).toEqual([]);
		// A duplicate is a 409 naming the group; a mapping of another project is not found here.
		expect((await admin.action(`${path}?/add`, { group: 'g1', role: 'viewer' })).type).toBe('success');
		r = await admin.action(`${path}?/add`, { group: 'g1', role: 'engineer' });
		expect(r.status).toBe(409);
		expect((r.data!.errors as Record<string, string>).group).toBe('Mapped already.');
		const other = await createProject();
		const [mine] = await mappings(p.id);
		r = await admin.action(`/admin/projects/${other.key}/groups?/remove`, { id: String(mine.id) });
		expect(r.status).toBe(404);
		r = await admin.action(`${path}?/setRole`, { id: String(mine.id), role: 'engineer', group: 'g2' });
		expect(r.status).toBe(400);
		expect(await mappings(p.id)).toEqual([{ id: mine.id, group_name: 'g1', role: 'viewer' }]);
	});

	it('is for site administrators only', async () => {
		const viewer = await signedIn(team.users.viewer.email, team.users.viewer.password);
		const r = await viewer.action(`/admin/projects/${team.project.key}/groups?/add`, {
			group: 'g',
			role: 'viewer'
		});
		expect(r.httpStatus).toBe(403);
		expect(await mappings(team.project.id)).toEqual([]);
	});
});

describe('sign-in through the identity provider', () => {
	it('creates an account just in time, without a password, audited, once', async () => {
		const pavel = person('pavel.ruud');
		expect(await testDb()('users').where({ email: pavel.email }).first()).toBeUndefined();
		const { app, run } = await signInThroughProvider(pavel.email, FAKE_OIDC_PASSWORD, {
			redirectTo: '/account'
		});
		expect(run.landed).toBe('/account');
		expect(run.loginForms).toBe(1);
		expect(app.signedIn).toBe(true);
		// The authorization request: code flow with PKCE, state and nonce, and the groups scope.
		expect(run.authorize.searchParams.get('response_type')).toBe('code');
		expect(run.authorize.searchParams.get('code_challenge_method')).toBe('S256');
		expect(run.authorize.searchParams.get('state')).toBeTruthy();
		expect(run.authorize.searchParams.get('nonce')).toBeTruthy();
		expect(run.authorize.searchParams.get('scope')).toBe('openid email profile groups');
		expect(run.authorize.searchParams.get('redirect_uri')).toBe(`${app.base}/auth/callback/oidc`);

		const user = await testDb()('users').where({ email: pavel.email }).first();
		expect(user).toMatchObject({ display_name: 'Pavel Ruud', password_hash: null, site_admin: false });
		expect(await testDb()('sso_identities').where({ user_id: user.id }).select('issuer', 'subject')).toEqual([
			{ issuer: issuer(), subject: pavel.sub }
		]);
		const created = await events('user.sso-create', user.id);
		expect(created.length).toBe(1);
		expect(created[0].after).toMatchObject({ email: pavel.email, issuer: issuer(), subject: pavel.sub });
		// The account page is the new person's; their only memberships are those their groups map to
		// (none, unless a test running beside this one maps all-staff somewhere).
		expect(await (await app.get('/account', { accept: 'text/html' })).text()).toContain('Pavel Ruud');
		const mapped = await testDb()('sso_group_roles').whereIn('group_name', pavel.groups).pluck('project_id');
		expect((await testDb()('memberships').where({ user_id: user.id }).pluck('project_id')).sort()).toEqual(
			[...new Set(mapped)].sort()
		);

		// Again (a new browser): the same account, no second creation; the sign-in is audited each time.
		const again = await signInThroughProvider(pavel.email, FAKE_OIDC_PASSWORD);
		expect(again.app.signedIn).toBe(true);
		expect((await events('user.sso-create', user.id)).length).toBe(1);
		const signIns = (await events('auth.sign-in', user.id)).map((e) => e.after);
		expect(signIns.length).toBe(2);
		expect(signIns[1]).toMatchObject({ method: 'oidc', groups: ['all-staff'] });
		expect(typeof signIns[1].authTime).toBe('number');
		// No password works for such an account.
		const pw = new Client();
		await pw.signIn(pavel.email, FAKE_OIDC_PASSWORD);
		expect(pw.signedIn).toBe(false);
	});

	it('sets the project role from the groups at each sign-in, and takes it away with the group', async () => {
		const noor = person('noor.blake'); // group vx7-readers
		const p = await createProject();
		const kept = await createProject();
		const path = `/admin/projects/${p.key}/groups`;
		await admin.action(`${path}?/add`, { group: 'vx7-readers', role: 'viewer' });
		await admin.action(`${path}?/add`, { group: 'all-staff', role: 'engineer' });
		let { app } = await signInThroughProvider(noor.email, FAKE_OIDC_PASSWORD);
		const user = await testDb()('users').where({ email: noor.email }).first();
		const membership = () =>
			testDb()('memberships').where({ user_id: user.id, project_id: p.id }).first('role', 'source');
		// Two groups map here: engineer (all-staff) comes before viewer in the stated precedence.
		expect(await membership()).toEqual({ role: 'engineer', source: 'sso' });
		expect((await app.get(`/p/${p.key}`, { accept: 'text/html' })).status).toBe(200);
		// An invitation's membership elsewhere is left alone by the mapping.
		await addMember(user.id, kept.id, 'certifier');

		const rows = await mappings(p.id);
		await admin.action(`${path}?/remove`, { id: String(rows.find((r) => r.group_name === 'all-staff')!.id) });
		await signInThroughProvider(noor.email, FAKE_OIDC_PASSWORD);
		expect(await membership()).toEqual({ role: 'viewer', source: 'sso' });
		const set = await events('membership.sso-set-role', `${p.id}:${user.id}`);
		expect(set.map((e) => [e.before?.role ?? null, e.after.role])).toEqual([
			[null, 'engineer'],
			['engineer', 'viewer']
		]);

		await admin.action(`${path}?/remove`, {
			id: String(rows.find((r) => r.group_name === 'vx7-readers')!.id)
		});
		({ app } = await signInThroughProvider(noor.email, FAKE_OIDC_PASSWORD));
		expect(await membership()).toBeUndefined();
		expect((await events('membership.sso-remove', `${p.id}:${user.id}`)).length).toBe(1);
		expect((await app.get(`/p/${p.key}`, { accept: 'text/html' })).status).toBe(403);
		expect(
			await testDb()('memberships').where({ user_id: user.id, project_id: kept.id }).first('role')
		).toEqual({
			role: 'certifier'
		});
	});

	it('refuses a disabled account after the provider signed the person in', async () => {
		const tomas = person('tomas.kell');
		await signInThroughProvider(tomas.email, FAKE_OIDC_PASSWORD);
		const user = await testDb()('users').where({ email: tomas.email }).first();
		await testDb()('users').where({ id: user.id }).update({ disabled: true });
		try {
			const { app, run } = await signInThroughProvider(tomas.email, FAKE_OIDC_PASSWORD);
			expect(run.refused).toBe('disabled');
			expect(app.signedIn).toBe(false);
			const page = await app.get(run.landed, { accept: 'text/html' });
			expect(await page.text()).toContain('Your Loopwarden account is disabled.');
			const failed = await events('auth.sign-in-failed', user.id);
			expect(failed.at(-1)!.after).toMatchObject({ method: 'oidc', reason: 'account disabled' });
		} finally {
			await testDb()('users').where({ id: user.id }).update({ disabled: false });
		}
	});
});

describe('fresh login at the provider (for signing)', () => {
	const ines = person('ines.varga');
	const done = '/signin/fresh/done?redirectTo=%2Faccount';

	it('asks the provider with prompt=login and max_age=0, logs in again, and the app accepts the auth_time', async () => {
		const { app, idp } = await signInThroughProvider(ines.email, FAKE_OIDC_PASSWORD);
		// The provider still holds a session: an ordinary sign-in would not ask for the password again.
		const plain = await signInThroughProvider(ines.email, FAKE_OIDC_PASSWORD, { idp });
		expect(plain.run.loginForms).toBe(0);
		const run = await freshProviderLogin(app, idp, ines.email, FAKE_OIDC_PASSWORD, '/account');
		expect(run.authorize.searchParams.get('prompt')).toBe('login');
		expect(run.authorize.searchParams.get('max_age')).toBe('0');
		expect(run.loginForms).toBe(1);
		expect(run.landed).toBe('/account');
	});

	async function sessionWith(claims: Record<string, unknown>): Promise<Client> {
		const user = await testDb()('users').where({ email: ines.email }).first();
		const c = new Client();
		const salt = 'authjs.session-token';
		c.cookies.set(
			salt,
			await encode({ token: { sub: String(user.id), ...claims }, secret: process.env.AUTH_SECRET!, salt })
		);
		return c;
	}

	it('refuses a provider login older than allowed, from the future, or without auth_time', async () => {
		const now = Math.floor(Date.now() / 1000);
		const fresh = await sessionWith({ idp: 'oidc', authTime: now - 20 });
		expect((await fresh.get(done, { accept: 'text/html' })).headers.get('location')).toBe('/account');
		for (const [claims, words] of [
			[{ idp: 'oidc', authTime: now - 301 }, 'older than the 300 s allowed'],
			[{ idp: 'oidc', authTime: now + 3600 }, 'in the future'],
			[{ idp: 'oidc', authTime: null }, 'that states its time'],
			[{}, 'did not begin with a sign-in at']
		] as const) {
			const c = await sessionWith(claims);
			const res = await c.get(done, { accept: 'text/html' });
			expect(res.status, JSON.stringify(claims)).toBe(200);
			const html = await res.text();
			expect(html).toContain('The fresh sign-in was not accepted.');
			expect(html).toContain(words);
		}
	});

	it('a password session has no provider login to check', async () => {
		const c = await signedIn(team.users.engineer.email, team.users.engineer.password);
		const res = await c.get(done, { accept: 'text/html' });
		expect(res.status).toBe(200);
		expect(await res.text()).toContain('The fresh sign-in was not accepted.');
	});
});

describe('health', () => {
	it('names the identity provider among its checks', async () => {
		const res = await new Client().get('/api/v1/health');
		const body = await res.json();
		expect(body.checks.identityProvider, JSON.stringify(body.checks)).toBe('ok');
	});

	it('says what is wrong when the discovery document is unreachable or names another issuer', async () => {
		const configured = process.env.OIDC_ISSUER!;
		try {
			process.env.OIDC_ISSUER = 'http://127.0.0.1:9';
			expect(await checkIdentityProvider()).toMatch(
				/^unreachable: http:\/\/127\.0\.0\.1:9\/\.well-known\/openid-configuration/
			);
			// The same provider under another name: its document names 127.0.0.1, not localhost.
			process.env.OIDC_ISSUER = configured.replace('127.0.0.1', 'localhost');
			expect(await checkIdentityProvider()).toBe(
				`wrong issuer: the discovery document names ${configured}, not ${process.env.OIDC_ISSUER}`
			);
		} finally {
			process.env.OIDC_ISSUER = configured;
		}
		expect(await checkIdentityProvider()).toBe('ok');
	});
});
