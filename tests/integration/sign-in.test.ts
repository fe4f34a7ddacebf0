import { encode } from '@auth/core/jwt';
import { afterAll, describe, expect, it } from 'vitest';
import { addMember, closeTestDb, createProject, createUser, testDb, unique } from '../factories';
import { Client, signedIn } from '../helpers/http';
import { expectMailTo, linkIn } from '../helpers/mail';

afterAll(closeTestDb);

const REFUSED = 'That e-mail address and password do not match an active account.';

describe('sign-in', () => {
	it('signs in with the right password and reaches a project page', async () => {
		const u = await createUser();
		const p = await createProject();
		await addMember(u.id, p.id, 'viewer');
		const c = new Client();
		const res = await c.signIn(u.email, u.password);
		expect([302, 303]).toContain(res.status);
		expect(c.signedIn).toBe(true);
		const page = await c.get(`/p/${p.key}`);
		expect(page.status).toBe(200);
		expect(await page.text()).toContain(p.name);
	});

	it('accepts the address in any letter case', async () => {
		const u = await createUser();
		const c = new Client();
		await c.signIn(u.email.toUpperCase(), u.password);
		expect(c.signedIn).toBe(true);
	});

	it('gives the same answer for a wrong password and an unknown address', async () => {
		const u = await createUser();
		const wrong = await new Client().action('/signin', { email: u.email, password: 'wrong-password' });
		const unknown = await new Client().action('/signin', {
			email: `${unique('nobody')}@example.test`,
			password: 'whatever-it-is'
		});
		expect(wrong.type).toBe('failure');
		expect(unknown.type).toBe('failure');
		expect(wrong.status).toBe(unknown.status);
		expect(wrong.data?.message).toBe(REFUSED);
		expect(unknown.data?.message).toBe(REFUSED);
	});

	it('answers 429 after repeated failures for one address, even with the right password', async () => {
		const u = await createUser();
		const statuses: number[] = [];
		for (let i = 0; i < 5; i++) {
			const r = await new Client().action('/signin', { email: u.email, password: `wrong-${i}-password` });
			statuses.push(r.status ?? 0);
		}
		expect(statuses).toEqual([400, 400, 400, 400, 400]);
		const locked = await new Client().action('/signin', { email: u.email, password: u.password });
		expect(locked.status).toBe(429);
		expect(String(locked.data?.message)).toMatch(/Too many failed sign-ins/);
		// Without JavaScript the page itself answers 429.
		const plain = await new Client().postForm('/signin', { email: u.email, password: u.password });
		expect(plain.status).toBe(429);
		// Another address is not affected.
		const other = await createUser();
		const c = new Client();
		await c.signIn(other.email, other.password);
		expect(c.signedIn).toBe(true);
	});

	it('refuses a disabled account, and disabling ends an open session at once', async () => {
		const u = await createUser();
		const c = await signedIn(u.email, u.password);
		expect((await c.get('/account')).status).toBe(200);
		await testDb()('users').where({ id: u.id }).update({ disabled: true });
		const after = await c.get('/account');
		expect(after.status).toBe(303);
		expect(after.headers.get('location')).toMatch(/^\/signin/);
		const again = await new Client().action('/signin', { email: u.email, password: u.password });
		expect(again.data?.message).toBe(REFUSED);
	});

	it('gives field errors for empty, too long and malformed input, and signs nobody in', async () => {
		const cases: [Record<string, string>, string][] = [
			[{ email: '', password: '' }, 'email'],
			[{ email: 'not-an-address', password: 'x' }, 'email'],
			[{ email: `${'a'.repeat(250)}@example.test`, password: 'x' }, 'email'],
			[{ email: 'someone@example.test', password: '' }, 'password'],
			[{ email: 'someone@example.test', password: 'p'.repeat(201) }, 'password']
		];
		for (const [fields, field] of cases) {
			const c = new Client();
			const r = await c.action('/signin', fields);
			expect(r.type, JSON.stringify(fields)).toBe('failure');
			expect(r.status).toBe(400);
			expect((r.data?.errors as Record<string, string>)[field], `error on ${field}`).toBeTruthy();
			expect(c.signedIn).toBe(false);
		}
	});

	it('signs out', async () => {
		const u = await createUser();
		const c = await signedIn(u.email, u.password);
		await c.postForm('/signout', {});
		expect((await c.get('/account')).status).toBe(303);
	});

	it('a session cookie that was altered, or sealed with another secret, is no session', async () => {
		const u = await createUser();
		const c = await signedIn(u.email, u.password);
		const name = [...c.cookies.keys()].find((k) => k.endsWith('authjs.session-token'))!;
		const good = c.cookies.get(name)!;
		expect((await c.get('/account')).status).toBe(200);
		// One character of the ciphertext changed: the authentication tag no longer matches.
		const i = Math.floor(good.length / 2);
		c.cookies.set(name, good.slice(0, i) + (good[i] === 'A' ? 'B' : 'A') + good.slice(i + 1));
		expect((await c.get('/account')).status).toBe(303);
		// A well-formed token for the same user id, sealed with a secret the app does not have.
		const forged = await encode({ token: { sub: String(u.id) }, secret: 'not-the-app-secret', salt: name });
		c.cookies.set(name, forged);
		expect((await c.get('/account')).status).toBe(303);
		// The genuine cookie still works (a refused one is not remembered as valid, nor the reverse).
		c.cookies.set(name, good);
		expect((await c.get('/account')).status).toBe(200);
	});
});

