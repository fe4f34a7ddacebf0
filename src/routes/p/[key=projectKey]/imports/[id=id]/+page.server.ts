import { fail, redirect } from '@sveltejs/kit';
import { actorOf } from '$lib/server/audit';
import { access, inAddress } from '$lib/server/auth';
import { ServiceError } from '$lib/server/errors';
import { mappingFromForm, parseMapping } from '$lib/server/interchange/schema';
import { LARGE_IMPORT, confirmImport, getImport, remapImport } from '$lib/server/interchange/service';
import { FIELD_NAMES, IMPORT_FIELDS, STATUS_NOT_APPLIED, whereText } from '$lib/requirements/interchange';
import { ASSURANCE_LEVELS, LEVELS, METHODS } from '$lib/server/requirements/schema';
import type { Actions, PageServerLoad } from './$types';

// Shown at most; the counts and problems are always complete.
const SHOWN = 500;

export const load = (async (event) => {
	const { project, can, resource } = await access(event, inAddress(event.params, 'import'));
	const v = await getImport(resource.id);
	return {
		project: { key: project.key, name: project.name },
		can,
		imp: {
			...v,
			items: v.items.slice(0, SHOWN),
			problems: v.problems.map((p) => ({ ...p, where: whereText(p) }))
		},
		shown: Math.min(SHOWN, v.items.length),
		total: v.items.length,
		large: v.items.filter((i) => i.action !== 'unchanged').length > LARGE_IMPORT,
		fields: IMPORT_FIELDS.map((f) => ({ value: f, label: FIELD_NAMES[f] })),
		choices: {
			levels: [...LEVELS],
			assurance: [...ASSURANCE_LEVELS],
			methods: [...METHODS]
		},
		statusRule: STATUS_NOT_APPLIED
	};
}) satisfies PageServerLoad;

export const actions = {
	remap: async (event) => {
		const { project, resource } = await access(event, inAddress(event.params, 'import'), 'writeRequirements');
		const fd = await event.request.formData();
		try {
			const v = await getImport(resource.id);
			const text = fd.get('mapping');
			const m =
				typeof text === 'string'
					? parseMapping(v.format, text)
					: mappingFromForm(v.format, fd, v.offer as Parameters<typeof mappingFromForm>[2]);
			if (!m || 'error' in m) {
				return fail(400, { action: 'remap', errors: { _: m?.error ?? 'Send a mapping.' } });
			}
			await remapImport(project, resource.id, m.mapping!);
		} catch (e) {
			if (e instanceof ServiceError) return fail(e.status, { action: 'remap', errors: { _: e.message } });
			throw e;
		}
		redirect(303, `/p/${project.key}/imports/${resource.id}`);
	},
	confirm: async (event) => {
		const { project, resource } = await access(event, inAddress(event.params, 'import'), 'writeRequirements');
		const actor = actorOf(event.locals);
		try {
			const v = await getImport(resource.id);
			const work = v.items.filter((i) => i.action !== 'unchanged').length;
			if (work > LARGE_IMPORT && v.problems.length === 0 && v.status === 'preview') {
				// A large import runs on after this answer; the page shows its progress.
				confirmImport(actor, project, resource.id).catch((e) => {
					if (!(e instanceof ServiceError)) console.error(`[import] import ${resource.id} failed:`, e);
				});
				await new Promise((r) => setTimeout(r, 200));
			} else await confirmImport(actor, project, resource.id);
		} catch (e) {
			if (e instanceof ServiceError) return fail(e.status, { action: 'confirm', errors: { _: e.message } });
			throw e;
		}
		redirect(303, `/p/${project.key}/imports/${resource.id}`);
	}
} satisfies Actions;
