import { fail } from '@sveltejs/kit';
import { actorOf } from '$lib/server/audit';
import { access } from '$lib/server/auth';
import { ServiceError, fieldErrors, type FieldErrors } from '$lib/server/errors';
import { createProjectForm, userFlagsForm } from '$lib/server/identity/schema';
import { createProject, listAllProjects, listUsers, setUserDisabled } from '$lib/server/identity/service';
import type { Actions, PageServerLoad } from './$types';

export const load = (async (event) => {
	await access(event, 'site');
	const [projects, users] = await Promise.all([listAllProjects(), listUsers()]);
	return {
		projects: projects.map((p) => ({ key: p.key, name: p.name, description: p.description })),
		users: users.map((u) => ({
			id: u.id,
			email: u.email,
			name: u.display_name,
			disabled: u.disabled,
			admin: u.site_admin
		}))
	};
}) satisfies PageServerLoad;

export const actions = {
	createProject: async (event) => {
		await access(event, 'site');
		const form = Object.fromEntries(await event.request.formData());
		const values = {
			key: String(form.key ?? ''),
			name: String(form.name ?? ''),
			description: String(form.description ?? '')
		};
		const parsed = createProjectForm.safeParse(form);
		if (!parsed.success)
			return fail(400, { action: 'createProject', values, errors: fieldErrors(parsed.error) });
		try {
			const p = await createProject(actorOf(event.locals), parsed.data);
			return { action: 'createProject', created: p.key };
		} catch (e) {
			if (e instanceof ServiceError)
				return fail(e.status, { action: 'createProject', values, errors: e.fields });
			throw e;
		}
	},
	setDisabled: async (event) => {
		await access(event, 'site');
		const form = Object.fromEntries(await event.request.formData());
		const parsed = userFlagsForm.safeParse(form);
		if (!parsed.success) return fail(400, { action: 'setDisabled', errors: fieldErrors(parsed.error) });
		try {
			await setUserDisabled(actorOf(event.locals), parsed.data.userId, parsed.data.disabled);
		} catch (e) {
			if (e instanceof ServiceError)
				return fail(e.status, {
					action: 'setDisabled',
					errors: { ...e.fields, _: e.message } as FieldErrors
				});
			throw e;
		}
		return { action: 'setDisabled', ok: true };
	}
} satisfies Actions;
