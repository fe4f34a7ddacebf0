import { error, fail } from '@sveltejs/kit';
import { SPEC_TEMPLATES } from '$lib/requirements/templates';
import { actorOf } from '$lib/server/audit';
import { requireRole } from '$lib/server/auth';
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
	getRequirement,
	modelsForSpecs,
	removeLink,
	requirementPage,
	requirementOptions,
	setSpecification
} from '$lib/server/requirements/service';
import type { Actions, PageServerLoad } from './$types';

const WRITERS = ['engineer'] as const;

async function requirementOf(projectId: number, id: string) {
	const r = await getRequirement(Number(id));
	if (!r || r.projectId !== projectId)
		error(404, { message: 'There is no such requirement in this project.' });
	return r;
}

function failWith(action: string, e: unknown, extra: Record<string, unknown> = {}) {
	if (e instanceof ServiceError) {
		return fail(e.status, { action, errors: { ...e.fields, _: e.message } as FieldErrors, ...extra });
	}
	throw e;
}

export const load = (async (event) => {
	const { project, role, user } = await requireRole(event, event.params.key);
	const canWrite = role === 'engineer' || role === 'admin' || user.site_admin;
	// The link and specification forms (and so their choices) are shown to writers only.
	const [found, options, models] = await Promise.all([
		requirementPage(Number(event.params.id)),
		canWrite ? requirementOptions(project.id) : [],
		canWrite ? modelsForSpecs(project.id) : []
	]);
	if (!found || found.requirement.projectId !== project.id)
		error(404, { message: 'There is no such requirement in this project.' });
	const { requirement: r, history } = found;
	const linked = new Set([r.id, ...r.parents.map((p) => p.id)]);
	return {
		project: { key: project.key, name: project.name },
		canWrite,
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
		const { project } = await requireRole(event, event.params.key, WRITERS);
		const r = await requirementOf(project.id, event.params.id);
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
		const { project } = await requireRole(event, event.params.key, WRITERS);
		const r = await requirementOf(project.id, event.params.id);
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
		const { project } = await requireRole(event, event.params.key, WRITERS);
		const r = await requirementOf(project.id, event.params.id);
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
