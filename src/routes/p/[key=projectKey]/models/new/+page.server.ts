import { fail, redirect } from '@sveltejs/kit';
import { actorOf } from '$lib/server/audit';
import { access } from '$lib/server/auth';
import { ServiceError } from '$lib/server/errors';
import { createModel, listPossibleOwners } from '$lib/server/models/service';
import type { Actions, PageServerLoad } from './$types';

export const load = (async (event) => {
	const { project, user } = await access(event, { project: event.params.key }, 'writeModels');
	const owners = await listPossibleOwners(project.id);
	return {
		project: { key: project.key, name: project.name },
		owners: owners.map((o) => ({ id: Number(o.id), name: o.display_name, email: o.email })),
		me: user.id
	};
}) satisfies PageServerLoad;

export const actions = {
	create: async (event) => {
		const { project } = await access(event, { project: event.params.key }, 'writeModels');
		const form = Object.fromEntries(await event.request.formData());
		const values = {
			name: String(form.name ?? ''),
			description: String(form.description ?? ''),
			ownerId: String(form.ownerId ?? '')
		};
		let id: number;
		try {
			const m = await createModel(actorOf(event.locals), project.id, {
				name: values.name,
				description: values.description,
				ownerId: values.ownerId || undefined
			});
			id = Number(m.id);
		} catch (e) {
			if (e instanceof ServiceError)
				return fail(e.status, { action: 'create', values, errors: { ...e.fields, _: e.message } });
			throw e;
		}
		redirect(303, `/p/${project.key}/models/${id}`);
	}
} satisfies Actions;
