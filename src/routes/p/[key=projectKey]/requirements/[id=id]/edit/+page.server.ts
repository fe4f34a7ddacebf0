import { error, fail, redirect } from '@sveltejs/kit';
import { actorOf } from '$lib/server/audit';
import { access, inAddress } from '$lib/server/auth';
import { ServiceError } from '$lib/server/errors';
import {
	formFieldErrors,
	formInput,
	requirementFormValues,
	reviseRequirement as reviseSchema
} from '$lib/server/requirements/schema';
import { getRequirement, projectMembers, reviseRequirement } from '$lib/server/requirements/service';
import type { Actions, PageServerLoad } from './$types';

export const load = (async (event) => {
	const { project, resource } = await access(
		event,
		inAddress(event.params, 'requirement'),
		'writeRequirements'
	);
	const r = await getRequirement(resource.id);
	if (!r) error(404, { message: 'There is no such requirement in this project.' });
	const members = await projectMembers(project.id);
	return {
		project: { key: project.key, name: project.name },
		requirement: { id: r.id, identifier: r.identifier, revision: r.revision },
		members: members.map((m) => ({ id: m.id, name: m.name })),
		values: {
			title: r.title,
			statement: r.statement,
			rationale: r.rationale,
			level: r.level,
			assuranceLevel: r.assuranceLevel,
			methods: r.methods,
			ownerId: r.owner ? String(r.owner.id) : '',
			status: r.status,
			changeNote: '',
			revision: String(r.revision)
		}
	};
}) satisfies PageServerLoad;

export const actions = {
	revise: async (event) => {
		const { project, resource: r } = await access(
			event,
			inAddress(event.params, 'requirement'),
			'writeRequirements'
		);
		const values = requirementFormValues(await event.request.formData());
		const parsed = reviseSchema.safeParse(formInput(values, true));
		if (!parsed.success)
			return fail(400, { action: 'revise', values, errors: formFieldErrors(parsed.error) });
		try {
			await reviseRequirement(actorOf(event.locals), r.id, parsed.data);
		} catch (e) {
			if (e instanceof ServiceError) {
				const conflict =
					e.status === 409 && typeof e.details.currentRevision === 'number'
						? {
								currentRevision: e.details.currentRevision,
								changed: e.details.changed as Record<string, { yours: unknown; theirs: unknown }>
							}
						: null;
				return fail(e.status, { action: 'revise', values, errors: e.fields, message: e.message, conflict });
			}
			throw e;
		}
		redirect(303, `/p/${project.key}/requirements/${r.id}`);
	},
	preview: async (event) => {
		await access(event, inAddress(event.params, 'requirement'), 'writeRequirements');
		const values = requirementFormValues(await event.request.formData());
		return { action: 'preview', values };
	}
} satisfies Actions;
