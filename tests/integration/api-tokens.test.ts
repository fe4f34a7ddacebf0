import { afterAll, describe, expect, it } from 'vitest';
import { addMember, closeTestDb, createProject, createUser, testDb } from '../factories';
import { Client, signedIn } from '../helpers/http';

afterAll(closeTestDb);

async function newToken(c: Client, projectKey: string, role: string, label = 'pipeline') {
	const r = await c.action('/account?/createToken', { projectKey, role, label });
	expect(r.type, JSON.stringify(r)).toBe('success');
	return String(r.data?.token);
}

describe('personal API tokens', () => {
	it('are shown once, stored hashed, work in their project only, and stop when revoked', async () => {
		const u = await createUser();
		const p = await createProject();
		const other = await createProject();
		await addMember(u.id, p.id, 'analyst');
		await addMember(u.id, other.id, 'analyst');
		const c = await signedIn(u.email, u.password);
		const token = await newToken(c, p.key, 'analyst');
		expect(token).toMatch(/^lw_[A-Za-z0-9_-]{40,}$/);
		const stored = await testDb()('api_tokens').where({ user_id: u.id }).first();
		expect(stored.token_hash).toMatch(/^[0-9a-f]{64}$/);
		expect(JSON.stringify(stored)).not.toContain(token.slice(3));

		const api = new Client();
		const auth = { authorization: `Bearer ${token}`, accept: 'application/json' };
		const ok = await api.get(`/api/v1/projects/${p.key}`, auth);
		expect(ok.status).toBe(200);
		expect((await ok.json()).role).toBe('analyst');
		// Scoped: another project of the same user is refused.
		const cross = await api.get(`/api/v1/projects/${other.key}`, auth);
		expect(cross.status).toBe(403);
		expect((await cross.json()).error.message).toMatch(/scoped to another project/);
		// A token is not a session for pages or admin.
		expect((await api.get('/account', { authorization: `Bearer ${token}` })).status).toBe(303);

		const r = await c.action('/account?/revokeToken', { id: String(stored.id) });
		expect(r.type).toBe('success');
		expect((await api.get(`/api/v1/projects/${p.key}`, auth)).status).toBe(401);
	});

	it('cannot carry more than the owner’s role, and stop at once when the owner is disabled or leaves', async () => {
		const u = await createUser();
		const p = await createProject();
		await addMember(u.id, p.id, 'viewer');
		const c = await signedIn(u.email, u.password);
		const refused = await c.action('/account?/createToken', {
			projectKey: p.key,
			role: 'engineer',
			label: 'x'
		});
		expect(refused.status).toBe(403);
		const rows = await testDb()('api_tokens')
			.where({ user_id: u.id })
			.count<{ count: string }[]>('* as count');
		expect(Number(rows[0].count)).toBe(0);
		const token = await newToken(c, p.key, 'viewer');
		const auth = { authorization: `Bearer ${token}`, accept: 'application/json' };
		const api = new Client();
		expect((await api.get(`/api/v1/projects/${p.key}`, auth)).status).toBe(200);
		await testDb()('memberships').where({ user_id: u.id, project_id: p.id }).delete();
		expect((await api.get(`/api/v1/projects/${p.key}`, auth)).status).toBe(403);
		await addMember(u.id, p.id, 'viewer');
		expect((await api.get(`/api/v1/projects/${p.key}`, auth)).status).toBe(200);
		await testDb()('users').where({ id: u.id }).update({ disabled: true });
		expect((await api.get(`/api/v1/projects/${p.key}`, auth)).status).toBe(401);
	});

	it('their use is audited: the first request of each window, with the request and the token as actor', async () => {
		const u = await createUser();
		const p = await createProject();
		await addMember(u.id, p.id, 'viewer');
		const c = await signedIn(u.email, u.password);
		const token = await newToken(c, p.key, 'viewer', 'audit-use');
		const stored = await testDb()('api_tokens').where({ user_id: u.id, label: 'audit-use' }).first();
		const api = new Client();
		const auth = { authorization: `Bearer ${token}`, accept: 'application/json' };
		const uses = () =>
			testDb()('audit_events')
				.where({ action: 'api-token.use', subject_id: String(stored.id) })
				.orderBy('seq');
		const first = await api.get(`/api/v1/projects/${p.key}`, auth);
		expect(first.status).toBe(200);
		await api.get(`/api/v1/projects/${p.key}/requirements`, auth);
		let events = await uses();
		expect(events).toHaveLength(1);
		expect(events[0]).toMatchObject({
			actor_user_id: u.id,
			actor_token_id: stored.id,
			project_id: p.id,
			request_id: first.headers.get('x-request-id')
		});
		expect(events[0].after).toEqual({ method: 'GET', path: `/api/v1/projects/${p.key}` });
		// Once the window has passed (moved back here, not waited for) the next use is recorded again.
		await testDb()('api_tokens')
			.where({ id: stored.id })
			.update({ use_audited_at: testDb().raw(`now() - interval '16 minutes'`) });
		await api.get(`/api/v1/projects/${p.key}/requirements`, auth);
		events = await uses();
		expect(events).toHaveLength(2);
		expect(events[1].after).toEqual({ method: 'GET', path: `/api/v1/projects/${p.key}/requirements` });
	});

	it('an unknown or malformed bearer token is 401 JSON', async () => {
		const p = await createProject();
		for (const t of ['lw_nope', '', 'x'.repeat(500)]) {
			const res = await new Client().get(`/api/v1/projects/${p.key}`, {
				authorization: `Bearer ${t}`,
				accept: 'application/json'
			});
			expect(res.status).toBe(401);
			expect(res.headers.get('content-type')).toMatch(/json/);
			expect((await res.json()).error.status).toBe(401);
		}
	});
});
