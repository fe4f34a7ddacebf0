import { afterAll, describe, expect, it } from 'vitest';
import { verifyChain } from '../../src/lib/server/audit';
import { closeTestDb, createUser, testDb } from '../factories';
import { Client, signedIn } from '../helpers/http';

afterAll(closeTestDb);

describe('audit trail', () => {
	it('records sign-ins, failed sign-ins and admin changes with who and what', async () => {
		const u = await createUser();
		await new Client().action('/signin', { email: u.email, password: 'wrong-password-here' });
		await signedIn(u.email, u.password);
		const events = await testDb()('audit_events')
			.where({ subject_type: 'user', subject_id: String(u.id) })
			.orderBy('seq');
		expect(events.map((e) => e.action)).toEqual(['auth.sign-in-failed', 'auth.sign-in']);
		expect(events[1].actor_user_id).toBe(u.id);

		const admin = await createUser({ admin: true });
		const c = await signedIn(admin.email, admin.password);
		await c.action('/admin?/setDisabled', { userId: String(u.id), disabled: 'true' });
		const disable = await testDb()('audit_events')
			.where({ action: 'user.disable', subject_id: String(u.id) })
			.first();
		expect(disable.actor_user_id).toBe(admin.id);
		expect(disable.request_id).toMatch(/^[0-9a-f-]{36}$/);
	});

	it('the database refuses UPDATE, DELETE and TRUNCATE of events', async () => {
		const db = testDb();
		const last = await db('audit_events').orderBy('seq', 'desc').first();
		expect(last).toBeTruthy();
		await expect(db('audit_events').where({ seq: last.seq }).update({ action: 'x' })).rejects.toThrow(
			/immutable/
		);
		await expect(db('audit_events').where({ seq: last.seq }).delete()).rejects.toThrow(/immutable/);
		await expect(db.raw('truncate audit_events')).rejects.toThrow(/immutable|cannot truncate/);
	});

	it('the chain verifies, and a tampered entry is named as the first broken link', async () => {
		expect(await verifyChain(testDb())).toMatchObject({ ok: true });
		// Tamper inside a transaction that is rolled back (a superuser can disable the trigger;
		// the chain still exposes the change).
		await testDb()
			.transaction(async (trx) => {
				const target = await trx('audit_events').orderBy('seq', 'desc').offset(1).first();
				await trx.raw('alter table audit_events disable trigger audit_events_append_only');
				await trx('audit_events').where({ seq: target.seq }).update({ actor_label: 'someone else' });
				const r = await verifyChain(trx);
				expect(r).toMatchObject({ ok: false, brokenAt: target.seq });
				throw new Error('rollback');
			})
			.catch((e) => expect(e.message).toBe('rollback'));
		expect(await verifyChain(testDb())).toMatchObject({ ok: true });
	});

	it('the admin page verifies the chain', async () => {
		const admin = await createUser({ admin: true });
		const c = await signedIn(admin.email, admin.password);
		const r = await c.action('/admin/audit?/verify', {});
		expect(r.type).toBe('success');
		expect((r.data?.result as { ok: boolean }).ok).toBe(true);
	});
});
