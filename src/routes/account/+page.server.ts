import { fail } from '@sveltejs/kit';
import { z } from 'zod';
import { requireUser } from '$lib/server/auth';
import { ServiceError, fieldErrors } from '$lib/server/errors';
import { displayName, password } from '$lib/server/identity/schema';
import { changePassword, listProjectsFor, renameUser } from '$lib/server/identity/service';
import type { Actions, PageServerLoad } from './$types';

const renameForm = z.object({ displayName });
const passwordForm = z
	.object({ current: z.string().min(1, 'Enter your current password.').max(200), password, confirm: z.string() })
	.refine((v) => v.password === v.confirm, { path: ['confirm'], message: 'The two passwords differ.' });

export const load = (async (event) => {
	const user = requireUser(event);
	const projects = await listProjectsFor(user);
	return {
		account: { email: user.email, name: user.display_name, admin: user.site_admin },
		memberships: projects.map((p) => ({ key: p.key, name: p.name, role: p.role }))
	};
}) satisfies PageServerLoad;

export const actions = {
	rename: async (event) => {
		const user = requireUser(event);
		const parsed = renameForm.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return fail(400, { action: 'rename', errors: fieldErrors(parsed.error) });
		await renameUser(user, parsed.data.displayName);
		return { action: 'rename', ok: true };
	},
	password: async (event) => {
		const user = requireUser(event);
		const parsed = passwordForm.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return fail(400, { action: 'password', errors: fieldErrors(parsed.error) });
		try {
			await changePassword(user, parsed.data.current, parsed.data.password);
		} catch (e) {
			if (e instanceof ServiceError) return fail(e.status, { action: 'password', errors: e.fields });
			throw e;
		}
		return { action: 'password', ok: true };
	}
} satisfies Actions;
