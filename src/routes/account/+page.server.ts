import { fail } from '@sveltejs/kit';
import { z } from 'zod';
import { actorOf } from '$lib/server/audit';
import { access } from '$lib/server/auth';
import { ServiceError, fieldErrors, type FieldErrors } from '$lib/server/errors';
import { createToken, listTokens, revokeToken } from '$lib/server/identity/api-tokens';
import { ROLES } from '$lib/server/identity/roles';
import { displayName, password, projectKey } from '$lib/server/identity/schema';
import { changePassword, listProjectsFor, renameUser } from '$lib/server/identity/service';
import type { Actions, PageServerLoad } from './$types';

const renameForm = z.object({ displayName });
const tokenForm = z.object({
	projectKey,
	role: z.enum(ROLES, { error: 'Choose a role.' }),
	label: z.string().trim().min(1, 'Name the token (what uses it).').max(80, 'Use at most 80 characters.')
});
const revokeForm = z.object({
	id: z.coerce.number({ error: 'Missing token.' }).int().positive('Missing token.')
});
const passwordForm = z
	.object({
		current: z.string().min(1, 'Enter your current password.').max(200),
		password,
		confirm: z.string()
	})
	.refine((v) => v.password === v.confirm, { path: ['confirm'], message: 'The two passwords differ.' });

export const load = (async (event) => {
	const { user } = await access(event, 'account');
	const projects = await listProjectsFor(user);
	return {
		account: { email: user.email, name: user.display_name, admin: user.site_admin },
		memberships: projects.map((p) => ({ key: p.key, name: p.name, role: p.role })),
		tokens: await listTokens(user),
		roles: [...ROLES]
	};
}) satisfies PageServerLoad;

export const actions = {
	rename: async (event) => {
		const { user } = await access(event, 'account');
		const parsed = renameForm.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return fail(400, { action: 'rename', errors: fieldErrors(parsed.error) });
		await renameUser(actorOf(event.locals), user, parsed.data.displayName);
		return { action: 'rename', ok: true };
	},
	password: async (event) => {
		const { user } = await access(event, 'account');
		const parsed = passwordForm.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return fail(400, { action: 'password', errors: fieldErrors(parsed.error) });
		try {
			await changePassword(actorOf(event.locals), user, parsed.data.current, parsed.data.password);
		} catch (e) {
			if (e instanceof ServiceError) return fail(e.status, { action: 'password', errors: e.fields });
			throw e;
		}
		return { action: 'password', ok: true };
	},
	createToken: async (event) => {
		const { user } = await access(event, 'account');
		const form = Object.fromEntries(await event.request.formData());
		// What was chosen and typed, shown again after a refusal (text fields only).
		const values = Object.fromEntries(
			['projectKey', 'role', 'label'].map((k) => [k, typeof form[k] === 'string' ? form[k] : ''])
		);
		const parsed = tokenForm.safeParse(form);
		if (!parsed.success)
			return fail(400, { action: 'createToken', values, errors: fieldErrors(parsed.error) });
		try {
			const t = await createToken(actorOf(event.locals), user, parsed.data);
			// Shown once: only its hash is stored.
			return { action: 'createToken', token: t.token, label: parsed.data.label };
		} catch (e) {
			if (e instanceof ServiceError)
				return fail(e.status, {
					action: 'createToken',
					values,
					errors: { ...e.fields, _: e.message } as FieldErrors
				});
			throw e;
		}
	},
	revokeToken: async (event) => {
		const { user } = await access(event, 'account');
		const parsed = revokeForm.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return fail(400, { action: 'revokeToken', errors: fieldErrors(parsed.error) });
		try {
			await revokeToken(actorOf(event.locals), user, parsed.data.id);
		} catch (e) {
			if (e instanceof ServiceError)
				return fail(e.status, {
					action: 'revokeToken',
					errors: { ...e.fields, _: e.message } as FieldErrors
				});
			throw e;
		}
		return { action: 'revokeToken', ok: true };
	}
} satisfies Actions;
