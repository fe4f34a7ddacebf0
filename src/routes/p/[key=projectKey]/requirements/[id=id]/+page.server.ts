import { error, fail } from '@sveltejs/kit';
import { SPEC_TEMPLATES } from '$lib/requirements/templates';
import { actorOf } from '$lib/server/audit';
import { access, inAddress } from '$lib/server/auth';
import { ServiceError, type FieldErrors } from '$lib/server/errors';
import {
	formFieldErrors,
	linkForm,
	parseSpecificationForm,
	specFormErrorKey,
	unlinkForm
} from '$lib/server/requirements/schema';
import {
	addLink,
	modelsForSpecs,
	removeLink,
	requirementPage,
	requirementOptions,
	setSpecification
} from '$lib/server/requirements/service';
import type { Actions, PageServerLoad } from './$types';

function failWith(action: string, e: unknown, extra: Record<string, unknown> = {}) {
	if (e instanceof ServiceError) {
		return fail(e.status, { action, errors: { ...e.fields, _: e.message } as FieldErrors, ...extra });
	}
	throw e;
}

export const load = (async (event) => {
	const { project, can, resource } = await access(event, inAddress(event.params, 'requirement'));
	// The link and specification forms (and so their choices) are shown to writers only.
	const [found, options, models] = await Promise.all([
		requirementPage(resource.id),
		can.writeRequirements ? requirementOptions(project.id) : [],
		can.writeRequirements ? modelsForSpecs(project.id) : []
	]);
	if (!found) error(404, { message: 'There is no such requirement in this project.' });
	const { requirement: r, history } = found;
	const linked = new Set([r.id, ...r.parents.map((p) => p.id)]);
	return {
		project: { key: project.key, name: project.name },
		can,
		requirement: r,
		history,
		parentOptions: options
			.filter((o) => !linked.has(Number(o.id)))
			.map((o) => ({ id: Number(o.id), identifier: o.identifier, title: o.title })),
		models,
		templates: SPEC_TEMPLATES
	};
}) satisfies PageServerLoad;

export const actions = {
	addLink: async (event) => {
		const { resource: r } = await access(event, inAddress(event.params, 'requirement'), 'writeRequirements');
		const parsed = linkForm.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return fail(400, { action: 'addLink', errors: formFieldErrors(parsed.error) });
		try {
			await addLink(actorOf(event.locals), r.id, parsed.data.parentId);
		} catch (e) {
			return failWith('addLink', e);
		}
		return { action: 'addLink', ok: true };
	},
	removeLink: async (event) => {
		const { resource: r } = await access(event, inAddress(event.params, 'requirement'), 'writeRequirements');
		const parsed = unlinkForm.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return fail(400, { action: 'removeLink', errors: formFieldErrors(parsed.error) });
		try {
			await removeLink(actorOf(event.locals), r.id, parsed.data.linkId);
		} catch (e) {
			return failWith('removeLink', e);
		}
		return { action: 'removeLink', ok: true };
	},
	setSpec: async (event) => {
		const { resource: r } = await access(event, inAddress(event.params, 'requirement'), 'writeRequirements');
		const raw = Object.fromEntries(await event.request.formData());
		const values = Object.fromEntries(
			Object.entries(raw).map(([k, v]) => [k, typeof v === 'string' ? v : ''])
		);
		const parsed = parseSpecificationForm(values);
		if (!parsed.success)
			return fail(400, { action: 'setSpec', values, errors: parsed.errors as FieldErrors });
		try {
			const s = await setSpecification(actorOf(event.locals), r.id, parsed.data);
			return { action: 'setSpec', ok: true, version: s.version, unchanged: s.unchanged };
		} catch (e) {
			if (e instanceof ServiceError) {
				const errors: FieldErrors = { _: e.message };
				for (const [k, v] of Object.entries(e.fields)) errors[specFormErrorKey(k)] = v;
				return fail(e.status, { action: 'setSpec', values, errors });
			}
			throw e;
		}
	}
} satisfies Actions;