describe('invitation and password reset by mail', () => {
	it('invitation -> mail in the stand-in -> set password -> sign in -> member of the project', async () => {
		const admin = await createUser({ admin: true });
		const p = await createProject();
		const c = await signedIn(admin.email, admin.password);
		const email = `${unique('new')}@example.test`;
		const r = await c.action(`/admin/projects/${p.key}?/invite`, { email, role: 'analyst' });
		expect(r.type).toBe('success');
		const mail = await expectMailTo(email, { subject: /invited/ });
		const path = linkIn(mail, '/invitation/');
		const guest = new Client();
		expect((await guest.get(path)).status).toBe(200);
		// Mismatched passwords: a field error, nothing created.
		const bad = await guest.action(path, {
			displayName: 'New Person',
			password: 'long-enough-pw',
			confirm: 'different-pw'
		});
		expect(bad.status).toBe(400);
		expect((bad.data?.errors as Record<string, string>).confirm).toBeTruthy();
		expect(await testDb()('users').where({ email }).first()).toBeUndefined();
		const ok = await guest.action(path, {
			displayName: 'New Person',
			password: 'long-enough-pw',
			confirm: 'long-enough-pw'
		});
		expect(ok.type).toBe('redirect');
		// The link works once.
		expect((await new Client().get(path)).status).toBe(404);
		const member = await signedIn(email, 'long-enough-pw');
		const page = await member.get(`/p/${p.key}`);
		expect(page.status).toBe(200);
		const row = await testDb()('memberships as m')
			.join('users as u', 'u.id', 'm.user_id')
			.where('u.email', email)
			.first('m.role');
		expect(row.role).toBe('analyst');
	});

	it('invite form: malformed address and unknown role give field errors and send nothing', async () => {
		const admin = await createUser({ admin: true });
		const p = await createProject();
		const c = await signedIn(admin.email, admin.password);
		const before = await testDb()('invitations').count<{ count: number }[]>('* as count');
		const r = await c.action(`/admin/projects/${p.key}?/invite`, { email: 'no-at-sign', role: 'pilot' });
		expect(r.status).toBe(400);
		const errors = r.data?.errors as Record<string, string>;
		expect(errors.email).toBeTruthy();
		expect(errors.role).toBeTruthy();
		const after = await testDb()('invitations').count<{ count: number }[]>('* as count');
		expect(after[0].count).toBe(before[0].count);
	});

	it('password reset: the same answer for unknown addresses; the link sets a new password once', async () => {
		const u = await createUser();
		const anon = new Client();
		const unknown = await anon.action('/forgot', { email: `${unique('ghost')}@example.test` });
		const known = await anon.action('/forgot', { email: u.email });
		expect(unknown.type).toBe('success');
		expect(known.type).toBe('success');
		expect(unknown.data?.sent).toBe(true);
		expect(known.data?.sent).toBe(true);
		const mail = await expectMailTo(u.email, { subject: /Reset/ });
		const path = linkIn(mail, '/reset/');
		const short = await anon.action(path, { password: 'short', confirm: 'short' });
		expect(short.status).toBe(400);
		const done = await anon.action(path, {
			password: 'a-brand-new-password',
			confirm: 'a-brand-new-password'
		});
		expect(done.type).toBe('redirect');
		expect((await new Client().get(path)).status).toBe(404);
		const old = await new Client().action('/signin', { email: u.email, password: u.password });
		expect(old.data?.message).toBe(REFUSED);
		const c = await signedIn(u.email, 'a-brand-new-password');
		expect(c.signedIn).toBe(true);
	});
});

describe('administration', () => {
	it('creates a project, changes a role, removes a member; bad project keys get field errors', async () => {
		const admin = await createUser({ admin: true });
		const c = await signedIn(admin.email, admin.password);
		const key =
			'Z' +
			Math.random()
				.toString(36)
				.slice(2, 6)
				.toUpperCase()
				.replace(/[^A-Z0-9]/g, 'Q');
		expect((await c.action('/admin?/createProject', { key, name: 'Zed', description: '' })).type).toBe(
			'success'
		);
		const dup = await c.action('/admin?/createProject', { key, name: 'Again', description: '' });
		expect(dup.status).toBe(409);
		for (const bad of ['', '1AB', 'a', 'TOO-LONG-KEY!', 'X'.repeat(11)]) {
			const r = await c.action('/admin?/createProject', { key: bad, name: 'n' });
			expect(r.status, bad).toBe(400);
			expect((r.data?.errors as Record<string, string>).key).toBeTruthy();
		}
		const longName = await c.action('/admin?/createProject', { key: key + '2', name: 'n'.repeat(121) });
		expect((longName.data?.errors as Record<string, string>).name).toBeTruthy();

		const p = await testDb()('projects').where({ key }).first();
		const u = await createUser();
		await addMember(u.id, p.id, 'viewer');
		expect(
			(await c.action(`/admin/projects/${key}?/setRole`, { userId: String(u.id), role: 'certifier' })).type
		).toBe('success');
		expect((await testDb()('memberships').where({ user_id: u.id, project_id: p.id }).first()).role).toBe(
			'certifier'
		);
		const member = await signedIn(u.email, u.password);
		expect((await member.get(`/p/${key}`)).status).toBe(200);
		expect((await c.action(`/admin/projects/${key}?/remove`, { userId: String(u.id) })).type).toBe('success');
		// Removal takes effect on the member's next request, without signing out.
		expect((await member.get(`/p/${key}`)).status).toBe(403);
	});

	it('an admin cannot disable their own account', async () => {
		const admin = await createUser({ admin: true });
		const c = await signedIn(admin.email, admin.password);
		const r = await c.action('/admin?/setDisabled', { userId: String(admin.id), disabled: 'true' });
		expect(r.status).toBe(400);
		expect((await testDb()('users').where({ id: admin.id }).first()).disabled).toBe(false);
	});
});
