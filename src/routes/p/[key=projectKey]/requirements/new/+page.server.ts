import { fail, redirect } from '@sveltejs/kit';
import { actorOf } from '$lib/server/audit';
import { access } from '$lib/server/auth';
import { ServiceError } from '$lib/server/errors';
import {
	createRequirement as createSchema,
	formFieldErrors,
	formInput,
	requirementFormValues
} from '$lib/server/requirements/schema';
import { createRequirement, projectMembers } from '$lib/server/requirements/service';
import type { Actions, PageServerLoad } from './$types';

export const load = (async (event) => {
	const { project, user } = await access(event, { project: event.params.key }, 'writeRequirements');
	const members = await projectMembers(project.id);
	const isMember = members.some((m) => m.id === user.id);
	return {
		project: { key: project.key, name: project.name },
		members: members.map((m) => ({ id: m.id, name: m.name })),
		values: {
			title: '',
			statement: '',
			rationale: '',
			level: '',
			assuranceLevel: '',
			methods: ['analysis'],
			ownerId: isMember ? String(user.id) : '',
			status: 'draft',
			changeNote: '',
			revision: ''
		}
	};
}) satisfies PageServerLoad;

export const actions = {
	create: async (event) => {
		const { project } = await access(event, { project: event.params.key }, 'writeRequirements');
		const values = requirementFormValues(await event.request.formData());
		const parsed = createSchema.safeParse(formInput(values, false));
		if (!parsed.success)
			return fail(400, { action: 'create', values, errors: formFieldErrors(parsed.error) });
		let created: { id: number };
		try {
			created = await createRequirement(
				actorOf(event.locals),
				{ id: project.id, key: project.key },
				parsed.data
			);
		} catch (e) {
			if (e instanceof ServiceError)
				return fail(e.status, { action: 'create', values, errors: e.fields, message: e.message });
			throw e;
		}
		redirect(303, `/p/${project.key}/requirements/${created.id}`);
	},
	preview: async (event) => {
		await access(event, { project: event.params.key }, 'writeRequirements');
		const values = requirementFormValues(await event.request.formData());
		return { action: 'preview', values };
	}
} satisfies Actions;
