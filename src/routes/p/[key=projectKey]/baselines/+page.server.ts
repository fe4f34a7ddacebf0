import { fail, redirect } from '@sveltejs/kit';
import { actorOf } from '$lib/server/audit';
import { access } from '$lib/server/auth';
import { currentManifest, freeze, listBaselines, type Blocker } from '$lib/server/baselines/service';
import { freezeForm } from '$lib/server/baselines/schema';
import { ServiceError, fieldErrors, type FieldErrors } from '$lib/server/errors';
import type { Actions, PageServerLoad } from './$types';

export const load = (async (event) => {
	const { project, can } = await access(event, { project: event.params.key });
	const baselines = (await listBaselines(project.id)).map((b) => ({
		id: Number(b.id),
		number: b.number,
		label: b.label,
		note: b.note,
		hash: b.manifest_hash,
		requirements: b.requirement_count,
		engineVersion: b.engine_version,
		by: b.created_by_label,
		at: new Date(b.created_at).toISOString()
	}));
	// What would block a freeze now, for those who may freeze.
	let current: { hash: string; requirements: number; blockers: Blocker[] } | null = null;
	if (can.freezeBaselines) {
		const c = await currentManifest(project.id);
		current = { hash: c.hash, requirements: c.manifest.requirements.length, blockers: c.blockers };
	}
	return { project: { key: project.key, name: project.name }, can, baselines, current };
}) satisfies PageServerLoad;

export const actions = {
	freeze: async (event) => {
		const { project } = await access(event, { project: event.params.key }, 'freezeBaselines');
		const form = Object.fromEntries(await event.request.formData());
		const values = { label: String(form.label ?? ''), note: String(form.note ?? '') };
		const parsed = freezeForm.safeParse(values);
		if (!parsed.success)
			return fail(400, {
				action: 'freeze',
				values,
				errors: fieldErrors(parsed.error),
				blockers: [] as Blocker[]
			});
		let id: number;
		try {
			id = Number((await freeze(actorOf(event.locals), project.id, parsed.data)).id);
		} catch (e) {
			if (e instanceof ServiceError) {
				return fail(e.status, {
					action: 'freeze',
					values,
					errors: { ...e.fields, _: e.message } as FieldErrors,
					blockers: (e.details.blockers as Blocker[] | undefined) ?? []
				});
			}
			throw e;
		}
		redirect(303, `/p/${project.key}/baselines/${id}`);
	}
} satisfies Actions;
